package main

import (
	"context"
	"flag"
	"fmt"
	"fvsweep/sweep/spec"
	"fvsweep/sweep/wire"
	"os"
)

func init() {
	register(command{name: "submit", args: "SPEC", run: runSubmit,
		summary: "queue a sweep spec on the running coordinator",
		about: `Sends the sweep spec SPEC to the running coordinator (found through
DIR/coordinator.url or --nats), which queues every job that has no stored
outcome, largest first. The spec is checked here first. Submitting the same
(or an edited) spec again queues only the jobs not yet stored. The manifests
of --solver go with the spec: the coordinator checks the spec with them, and
the jobs of each program wait for a worker that offers it.`,
		flags: flagSet([]flagDoc{
			{"rerun-failed", "", "also run again the jobs whose stored outcome is failed", ""},
		}, solverDocs, limitDocs, commonFlags(false)),
		examples: []string{
			"fvsweep submit configs/blast-limiters.toml",
			"fvsweep submit configs/blast-limiters.toml --rerun-failed",
		}})
}

func runSubmit(args []string) int {
	fs := flag.NewFlagSet("submit", flag.ContinueOnError)
	var c common
	c.register(fs)
	retry := fs.Bool("rerun-failed", false, "")
	alias(fs, "retry-failed", "rerun-failed")
	var lf limitFlags
	lf.register(fs)
	var sv solverFlags
	sv.register(fs)
	pos, code, done := parseCommand("submit", fs, args)
	if done {
		return code
	}
	var err error
	if c.lim, err = lf.limits(); err != nil {
		return usageErr("submit", "%v", err)
	}
	progs, texts, err := sv.load()
	if err != nil {
		return fail("submit: %v", err)
	}
	c.progs = progs
	spec, err := c.loadSpec(pos[0])
	if err != nil {
		return fail("submit: %v", err)
	}
	printExtension(spec)
	src, err := c.open(context.Background(), wire.RoleSubmitter)
	if err != nil {
		return fail("submit: %v", err)
	}
	defer src.Close()
	if !src.Live() {
		return fail("submit: no coordinator is running for %s: start 'fvsweep serve' (or use 'fvsweep run %s')", c.data, pos[0])
	}
	rep, err := src.Client.Submit(context.Background(), wire.SubmitRequest{File: spec.File, Source: spec.Source, RetryFailed: *retry, Solvers: texts})
	if err != nil {
		return fail("submit: %v", err)
	}
	printSubmitted(rep)
	return 0
}

// printExtension says, before a submission, what the grids that studies
// may add until their order settles cost at most (nothing without any).
func printExtension(pl *spec.Plan) {
	spec.WriteExtension(os.Stdout, pl)
}

// printSubmitted says what a submission did.
func printSubmitted(rep wire.SubmitReply) {
	fmt.Printf("sweep %s: %d jobs, %d already stored, %d queued", rep.Sweep, rep.Jobs, rep.Stored, rep.Queued)
	if rep.Retried > 0 {
		fmt.Printf(" (%d failed ones again)", rep.Retried)
	}
	fmt.Println()
}
