package main

import (
	"flag"
	"fmt"
	"fvsweep/sweep/spec"
)

// limitFlags are the limits a spec must keep to: --job-limit and --mem-limit
// (plan, run, serve and submit take them).
type limitFlags struct {
	jobs int
	mem  string
}

const limitUsage = `  --job-limit N      refuse a spec that expands to more runs than N (default 200000)
  --mem-limit SIZE   refuse a run whose memory estimate exceeds SIZE (default 8GiB)
`

func (l *limitFlags) register(fs *flag.FlagSet) {
	fs.IntVar(&l.jobs, "job-limit", spec.DefaultMaxJobs, "")
	fs.StringVar(&l.mem, "mem-limit", "8GiB", "")
}

// limits checks the flags and returns the limits they set.
func (l *limitFlags) limits() (spec.Limits, error) {
	maxBytes, err := spec.ParseBytes(l.mem)
	if err != nil {
		return spec.Limits{}, fmt.Errorf("--mem-limit: %v", err)
	}
	if l.jobs <= 0 {
		return spec.Limits{}, fmt.Errorf("--job-limit: want a positive number of jobs, got %d", l.jobs)
	}
	return spec.Limits{MaxJobs: l.jobs, MaxBytes: maxBytes}, nil
}
