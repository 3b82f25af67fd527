package main

import (
	"flag"
	"fmt"
	"fvsweep/sweep/spec"
	"io"
	"os"
)

const planUsage = `usage: fvsweep plan SPEC [--json] [--solver FILE]... [--job-limit N] [--mem-limit SIZE]

Expands the sweep spec SPEC without running anything: per study the case,
the fixed values, the axes, the grid sequence, the number of runs and their
estimated cost (cells x steps, and the share of the whole), then the total.
Runs shared by two studies are counted once in the total.

flags:
  --json             print the plan as JSON
` + solverUsage + limitUsage

func init() {
	register(command{name: "plan", summary: "show what a sweep spec expands to, without running it",
		run: func(args []string) int { return runPlan(args, os.Stdout, os.Stderr) }})
}

// runPlan is the plan command: exit code 0, 1 for a refused spec, 2 for bad usage.
func runPlan(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("plan", flag.ContinueOnError)
	fs.SetOutput(io.Discard)
	asJSON := fs.Bool("json", false, "")
	var lf limitFlags
	lf.register(fs)
	var sv solverFlags
	sv.register(fs)
	bad := func(format string, a ...any) int {
		fmt.Fprintf(stderr, "fvsweep plan: "+format+"\n", a...)
		return 2
	}
	var files []string
	for { // flags may come before or after SPEC
		if err := fs.Parse(args); err == flag.ErrHelp {
			fmt.Fprint(stdout, planUsage)
			return 0
		} else if err != nil {
			return bad("%v (see fvsweep plan -h)", err)
		}
		if fs.NArg() == 0 {
			break
		}
		files, args = append(files, fs.Arg(0)), fs.Args()[1:]
	}
	if len(files) != 1 {
		return bad("want one SPEC file, got %d (see fvsweep plan -h)", len(files))
	}
	lim, err := lf.limits()
	if err != nil {
		return bad("%v", err)
	}
	progs, _, err := sv.load()
	if err != nil {
		fmt.Fprintf(stderr, "fvsweep plan: %v\n", err)
		return 1
	}
	pl, err := spec.Load(files[0], lim, progs...)
	if err != nil {
		fmt.Fprintf(stderr, "fvsweep plan: %v\n", err)
		return 1
	}
	if *asJSON {
		err = spec.WritePlanJSON(stdout, pl)
	} else {
		err = spec.WritePlan(stdout, pl)
	}
	if err != nil {
		fmt.Fprintf(stderr, "fvsweep plan: %v\n", err)
		return 1
	}
	return 0
}
