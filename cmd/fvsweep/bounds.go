package main

import (
	"flag"
	"fmt"
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

const boundUsage = `  --max-functionals N  functionals in one result (default 64)
  --max-vars N         error norms and totals in one result (default 16)
  --max-text N         bytes of a result's error text (default 2048)
  --max-steps N        steps a result may state (default 1000000000)
  --max-wall D         wall time a result may state (default 720h)
  --max-report SIZE    bytes of a worker report (default 32KiB)
  --max-workers N      workers known at once (default 2048)
  --report-every-max D longest report interval a worker may state; a worker
                       expires 3 intervals after its last report (default 1m)
  --job-bytes SIZE     bytes the jobs stream holds (default 1GiB)
  --result-bytes SIZE  bytes the results stream holds (default 1GiB)
  --field-bytes SIZE   bytes the snapshot bucket holds (default 16GiB)
  --reconcile D        how often jobs with no message and no outcome are
                       looked for and queued again (default 1m; 0: never)
`

func (f *boundFlags) register(fs *flag.FlagSet) {
	f.out, f.rep = job.DefaultBounds(), wire.DefaultReportBounds()
	fs.IntVar(&f.out.MaxFunctionals, "max-functionals", f.out.MaxFunctionals, "")
	fs.IntVar(&f.out.MaxVars, "max-vars", f.out.MaxVars, "")
	fs.IntVar(&f.out.MaxText, "max-text", f.out.MaxText, "")
	fs.IntVar(&f.out.MaxSteps, "max-steps", f.out.MaxSteps, "")
	fs.DurationVar(&f.out.MaxWall, "max-wall", f.out.MaxWall, "")
	fs.Func("max-report", "", func(s string) error {
		n, err := spec.ParseBytes(s)
		if err == nil && (n < 1024 || n > wire.MaxMessage) {
			err = fmt.Errorf("want 1KiB to 1MiB")
		}
		f.rep.MaxBytes = int(n)
		return err
	})
	fs.IntVar(&f.rep.MaxWorkers, "max-workers", f.rep.MaxWorkers, "")
	fs.DurationVar(&f.rep.MaxEvery, "report-every-max", f.rep.MaxEvery, "")
	fs.StringVar(&f.jobBytes, "job-bytes", "1GiB", "")
	fs.StringVar(&f.resBytes, "result-bytes", "1GiB", "")
	fs.StringVar(&f.objBytes, "field-bytes", "16GiB", "")
	fs.DurationVar(&f.reconcile, "reconcile", time.Minute, "")
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
