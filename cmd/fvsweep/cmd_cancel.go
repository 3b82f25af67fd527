package main

import (
	"context"
	"flag"
	"fmt"

	"fvsweep/coordinator/datadir"
	"fvsweep/sweep/wire"
)

const cancelUsage = `usage: fvsweep cancel SWEEP

Cancels a sweep: its queued jobs are removed, workers stop its running jobs,
and their outcomes are not waited for. Outcomes already stored stay. With
no coordinator running, the store in --data is marked and the coordinator
applies the cancel when it starts. Submitting the spec again resumes it.
` + commonUsage

func init() {
	register(command{name: "cancel", summary: "cancel a sweep", run: runCancel})
}

func runCancel(args []string) int {
	fs := flag.NewFlagSet("cancel", flag.ContinueOnError)
	var c common
	c.register(fs)
	pos, code, done := parseCommand("cancel", cancelUsage, fs, args, func(n int) bool { return n == 1 })
	if done {
		return code
	}
	name := pos[0]
	rep, live, err := datadir.Cancel(context.Background(), c.dir(), c.clientOptions(wire.RoleSubmitter), name)
	if err != nil {
		return fail("cancel: %v", err)
	}
	if live {
		fmt.Printf("sweep %s canceled: %d jobs without an outcome dropped\n", name, rep.Purged)
		return 0
	}
	fmt.Printf("sweep %s marked canceled in %s (no coordinator running)\n", name, c.dir().DB())
	return 0
}
