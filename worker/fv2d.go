package worker

import (
	"context"
	"errors"
	"fmt"

	"fvsweep/fv2d"
	"fvsweep/sweep/field"
	"fvsweep/sweep/job"
)

// FV2D is the runner of the built-in solver, job.BuiltinSolver: it resolves
// the job's parameters, checks that they give the job's ID, and runs the
// case with fv2d. A run that breaks down (*fv2d.Failure) is a failed
// outcome with the failure as its reason; parameters the case refuses are a
// Permanent error. The snapshot, when the job asks for one, is the final
// state as float32. The worker's reports show each running job's t/t_end.
type FV2D struct{}

// Run runs jb with fv2d.
func (FV2D) Run(ctx context.Context, jb job.Job) (Result, error) {
	v, err := fv2d.Resolve(jb.Case, jb.Params)
	if err != nil {
		return Result{}, Permanent(err)
	}
	if id := job.NewID(v.String()); id != jb.ID {
		return Result{}, Permanent(fmt.Errorf("job %s: its parameters give ID %s", jb.ID, id))
	}
	if p := progressOf(ctx); p != nil {
		ctx = fv2d.WithProgress(ctx, p)
	}
	res, err := fv2d.Run(ctx, v)
	var f *fv2d.Failure
	if errors.As(err, &f) {
		return Result{Outcome: job.Outcome{Status: job.StatusFailed, Error: f.Error(), Steps: f.Step, TFinal: f.T}}, nil
	}
	if err != nil {
		if ctx.Err() != nil {
			return Result{}, err
		}
		return Result{}, Permanent(err)
	}
	r := Result{Outcome: job.Outcome{
		Status: job.StatusDone, WallS: res.WallS, CPUS: res.CPUS, Steps: res.Steps, TFinal: res.TFinal,
		CellUpdatesPerS: res.CellUpdatesPerS, Kernel: res.Kernel, Errors: OutcomeNorms(res.Errors), Functionals: res.Functionals, Totals: OutcomeTotals(res.Totals),
	}}
	if jb.Snapshot && res.Final != nil {
		r.Snapshot = SnapshotOf(res.Final)
		r.Snapshot.Header.JobID = jb.ID
	}
	return r, nil
}

// SnapshotOf is the interior of s as float32, one slice per conserved
// variable, x fastest, with its header but for the job ID.
func SnapshotOf(s *fv2d.State) *Snapshot {
	out := make([][]float32, len(s.U))
	for k, u := range s.U {
		d := make([]float32, s.NX*s.NY)
		for j := 0; j < s.NY; j++ {
			row := u[s.Index(0, j) : s.Index(0, j)+s.NX]
			dst := d[j*s.NX : (j+1)*s.NX]
			for i, x := range row {
				dst[i] = float32(x)
			}
		}
		out[k] = d
	}
	h := field.Header{Vars: s.Eq.Vars(), NX: s.NX, NY: s.NY, X0: s.X0, Y0: s.Y0, DX: s.DX, DY: s.DY, T: s.T}
	return &Snapshot{Header: h, Data: out}
}

// OutcomeNorms copies a run's error norms into the outcome's type.
func OutcomeNorms(m map[string]fv2d.Norms) map[string]job.Norms {
	if m == nil {
		return nil
	}
	out := make(map[string]job.Norms, len(m))
	for k, n := range m {
		out[k] = job.Norms(n)
	}
	return out
}

// OutcomeTotals copies a run's conserved totals into the outcome's type.
func OutcomeTotals(m map[string]fv2d.Total) map[string]job.Total {
	if m == nil {
		return nil
	}
	out := make(map[string]job.Total, len(m))
	for k, t := range m {
		out[k] = job.Total(t)
	}
	return out
}
