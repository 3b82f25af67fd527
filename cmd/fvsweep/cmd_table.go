package main

import (
	"flag"
	"io"
	"os"

	"fvsweep/sweep/job"
	"fvsweep/sweep/table"
	"fvsweep/sweep/wire"
)

func init() {
	register(command{name: "table", args: "SWEEP", run: runTable,
		summary: "print the convergence tables of a sweep",
		about: `Prints the convergence tables of a sweep: the runs of each study grouped by
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
four grids on also the least-squares order and the least-squares
uncertainty of Eca & Hoekstra 2014 (the study key uncertainty = "celik",
"lsq" or "auto" chooses). Text and markdown print the relative errors in
percent, csv and json as fractions (json with the keys of fvsweep gci
--json; numeric parameters as numbers). Plausibility warnings (refinement
ratio below 1.3, implausible order, values within round-off, asymptotic
ratio far from 1, too few grids) are printed under their record.`,
		flags: flagSet(judgeDocs, []flagDoc{
			{"functional", "NAME", "functional for the GCI, in the studies whose runs report it", "the study's functional"},
			{"format", "F", "text, markdown, csv or json", "text"},
		}, commonFlags(false)),
		examples: []string{
			"fvsweep table blast-limiters",
			"fvsweep table splitting-order --norm linf --var rho --format markdown",
		}})
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
	var jf judgeFlags
	jf.register(fs)
	functional := fs.String("functional", "", "")
	format := choiceFlag(fs, "format", "text", table.Formats...)
	pos, code, done := parseCommand("table", fs, args)
	if done {
		return code
	}
	d, err := openSweep(&c, pos[0])
	if err != nil {
		return fail("table: %v", err)
	}
	o := jf.options()
	o.Functional = *functional
	if err := printTables(os.Stdout, d, o, *format); err != nil {
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
