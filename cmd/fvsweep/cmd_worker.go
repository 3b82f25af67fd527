package main

import (
	"flag"
	"fmt"
	"os"
	"runtime"
	"sync/atomic"
	"time"

	"golang.org/x/term"

	"fvsweep/coordinator/client"
	"fvsweep/sweep/wire"
	"fvsweep/worker"
)

// maxSlots is the most jobs a worker runs at once: a coordinator takes no
// report that lists more.
var maxSlots = wire.DefaultReportBounds().MaxCurrent

func init() {
	register(command{name: "worker", run: runWorker,
		summary: "run jobs from a coordinator's queue",
		about: `Runs jobs of any sweep queued on the NATS server at URL (from 'fvsweep
serve'), N at a time, and sends back their outcomes. A worker may join or
leave at any time. Ctrl-C on a terminal (SIGINT with stdin a terminal)
stops the running jobs at once and returns them to the queue (exit status
130). SIGTERM, or SIGINT without a terminal (a service manager), drains it:
it takes no new jobs and finishes the running ones (exit status 0); a second
signal stops those too and returns them to the queue. Losing the server
and finding it again are logged. Every worker runs fvsweep's own solver
fv2d; --solver adds an outside program (its jobs come only to workers that
offer it at the version the job names). A program that is not found or not
executable here is refused at start.`,
		flags: flagSet([]flagDoc{
			{"slots", "N", "jobs run at once, 1 to 256", "the number of cores"},
			{"id", "NAME", "worker name in status and results", "host-pid-random"},
		}, solverDocs, commonFlags(false)),
		examples: []string{
			"fvsweep worker --nats nats://fvsweep-nats-1:4222 --token-file worker.key",
			"fvsweep worker --data fvsweep-data --slots 4",
		}})
}

func runWorker(args []string) int {
	fs := flag.NewFlagSet("worker", flag.ContinueOnError)
	var c common
	c.register(fs)
	conc := intFlag(fs, "slots", min(runtime.NumCPU(), maxSlots), 1, maxSlots)
	alias(fs, "concurrency", "slots")
	id := fs.String("id", "", "")
	var sv solverFlags
	sv.register(fs)
	if _, code, done := parseCommand("worker", fs, args); done {
		return code
	}
	log, err := c.logger("fvsweep")
	if err != nil {
		return usageErr("worker", "%v", err)
	}
	progs, _, err := sv.load()
	if err != nil {
		return fail("worker: %v", err)
	}
	offer, err := runners(progs)
	if err != nil {
		return fail("worker: %v", err)
	}
	url := c.coordinatorURL()
	if url == "" {
		return usageErr("worker", "no NATS URL: give --nats URL or set FVSWEEP_NATS")
	}
	o := c.dialOptions(url, "fvsweep worker", wire.RoleWorker)
	o.Log = log.Named("nats")
	nc, err := client.Dial(o)
	if err != nil {
		return fail("worker: %v", err)
	}
	defer nc.Close()
	var w *worker.Worker
	var interrupted atomic.Bool
	ctx, release := signalsAt(func() {
		if w != nil {
			log.Warn("stopping running jobs, they go back to the queue")
			w.Abort()
		}
	}, func(sig os.Signal) bool {
		interrupted.Store(abortsAtOnce(sig, term.IsTerminal(int(os.Stdin.Fd()))))
		return interrupted.Load()
	})
	defer release()
	w, err = worker.New(ctx, nc, worker.Config{ID: *id, Concurrency: *conc, Runners: offer, Log: log.Named("worker")})
	if err != nil {
		return fail("worker: %v", err)
	}
	fmt.Printf("worker %s: %d slots on %s\n", w.ID(), *conc, url)
	start := time.Now()
	if err := w.Run(ctx); err != nil {
		return fail("worker: %v", err)
	}
	st := w.Stats()
	fmt.Printf("worker %s: %d done, %d failed in %s, busy %.0f%%\n", w.ID(), st.Done, st.Failed,
		time.Since(start).Round(time.Second), 100*st.Busy)
	if interrupted.Load() {
		return exitInterrupted
	}
	return 0
}

// abortsAtOnce tells whether a worker's first signal gives its running jobs
// back at once: a Ctrl-C on a terminal (SIGINT with stdin a terminal) does;
// SIGTERM, and SIGINT without a terminal (a service manager), drain.
func abortsAtOnce(sig os.Signal, tty bool) bool { return sig == os.Interrupt && tty }
