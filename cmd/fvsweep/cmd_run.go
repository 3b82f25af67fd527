package main

import (
	"context"
	"flag"
	"fmt"
	"fvsweep/sweep/table"
	"io"
	"os"
	"runtime"
	"slices"
	"strings"
	"sync"
	"time"

	"github.com/hashicorp/go-hclog"
	"golang.org/x/term"

	"fvsweep/coordinator"
	"fvsweep/sweep/wire"
	"fvsweep/worker"
)

func init() {
	register(command{name: "run", args: "SPEC", run: runRun,
		summary: "run a sweep on this machine: server, coordinator, workers, tables",
		about: `Runs a sweep on this machine in one go: an embedded NATS server, the
coordinator and N local workers. It queues every job of SPEC that has no
stored outcome (largest first), shows the progress (a bar with done, failed,
running and an ETA on a terminal, a line every few seconds otherwise), then
prints the convergence tables. The sweep's name, printed first, is what
status, table, export and cancel take.

Ctrl-C stops cleanly: running jobs go back to the queue, stored outcomes
stay, and running the same command again resumes where it stopped. Other
terminals can watch with 'fvsweep status' (a browser with --http, whose page
stays up after the sweep ends until Ctrl-C) meanwhile, or add workers with
'fvsweep worker --nats URL' (the URL is in DIR/coordinator.url).`,
		flags: flagSet([]flagDoc{
			{"workers", "N", "local workers, 1 to 1024", "1"},
			{"slots", "N", "jobs each worker runs at once, 1 to 256", "cores / N, at least 1"},
			{"listen", "HOST:PORT", "client address of the embedded server", "127.0.0.1, a free port"},
			{"rerun-failed", "", "run again the jobs whose stored outcome is failed", ""},
			{"format", "F", "format of the tables at the end: text, markdown, csv, json or none", "text"},
		}, limitDocs, webDocs, serverDocs, commonFlags(true)),
		examples: []string{
			"fvsweep run configs/blast-limiters.toml",
			"fvsweep run configs/splitting-order.toml --workers 2 --slots 1",
			"fvsweep run configs/blast-limiters.toml --http 127.0.0.1:8080",
		}})
}

func runRun(args []string) int {
	fs := flag.NewFlagSet("run", flag.ContinueOnError)
	var c common
	c.register(fs)
	var sf serverFlags
	sf.register(fs)
	var wf webFlags
	wf.register(fs)
	nw := intFlag(fs, "workers", 1, 1, 1024)
	conc := intFlag(fs, "slots", 0, 1, maxSlots)
	alias(fs, "concurrency", "slots")
	listen := fs.String("listen", "", "")
	retry := fs.Bool("rerun-failed", false, "")
	alias(fs, "retry-failed", "rerun-failed")
	format := choiceFlag(fs, "format", "text", append(slices.Clone(table.Formats), "none")...)
	var lf limitFlags
	lf.register(fs)
	pos, code, done := parseCommand("run", fs, args)
	if done {
		return code
	}
	lim, err := lf.limits()
	if err != nil {
		return usageErr("run", "%v", err)
	}
	c.lim = lim
	if *conc == 0 {
		*conc = max(1, runtime.NumCPU()/max(1, *nw))
	}
	log, err := c.logger("fvsweep")
	if err != nil {
		return usageErr("run", "%v", err)
	}
	spec, err := c.loadSpec(pos[0])
	if err != nil {
		return fail("run: %v", err)
	}
	// The components say less than the command unless asked for debug logs.
	inner := log.ResetNamed("fvsweep")
	if log.GetLevel() >= hclog.Info {
		inner = hclog.New(&hclog.LoggerOptions{Name: "fvsweep", Level: hclog.Warn, JSONFormat: c.logJSON, Output: os.Stderr})
	}
	if err := wf.check(&c); err != nil {
		return usageErr("run", "%v", err)
	}
	s, err := startService(&c, &sf, *listen, inner, nil)
	if err != nil {
		return fail("run: %v", err)
	}
	defer s.close()
	if err := wf.start(s, &c, inner); err != nil {
		return fail("run: %v", err)
	}

	var workers []*worker.Worker
	ctx, release := signals(func() {
		for _, w := range workers {
			w.Abort()
		}
	})
	defer release()
	wctx, stopWorkers := context.WithCancel(context.Background())
	defer stopWorkers()
	var wg sync.WaitGroup
	for i := 0; i < *nw; i++ {
		nc, err := s.dial(&c, "fvsweep run worker", wire.RoleWorker)
		if err != nil {
			return fail("run: %v", err)
		}
		defer nc.Close()
		w, err := worker.New(wctx, nc, worker.Config{Concurrency: *conc, Log: inner.Named("worker")})
		if err != nil {
			return fail("run: %v", err)
		}
		workers = append(workers, w)
		wg.Add(1)
		go func() { defer wg.Done(); w.Run(wctx) }()
	}
	stop := func(abort bool) {
		stopWorkers()
		if abort {
			for _, w := range workers {
				w.Abort()
			}
		}
		wg.Wait()
	}

	rep, err := s.coord.Submit(ctx, spec, *retry)
	if err != nil {
		stop(true)
		return fail("run: %v", err)
	}
	printSubmitted(rep)
	fmt.Printf("%d local %s x %d %s; other terminals: fvsweep status %s --data %s\n",
		*nw, plural(*nw, "worker"), *conc, plural(*conc, "slot"), rep.Sweep, c.data)
	finished := watchProgress(ctx, s.coord, rep, os.Stderr, log)
	stop(!finished)
	if !finished {
		st, _ := s.coord.Status(rep.Sweep)
		if len(st) == 1 {
			fmt.Printf("interrupted: %d of %d jobs stored (%d failed); run the same command again to resume\n",
				st[0].Done+st[0].Failed, st[0].JobsTotal, st[0].Failed)
		}
		return 1
	}
	if *format != "none" {
		rows, err := coordinator.Rows(s.db, rep.Sweep, nil)
		if err != nil {
			return fail("run: %v", err)
		}
		d := &sweepData{name: rep.Sweep, rows: rows, specFile: spec.File, spec: spec.Source, studies: spec.Settings()}
		fmt.Println()
		if err := printTables(os.Stdout, d, table.Options{}, *format); err != nil {
			return fail("run: tables: %v", err)
		}
	}
	if s.web != nil {
		fmt.Printf("sweep %s finished; the status page stays up at %s until Ctrl-C\n", rep.Sweep, s.web.URL())
		<-ctx.Done()
	}
	return 0
}

// watchProgress shows the sweep's progress until all its jobs have an
// outcome (true) or ctx is done (false).
func watchProgress(ctx context.Context, coord *coordinator.Coordinator, rep wire.SubmitReply, out *os.File, log hclog.Logger) bool {
	tty := term.IsTerminal(int(out.Fd()))
	every := 5 * time.Second // between log lines
	if tty {
		every = 200 * time.Millisecond
	}
	// The status is looked at often, so that the command ends soon after
	// the last outcome whatever the log interval.
	tick := time.NewTicker(200 * time.Millisecond)
	defer tick.Stop()
	p := progress{start: time.Now(), base: rep.Stored - rep.Retried}
	for {
		st, err := coord.Status(rep.Sweep)
		if err != nil || len(st) != 1 {
			log.Error("progress", "error", err)
			return false
		}
		s := st[0]
		finished := s.Done+s.Failed >= s.JobsTotal
		if tty {
			fmt.Fprint(out, "\r"+p.bar(s, termWidth(out))+"\x1b[K")
			if finished {
				fmt.Fprintln(out)
			}
		} else if finished || time.Since(p.logged) >= every {
			log.Info("progress", "sweep", s.Sweep, "done", s.Done, "failed", s.Failed, "running", s.Running,
				"queued", s.Queued, "of", s.JobsTotal, "eta", p.eta(s))
			p.logged = time.Now()
		}
		if finished {
			return true
		}
		select {
		case <-ctx.Done():
			if tty {
				fmt.Fprintln(out)
			}
			return false
		case <-tick.C:
		}
	}
}

// progress computes the bar and the ETA of a sweep.
type progress struct {
	start  time.Time
	base   int // outcomes stored before this run
	logged time.Time
}

// eta extrapolates the rate of this run's outcomes so far. Jobs are run
// largest first, so the estimate is pessimistic early on.
func (p *progress) eta(s wire.SweepStatus) string {
	got := s.Done + s.Failed - p.base
	left := s.JobsTotal - s.Done - s.Failed
	if left == 0 {
		return "0s"
	}
	if got <= 0 {
		return "?"
	}
	el := time.Since(p.start)
	return (time.Duration(float64(el) / float64(got) * float64(left))).Round(time.Second).String()
}

func (p *progress) bar(s wire.SweepStatus, width int) string {
	text := fmt.Sprintf(" %d/%d done  %d failed  %d running  ETA %s", s.Done, s.JobsTotal, s.Failed, s.Running, p.eta(s))
	n := max(10, min(40, width-len(text)-3))
	filled := 0
	if s.JobsTotal > 0 {
		filled = n * (s.Done + s.Failed) / s.JobsTotal
	}
	return "[" + strings.Repeat("#", filled) + strings.Repeat(".", n-filled) + "]" + text
}

func termWidth(f io.Writer) int {
	if ff, ok := f.(*os.File); ok {
		if w, _, err := term.GetSize(int(ff.Fd())); err == nil && w > 0 {
			return w
		}
	}
	return 80
}
