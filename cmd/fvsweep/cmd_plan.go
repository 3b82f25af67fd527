package main

import (
	"flag"
	"fmt"
	"fvsweep/sweep/spec"
	"io"
	"os"
)

func init() {
	register(command{name: "expand", args: "SPEC", run: func(args []string) int { return runPlan(args, os.Stdout, os.Stderr) },
		summary: "show what a sweep spec expands to, without running it",
		about: `Expands the sweep spec SPEC without running anything: per study the case,
the fixed values, the crossed parameters, the grid sequence, the number of
runs and their estimated cost (cells x steps, and the share of the whole),
then the total. Runs shared by two studies are counted once in the total.`,
		flags: flagSet([]flagDoc{
			{"json", "", "print the expansion as JSON", ""},
		}, solverDocs, limitDocs),
		examples: []string{
			"fvsweep expand configs/blast-limiters.toml",
			"fvsweep expand own.toml --solver examples/solvers/muscl-c/manifest.toml",
			"fvsweep expand configs/splitting-order.toml --json",
		}})
	aliases["plan"] = "expand" // the name before 0.2, kept for one release
}

// runPlan is the expand command: exit code 0, 1 for a refused spec, 2 for bad usage.
func runPlan(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("expand", flag.ContinueOnError)
	asJSON := fs.Bool("json", false, "")
	var lf limitFlags
	lf.register(fs)
	var sv solverFlags
	sv.register(fs)
	files, code, done := parseWith("expand", fs, args, stdout, stderr)
	if done {
		return code
	}
	lim, err := lf.limits()
	if err != nil {
		return usageTo(stderr, "expand", "%v", err)
	}
	progs, _, err := sv.load()
	if err != nil {
		fmt.Fprintf(stderr, "fvsweep expand: %v\n", err)
		return 1
	}
	pl, err := spec.Load(files[0], lim, progs...)
	if err != nil {
		fmt.Fprintf(stderr, "fvsweep expand: %v\n", err)
		return 1
	}
	if *asJSON {
		err = spec.WritePlanJSON(stdout, pl)
	} else {
		err = spec.WritePlan(stdout, pl)
	}
	if err != nil {
		fmt.Fprintf(stderr, "fvsweep expand: %v\n", err)
		return 1
	}
	return 0
}
