package main

import (
	"flag"
	"os"

	"fvsweep/sweep/table"
)

func init() {
	register(command{name: "export", args: "SWEEP", run: runExport,
		summary: "write a sweep's jobs and results as CSV or JSON",
		about: `Writes every job of a sweep with its state and outcome to stdout.
json: an array with one object per job: job_id, study, case, params, status
(done, failed, queued or running), attempts, worker, wall_s, steps, t_final,
errors (per variable l1, l2, linf), functionals, snapshot and error (the
failure reason). csv: one row per job, one column per parameter and per
error norm (var_l1, ...). Reads from the running coordinator, or from the
store in --data.`,
		flags: flagSet([]flagDoc{
			{"format", "F", "csv or json (required)", ""},
		}, commonFlags(false)),
		examples: []string{
			"fvsweep export blast-limiters --format csv > blast.csv",
			"fvsweep export blast-limiters --format json",
		}})
}

func runExport(args []string) int {
	fs := flag.NewFlagSet("export", flag.ContinueOnError)
	var c common
	c.register(fs)
	format := choiceFlag(fs, "format", "", table.ExportFormats...)
	pos, code, done := parseCommand("export", fs, args)
	if done {
		return code
	}
	if *format == "" {
		return usageErr("export", "--format is required: csv or json")
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
