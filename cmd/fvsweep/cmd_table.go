package main

import (
	"flag"
	"io"
	"os"
	"slices"

	"fvsweep/sweep/job"
	"fvsweep/sweep/table"
	"fvsweep/sweep/wire"
)

const tableUsage = `usage: fvsweep table SWEEP [--var V] [--norm l1|l2|linf] [--functional NAME] [--format text|markdown|csv|json]

Prints the convergence tables of a sweep: the runs of each study grouped by
every parameter except the grid, and per group, for each grid, the spacing h,
the L1, L2 and L-infinity errors of the variable V, the observed order of
each pair of grids in the chosen norm, the least-squares fitted order and the
verdict against the design order. Failed jobs are listed with their reason.
Reads from the running coordinator, or from the store in --data.

A study with a functional (or, naming none, a case without an exact
solution: every functional its runs report) shows the functional's value
per grid and, below the group, its grid convergence index by the procedure
of Celik et al. 2008 from the finished grids (refinement ratios from their
actual spacings): per successive triple of grids, finest first, the
apparent order, the convergence class, the Richardson-extrapolated value,
the relative errors e_a and e_ext, GCI_fine and the asymptotic ratio; from
four grids on also the least-squares order. Text and markdown print the
relative errors in percent, csv and json as fractions (json with the keys
of fvsweep gci --json).

flags:
  --var V            conserved variable judged (default: the study's var, or
                     the case's first: u or rho)
  --norm N           norm of the orders and the verdict (default: the study's, l1)
  --functional NAME  functional for the GCI, in the studies whose runs report
                     it (default: the study's functional)
  --format F         text (default), markdown, csv or json
` + commonUsage

func init() {
	register(command{name: "table", summary: "print the convergence tables of a sweep", run: runTable})
}

// sweepData is a sweep's jobs with their states, its stored spec and the
// resolved settings of its studies.
type sweepData struct {
	name     string
	rows     []wire.Row
	specFile string
	spec     string
	studies  []job.StudySettings
}

// tables builds the convergence tables of d.
func (d *sweepData) tables(o table.Options) (table.Set, error) {
	jobs := make([]job.Job, len(d.rows))
	outs := map[string]job.Outcome{}
	for i, r := range d.rows {
		jobs[i] = r.Job
		if r.Outcome != nil {
			outs[r.Job.ID] = *r.Outcome
		}
	}
	studies, fails, err := table.Build(d.studies, jobs, outs, o)
	return table.Set{Sweep: d.name, Studies: studies, Failures: fails}, err
}

func runTable(args []string) int {
	fs := flag.NewFlagSet("table", flag.ContinueOnError)
	var c common
	c.register(fs)
	v := fs.String("var", "", "")
	norm := fs.String("norm", "", "")
	functional := fs.String("functional", "", "")
	format := fs.String("format", "text", "")
	pos, code, done := parseCommand("table", tableUsage, fs, args, func(n int) bool { return n == 1 })
	if done {
		return code
	}
	if !slices.Contains(table.Formats, *format) {
		return usageErr("table", "--format %q: want text, markdown, csv or json", *format)
	}
	d, err := openSweep(&c, pos[0])
	if err != nil {
		return fail("table: %v", err)
	}
	if err := printTables(os.Stdout, d, table.Options{Var: *v, Norm: *norm, Functional: *functional}, *format); err != nil {
		return fail("table: %v", err)
	}
	return 0
}

// printTables builds and writes the tables of d in format.
func printTables(out io.Writer, d *sweepData, o table.Options, format string) error {
	set, err := d.tables(o)
	if err != nil {
		return err
	}
	return table.Write(out, format, set)
}
