package main

import (
	"context"
	"flag"
	"fmt"

	"fvsweep/store"
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
	src, err := c.open(context.Background())
	if err != nil {
		return fail("cancel: %v", err)
	}
	if src.client != nil {
		defer src.close()
		rep, err := src.client.Cancel(context.Background(), name)
		if err != nil {
			return fail("cancel: %v", err)
		}
		fmt.Printf("sweep %s canceled: %d jobs without an outcome dropped\n", name, rep.Purged)
		return 0
	}
	src.close() // read-only; reopen for writing
	db, err := store.Open(c.dbPath(), store.Options{})
	if err != nil {
		return fail("cancel: %v", err)
	}
	defer db.Close()
	if err := db.SetCanceled(name, true); err != nil {
		return fail("cancel: %v", err)
	}
	fmt.Printf("sweep %s marked canceled in %s (no coordinator running)\n", name, c.dbPath())
	return 0
}
