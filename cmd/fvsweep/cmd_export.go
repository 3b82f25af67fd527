package main

import (
	"flag"
	"os"

	"fvsweep/sweep/table"
)

const exportUsage = `usage: fvsweep export SWEEP --format csv|json

Writes every job of a sweep with its state and outcome to stdout.
json: an array with one object per job: job_id, study, case, params, status
(done, failed, queued or running), attempts, worker, wall_s, steps, t_final,
errors (per variable l1, l2, linf), functionals, snapshot and error (the
failure reason). csv: one row per job, one column per parameter and per
error norm (var_l1, ...). Reads from the running coordinator, or from the
store in --data.

flags:
  --format F         csv or json (required)
` + commonUsage

func init() {
	register(command{name: "export", summary: "write a sweep's jobs and results as CSV or JSON", run: runExport})
}

func runExport(args []string) int {
	fs := flag.NewFlagSet("export", flag.ContinueOnError)
	var c common
	c.register(fs)
	format := fs.String("format", "", "")
	pos, code, done := parseCommand("export", exportUsage, fs, args, func(n int) bool { return n == 1 })
	if done {
		return code
	}
	if *format != "csv" && *format != "json" {
		return usageErr("export", "--format %q: want csv or json", *format)
	}
	d, err := openSweep(&c, pos[0])
	if err != nil {
		return fail("export: %v", err)
	}
	if err := table.WriteExport(os.Stdout, *format, d.rows); err != nil {
		return fail("export: %v", err)
	}
	return 0
}
