package main

import (
	"context"
	"flag"
	"fmt"

	"fvsweep/coordinator/datadir"
	"fvsweep/sweep/wire"
)

func init() {
	register(command{name: "cancel", args: "SWEEP", run: runCancel,
		summary: "cancel a sweep",
		about: `Cancels a sweep: its queued jobs are removed, workers stop its running jobs,
and their outcomes are not waited for. Outcomes already stored stay. With
no server named and no coordinator running, the store in --data is marked
and the coordinator applies the cancel when it starts; a server named with
--nats that does not answer is an error, and the store is left alone.
Submitting the spec again resumes the sweep.`,
		flags: commonFlags(false),
		examples: []string{
			"fvsweep cancel blast-limiters",
			"fvsweep cancel blast-limiters --nats nats://10.0.0.5:4222 --token-file sub.key",
		}})
}

func runCancel(args []string) int {
	fs := flag.NewFlagSet("cancel", flag.ContinueOnError)
	var c common
	c.register(fs)
	pos, code, done := parseCommand("cancel", fs, args)
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
