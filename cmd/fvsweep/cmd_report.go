package main

import (
	"bytes"
	"flag"
	"fmt"
	"fvsweep/sweep/table"
	"io"
	"os"
	"path/filepath"
	"strings"
	"time"

	"fvsweep/sweep/report"
)

func init() {
	register(command{name: "report", args: "SWEEP", run: func(args []string) int { return runReport(args, os.Stdout, os.Stderr) },
		summary: "write a self-contained HTML report of a sweep",
		about: `Writes DIR/SWEEP.html: one self-contained HTML file (no external files or
links) with, per study, the convergence and work-precision plots as inline
SVG and the convergence tables (h, error, observed order per pair, fitted
order, verdict; for functionals their values and grid convergence index,
as in fvsweep table); the failures with their reasons; the spec as
submitted; and the machine, Go and fvsweep versions. Results come from the
running coordinator, or from the store in --data opened read-only.`,
		flags: flagSet([]flagDoc{
			{"out", "DIR", "directory to write the report into, created if missing (required)", ""},
		}, judgeDocs, []flagDoc{
			{"functional", "NAME", "functional for the GCI, in the studies whose runs report it", "the study's functional"},
		}, commonFlags(false)),
		examples: []string{
			"fvsweep report blast-limiters --out reports",
			"fvsweep report splitting-order --out reports --norm l2",
		}})
}

// judgeFlags are the flags plot and report add to the common ones: what
// the tables judge.
type judgeFlags struct{ v, norm string }

// judgeDocs document the flags of judgeFlags.
var judgeDocs = []flagDoc{
	{"var", "V", "conserved variable judged", "the study's var, or the case's first: u or rho"},
	{"norm", "N", "norm of the orders and the verdict: l1, l2 or linf", "the study's, else l1"},
}

func (j *judgeFlags) register(fs *flag.FlagSet) {
	fs.StringVar(&j.v, "var", "", "")
	fs.Var(oneOf{&j.norm, table.Norms}, "norm", "")
}

func (j judgeFlags) options() table.Options { return table.Options{Var: j.v, Norm: j.norm} }

// runReport is the report command: exit code 0, 1 on failure, 2 on bad usage.
func runReport(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("report", flag.ContinueOnError)
	var c common
	c.register(fs)
	var jf judgeFlags
	jf.register(fs)
	out := fs.String("out", "", "")
	functional := fs.String("functional", "", "")
	bad := func(format string, a ...any) int { return usageTo(stderr, "report", format, a...) }
	names, code, done := parseWith("report", fs, args, stdout, stderr)
	if done {
		return code
	}
	if *out == "" {
		return bad("--out DIR is required")
	}
	if strings.ContainsAny(names[0], `/\`) {
		return bad("sweep name %q: no path separators", names[0])
	}
	d, err := openSweep(&c, names[0])
	if err != nil {
		fmt.Fprintf(stderr, "fvsweep report: %v\n", err)
		return 1
	}
	o := jf.options()
	o.Functional = *functional
	set, err := d.tables(o)
	if err != nil {
		fmt.Fprintf(stderr, "fvsweep report: %v\n", err)
		return 1
	}
	r := &report.Report{Sweep: names[0], SpecFile: d.specFile, Spec: d.spec, Failures: set.Failures,
		Machine: report.ThisMachine(version), Generated: time.Now()}
	for _, s := range set.Studies {
		r.Studies = append(r.Studies, report.StudyReport{Study: s})
	}
	r.AddFigures()
	var buf bytes.Buffer
	if err := report.Write(&buf, r); err != nil {
		fmt.Fprintf(stderr, "fvsweep report: %v\n", err)
		return 1
	}
	if err := os.MkdirAll(*out, 0o755); err != nil {
		fmt.Fprintf(stderr, "fvsweep report: --out: %v\n", err)
		return 1
	}
	path := filepath.Join(*out, names[0]+".html")
	if err := os.WriteFile(path, buf.Bytes(), 0o644); err != nil {
		fmt.Fprintf(stderr, "fvsweep report: %v\n", err)
		return 1
	}
	fmt.Fprintln(stdout, path)
	return 0
}
