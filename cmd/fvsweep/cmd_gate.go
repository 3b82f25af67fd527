package main

import (
	"flag"
	"fmt"
	"io"
	"os"
	"strings"

	"fvsweep/sweep/gate"
	"fvsweep/sweep/job"
	"fvsweep/sweep/spec"
	"fvsweep/sweep/table"
	"fvsweep/sweep/wire"
)

func init() {
	register(command{name: "gate", args: "SPEC", run: runGate,
		summary: "run a spec and judge it for a pipeline: exit code, baseline, JUnit XML",
		about: `Runs SPEC as 'fvsweep run' does (flags after -- go to run, e.g.
-- --workers 2), then judges every group of its convergence tables and exits
with a code a build pipeline can test:

  0   every group passed
  1   the tool could not run: bad spec, no server, store or file error,
      interrupted
  2   bad command line
  3   results incomplete: a job has no outcome (--judge-only on a sweep
      still running)
  10  failed jobs: a run diverged or failed
  11  order-low: an observed order below the design order's band
  12  order-high: an observed order above it
  13  not judged: pre-asymptotic or insufficient data, in a study without
      informational = true
  14  baseline: an error grew or an order dropped beyond the study's
      tolerance, or a group of the baseline is missing from the run

When several apply, the lowest of 10 to 14 wins; every finding is printed.
A group passes when none of its grids failed, its verdict is pass and it is
no worse than the baseline. Only the jobs of SPEC as it is now are judged,
whatever else the sweep in --data holds.

Without --data the run uses a new temporary data directory, removed at the
end, so that outcomes stored by an earlier build are never judged as this
one's. With --data, jobs whose outcome is stored there are not run again.`,
		flags: flagSet([]flagDoc{
			{"baseline", "FILE", "compare each group's errors and orders with FILE: an error may grow by the study's error_growth_tol (relative), an order drop by its order_drop_tol; improvements are listed", ""},
			{"write-baseline", "FILE", "write this run's errors and orders to FILE (JSON, to commit next to the spec), whatever the verdicts", ""},
			{"junit", "FILE", "write the judgement as JUnit XML: one testsuite per study, one testcase per group", ""},
			{"markdown", "FILE", "write a short Markdown summary (failing groups, and improvements over the baseline); - for stdout", ""},
			{"judge-only", "", "run nothing: judge the results stored in --data (or held by the coordinator at --nats)", ""},
		}, limitDocs, commonFlags(false)),
		examples: []string{
			"fvsweep gate configs/gate.toml --junit gate.xml --markdown -",
			"fvsweep gate configs/gate.toml --baseline gate-baseline.json -- --workers 2",
		}})
}

// gateOnly are the flags of gate that run does not take, and whether each
// takes a value: they are not passed on to run.
var gateOnly = map[string]bool{"baseline": true, "write-baseline": true, "junit": true, "markdown": true, "judge-only": false}

func runGate(args []string) int {
	own, extra := args, []string(nil)
	for i, a := range args {
		if a == "--" {
			own, extra = args[:i], args[i+1:]
			break
		}
	}
	fs := flag.NewFlagSet("gate", flag.ContinueOnError)
	var c common
	c.register(fs)
	var lf limitFlags
	lf.register(fs)
	baseFile := fs.String("baseline", "", "")
	writeBase := fs.String("write-baseline", "", "")
	junit := fs.String("junit", "", "")
	markdown := fs.String("markdown", "", "")
	judgeOnly := fs.Bool("judge-only", false, "")
	pos, code, done := parseCommand("gate", fs, own)
	if done {
		return code
	}
	if *judgeOnly && len(extra) > 0 {
		return usageErr("gate", "--judge-only runs nothing, so it takes no run flags (got %q)", extra)
	}
	lim, err := lf.limits()
	if err != nil {
		return usageErr("gate", "%v", err)
	}
	c.lim = lim
	plan, err := c.loadSpec(pos[0])
	if err != nil {
		return fail("gate: %v", err)
	}
	var base *gate.Baseline
	if *baseFile != "" {
		if base, err = readBaseline(*baseFile); err != nil {
			return fail("gate: %v", err)
		}
	}
	if !*judgeOnly {
		runArgs := append(passOn(own), "--format", "none")
		if !flagGiven(fs, "data") {
			// Fresh results: stored outcomes of an earlier build must not
			// pass for this one's.
			tmp, err := os.MkdirTemp("", "fvsweep-gate-")
			if err != nil {
				return fail("gate: %v", err)
			}
			defer os.RemoveAll(tmp)
			c.data = tmp
			runArgs = append(runArgs, "--data", tmp)
		}
		runArgs = append(runArgs, extra...)
		if code := runRun(runArgs); code != 0 {
			return code
		}
		fmt.Println()
	}
	set, err := specTables(&c, plan)
	if err != nil {
		return fail("gate: %v", err)
	}
	rep := gate.Judge(set, base)
	if err := writeGateFiles(rep, set, *junit, *markdown, *writeBase); err != nil {
		return fail("gate: %v", err)
	}
	if err := rep.WriteText(os.Stdout); err != nil {
		return fail("gate: %v", err)
	}
	return rep.Code()
}

func flagGiven(fs *flag.FlagSet, name string) bool {
	given := false
	fs.Visit(func(f *flag.Flag) { given = given || f.Name == name })
	return given
}

// passOn returns args without the flags that only gate takes.
func passOn(args []string) []string {
	var out []string
	for i := 0; i < len(args); i++ {
		a := args[i]
		name, _, hasValue := strings.Cut(strings.TrimLeft(a, "-"), "=")
		if takesValue, ok := gateOnly[name]; ok && strings.HasPrefix(a, "-") {
			if takesValue && !hasValue {
				i++
			}
			continue
		}
		out = append(out, a)
	}
	return out
}

// specTables builds the convergence tables of the jobs of plan, with their
// stored outcomes, judged by plan's study settings.
func specTables(c *common, plan *spec.Plan) (table.Set, error) {
	d, err := openSweep(c, plan.Name)
	if err != nil {
		return table.Set{}, err
	}
	stored := make(map[string]*job.Outcome, len(d.rows))
	for _, r := range d.rows {
		stored[r.Job.ID] = r.Outcome
	}
	var rows []wire.Row
	err = plan.Each(func(j job.Job) error {
		rows = append(rows, wire.Row{Job: j, Outcome: stored[j.ID]})
		return nil
	})
	if err != nil {
		return table.Set{}, err
	}
	d.rows, d.studies = rows, plan.Settings()
	return d.tables(table.Options{})
}

func readBaseline(path string) (*gate.Baseline, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	return gate.ReadBaseline(f, path)
}

// writeGateFiles writes the reports asked for; "-" is stdout.
func writeGateFiles(rep *gate.Report, set table.Set, junit, markdown, baseline string) error {
	if junit != "" {
		if err := writeTo(junit, rep.WriteJUnit); err != nil {
			return err
		}
	}
	if markdown != "" {
		if err := writeTo(markdown, rep.WriteMarkdown); err != nil {
			return err
		}
	}
	if baseline == "" {
		return nil
	}
	b, err := gate.NewBaseline(set)
	if err != nil {
		return err
	}
	if err := writeTo(baseline, b.Write); err != nil {
		return err
	}
	fmt.Printf("baseline of %d groups written to %s\n", len(b.Groups), baseline)
	return nil
}

// writeTo writes a file with write, or stdout for "-".
func writeTo(path string, write func(io.Writer) error) error {
	if path == "-" {
		return write(os.Stdout)
	}
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	if err := write(f); err != nil {
		f.Close()
		return fmt.Errorf("%s: %w", path, err)
	}
	return f.Close()
}
