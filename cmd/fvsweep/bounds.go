package main

import (
	"flag"
	"fmt"
	"math"
	"time"

	"fvsweep/coordinator"
	"fvsweep/sweep/job"
	"fvsweep/sweep/spec"
	"fvsweep/sweep/wire"
)

// boundFlags are the bounds a coordinator keeps (serve and run): what a
// result and a worker report may hold, how large the streams and the
// snapshot bucket grow, how often lost jobs are looked for.
type boundFlags struct {
	out       job.Bounds
	rep       wire.ReportBounds
	jobBytes  string
	resBytes  string
	objBytes  string
	reconcile time.Duration
}

// boundDocs document the flags of boundFlags.
var boundDocs = []flagDoc{
	{"max-functionals", "N", "functionals in one result", "64"},
	{"max-vars", "N", "error norms and totals in one result", "16"},
	{"max-text", "N", "bytes of a result's error text", "2048"},
	{"max-steps", "N", "steps a result may state", "1000000000"},
	{"max-wall", "D", "wall time a result may state", "720h"},
	{"max-report", "SIZE", "bytes of a worker report, 1KiB to 1MiB", "32KiB"},
	{"max-workers", "N", "workers known at once", "2048"},
	{"report-every-max", "D", "longest report interval a worker may state, at least 2s; a worker expires 3 intervals after its last report", "1m"},
	{"job-bytes", "SIZE", "bytes the jobs stream holds, at least 1MiB", "1GiB"},
	{"result-bytes", "SIZE", "bytes the results stream holds, at least 1MiB", "1GiB"},
	{"field-bytes", "SIZE", "bytes the snapshot bucket holds, at least 1MiB", "16GiB"},
	{"reconcile", "D", "how often jobs with no message and no outcome are looked for and queued again (0: never)", "1m"},
}

func (f *boundFlags) register(fs *flag.FlagSet) {
	f.out, f.rep = job.DefaultBounds(), wire.DefaultReportBounds()
	fs.Var(intRange(&f.out.MaxFunctionals, 1, math.MaxInt), "max-functionals", "")
	fs.Var(intRange(&f.out.MaxVars, 1, math.MaxInt), "max-vars", "")
	fs.Var(intRange(&f.out.MaxText, 1, math.MaxInt), "max-text", "")
	fs.Var(intRange(&f.out.MaxSteps, 1, math.MaxInt), "max-steps", "")
	durationVar(fs, &f.out.MaxWall, "max-wall", f.out.MaxWall, time.Second, math.MaxInt64)
	fs.Func("max-report", "", func(s string) error {
		n, err := spec.ParseBytes(s)
		if err == nil && (n < 1024 || n > wire.MaxMessage) {
			err = fmt.Errorf("want 1KiB to 1MiB")
		}
		f.rep.MaxBytes = int(n)
		return err
	})
	fs.Var(intRange(&f.rep.MaxWorkers, 1, math.MaxInt), "max-workers", "")
	durationVar(fs, &f.rep.MaxEvery, "report-every-max", f.rep.MaxEvery, 2*time.Second, math.MaxInt64)
	fs.StringVar(&f.jobBytes, "job-bytes", "1GiB", "")
	fs.StringVar(&f.resBytes, "result-bytes", "1GiB", "")
	fs.StringVar(&f.objBytes, "field-bytes", "16GiB", "")
	durationVar(fs, &f.reconcile, "reconcile", time.Minute, 0, math.MaxInt64)
}

// apply checks the flags and returns a tune function for the coordinator's
// configuration.
func (f *boundFlags) apply() (func(*coordinator.Config), error) {
	if err := f.out.Valid(); err != nil {
		return nil, err
	}
	if f.rep.MaxWorkers < 1 || f.rep.MaxEvery < 2*time.Second {
		return nil, fmt.Errorf("--max-workers %d, --report-every-max %v: want at least 1 and 2s", f.rep.MaxWorkers, f.rep.MaxEvery)
	}
	var sizes [3]int64
	for i, s := range []struct{ name, v string }{{"job-bytes", f.jobBytes}, {"result-bytes", f.resBytes}, {"field-bytes", f.objBytes}} {
		n, err := spec.ParseBytes(s.v)
		if err != nil || n < 1<<20 {
			return nil, fmt.Errorf("--%s %q: want a size of at least 1MiB", s.name, s.v)
		}
		sizes[i] = n
	}
	reconcile := f.reconcile
	if reconcile == 0 {
		reconcile = -1
	}
	return func(cfg *coordinator.Config) {
		cfg.Bounds, cfg.Reports, cfg.Reconcile = f.out, f.rep, reconcile
		cfg.Delivery.JobBytes, cfg.Delivery.ResultBytes, cfg.Delivery.FieldBytes = sizes[0], sizes[1], sizes[2]
	}, nil
}
