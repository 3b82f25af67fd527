package main

import (
	"flag"
	"fmt"
	"io"
	"os"
	"strings"
	"text/tabwriter"

	"fvsweep/fv2d"
)

func init() {
	register(command{name: "cases", args: "[CASE]", run: func(args []string) int { return casesMain(args, os.Stdout, os.Stderr) },
		summary: "list the cases with their parameters and defaults",
		about: `Lists every case with its own parameters (and the common ones it
overrides), then the common scheme parameters of each equation; with CASE,
the full parameter list of that case. Each parameter a line: name, default,
type or choices, meaning.`,
		examples: []string{
			"fvsweep cases",
			"fvsweep cases shocktube",
		}})
}

// casesMain is `fvsweep cases [CASE]`: without an argument every case with
// its own parameters (and the common ones it overrides), then the common
// scheme parameters; with CASE its full parameter list.
func casesMain(args []string, stdout, stderr io.Writer) int {
	args, code, done := parseWith("cases", flag.NewFlagSet("cases", flag.ContinueOnError), args, stdout, stderr)
	if done {
		return code
	}
	if len(args) == 1 {
		c, err := fv2d.LookupCase(args[0])
		if err != nil {
			fmt.Fprintf(stderr, "fvsweep cases: %v\n", err)
			return 1
		}
		fmt.Fprintf(stdout, "%s (%s): %s\n", c.Name(), c.Equation(), c.Summary())
		printParams(stdout, fv2d.ParamsOf(c))
		return 0
	}
	for _, c := range fv2d.Cases() {
		fmt.Fprintf(stdout, "%s (%s): %s\n", c.Name(), c.Equation(), c.Summary())
		printParams(stdout, c.Params())
		fmt.Fprintln(stdout)
	}
	for _, eq := range []fv2d.Equation{fv2d.Euler, fv2d.Burgers} {
		fmt.Fprintf(stdout, "common parameters of %s cases (a case's own list overrides them):\n", eq)
		printParams(stdout, fv2d.CommonParams(eq))
		fmt.Fprintln(stdout)
	}
	fmt.Fprintln(stdout, "Run 'fvsweep cases CASE' for the full list of one case.")
	return 0
}

// printParams prints one parameter a line: name, default, type or choices,
// meaning, in columns as wide as the longest entry.
func printParams(w io.Writer, ps []fv2d.Param) {
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	for _, p := range ps {
		typ := p.Kind.String()
		if p.Kind == fv2d.Choice {
			typ = strings.Join(p.Choices, "|")
		}
		fmt.Fprintf(tw, "  %s\t%s\t%s\t%s\n", p.Name, p.Default, typ, p.Doc)
	}
	tw.Flush()
}
