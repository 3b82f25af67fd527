package main

import (
	"flag"
	"fmt"
	"math"

	"fvsweep/sweep/spec"
)

// limitFlags are the limits a spec must keep to: --job-limit and --mem-limit
// (plan, run, serve and submit take them).
type limitFlags struct {
	jobs int
	mem  string
}

// limitDocs document the flags of limitFlags.
var limitDocs = []flagDoc{
	{"job-limit", "N", "refuse a spec that expands to more runs than N", "200000"},
	{"mem-limit", "SIZE", "refuse a run whose memory estimate exceeds SIZE", "8GiB"},
}

func (l *limitFlags) register(fs *flag.FlagSet) {
	l.jobs = spec.DefaultMaxJobs
	fs.Var(intRange(&l.jobs, 1, math.MaxInt), "job-limit", "")
	fs.StringVar(&l.mem, "mem-limit", "8GiB", "")
}

// limits checks the flags and returns the limits they set.
func (l *limitFlags) limits() (spec.Limits, error) {
	maxBytes, err := spec.ParseBytes(l.mem)
	if err != nil {
		return spec.Limits{}, fmt.Errorf("--mem-limit: %v", err)
	}
	return spec.Limits{MaxJobs: l.jobs, MaxBytes: maxBytes}, nil
}
