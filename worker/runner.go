package worker

import (
	"context"
	"errors"
	"sync/atomic"

	"fvsweep/sweep/field"
	"fvsweep/sweep/job"
)

// Runner runs the jobs of one solver. A worker holds one per solver name it
// offers (Config.Runners) and hands each job to the runner its
// Job.SolverName names; it knows nothing else of the solver.
//
// Run returns the result of the job (Status done, or failed for a run that
// broke down: a result, not an error). An error means the attempt failed
// and the job may be tried again, unless it is Permanent or the delivery
// limit is reached; then the job is recorded as failed with the error as
// its reason. Run must return soon after ctx is done (the job was canceled
// or the worker stops); the result is then dropped.
type Runner interface {
	Run(ctx context.Context, jb job.Job) (Result, error)
}

// RunnerFunc makes a function a Runner.
type RunnerFunc func(ctx context.Context, jb job.Job) (Result, error)

// Run calls f.
func (f RunnerFunc) Run(ctx context.Context, jb job.Job) (Result, error) { return f(ctx, jb) }

type progressKey struct{}

// progressOf is where a runner may tell how much of the job in ctx is done:
// the float64 bits of a fraction from 0 to 1, which the worker's reports
// show beside the running job. nil outside a worker's job.
func progressOf(ctx context.Context) *atomic.Uint64 {
	p, _ := ctx.Value(progressKey{}).(*atomic.Uint64)
	return p
}

// Result is what a runner reports of one job.
type Result struct {
	// Outcome is the job's status and figures; the worker fills in its
	// JobID, Sweep, Worker, Attempts and Snapshot.
	Outcome job.Outcome
	// Snapshot is the final field, which the worker stores when the job
	// asks for one (Job.Snapshot) and the run is done; nil for none.
	Snapshot *Snapshot
}

// Snapshot is a final field in the snapshot format of package field: its
// header (the worker sets JobID) and the interior cell averages, one slice
// per variable of Header.Vars, Data[k][j*NX+i], x fastest.
type Snapshot struct {
	Header field.Header
	Data   [][]float32
}

// Permanent marks an error that no retry can cure (parameters the case
// refuses, a job ID that does not match its parameters).
func Permanent(err error) error { return permanent{err} }

type permanent struct{ error }

func (p permanent) Unwrap() error { return p.error }

func isPermanent(err error) bool {
	var p permanent
	return errors.As(err, &p)
}
