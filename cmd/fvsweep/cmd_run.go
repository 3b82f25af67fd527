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
	"sync"
	"time"

	"github.com/hashicorp/go-hclog"
	"golang.org/x/term"

	"fvsweep/coordinator"
	"fvsweep/sweep/spec"
	"fvsweep/sweep/wire"
	"fvsweep/worker"
)

func init() {
	register(command{name: "run", args: "SPEC", run: runRun,
		summary: "run a sweep on this machine: server, coordinator, workers, tables",
		about: `Runs a sweep on this machine in one go: an embedded NATS server, the
coordinator and N local workers. It queues every job of SPEC that has no
stored outcome (largest first), shows the progress (on a terminal a bar per
study and one for the sweep with the time left, otherwise a line every 5 s),
then prints the convergence tables. The sweep's name, printed first, is what
status, table, export and cancel take. The programs of --solver are offered
by the local workers too.

Ctrl-C stops cleanly (exit status 130): running jobs go back to the queue at
once, stored outcomes stay, and running the same command again resumes
where it stopped. Other
terminals can watch with 'fvsweep status' (a browser with --http, whose page
stays up after the sweep ends until Ctrl-C) meanwhile, or add workers with
'fvsweep worker --nats URL' (the URL is in DIR/coordinator.url).`,
		flags: flagSet([]flagDoc{
			{"workers", "N", "local workers, 1 to 1024", "1"},
			{"slots", "N", "jobs each worker runs at once, 1 to 256", "cores / N, at least 1"},
			{"listen", "HOST:PORT", "client address of the embedded server", "127.0.0.1, a free port"},
			{"rerun-failed", "", "run again the jobs whose stored outcome is failed", ""},
			{"format", "F", "format of the tables at the end: text, markdown, csv, json or none", "text"},
		}, solverDocs, limitDocs, webDocs, serverDocs, commonFlags(true)),
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
	var sv solverFlags
	sv.register(fs)
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
	progs, _, err := sv.load()
	if err != nil {
		return fail("run: %v", err)
	}
	c.progs = progs
	spec, err := c.loadSpec(pos[0])
	if err != nil {
		return fail("run: %v", err)
	}
	offer, err := runners(progs)
	if err != nil {
		return fail("run: %v", err)
	}
	printExtension(spec)
	// The components say less than the command unless asked for debug logs.
	inner := log.ResetNamed("fvsweep")
	if log.GetLevel() >= hclog.Info {
		inner = hclog.New(&hclog.LoggerOptions{Name: "fvsweep", Level: hclog.Warn, JSONFormat: c.logJSON, Output: os.Stderr})
	}
	if err := wf.check(&c); err != nil {
		return usageErr("run", "%v", err)
	}
	prog := newSweepProgress(spec.Name, studyLabels(spec))
	s, err := startService(&c, &sf, *listen, inner, prog.stored)
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
		if runHooks.runners != nil {
			offer = runHooks.runners
		}
		w, err := worker.New(wctx, nc, worker.Config{Concurrency: *conc, Runners: offer, Log: inner.Named("worker")})
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
	rows := func() ([]wire.Row, error) { return coordinator.Rows(s.db, rep.Sweep, nil) }
	finished := watchProgress(ctx, s.coord, prog, rows, log)
	stop(!finished)
	if !finished {
		st, _ := s.coord.Status(rep.Sweep)
		if len(st) == 1 {
			fmt.Printf("interrupted: %d of %d jobs stored (%d failed), the running ones back in the queue; run the same command again to resume\n",
				st[0].Done+st[0].Failed, st[0].JobsTotal, st[0].Failed)
		}
		return exitInterrupted
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

// runHooks are what tests of run change: the runners of its local workers
// (nil: the default) and where the plain progress lines go, how often
// (nil: standard error, a bar on a terminal).
var runHooks struct {
	runners  map[string]worker.Runner
	progress io.Writer
	every    time.Duration
}

// progressEvery is the interval of the plain progress lines.
const progressEvery = 5 * time.Second

// watchProgress shows the sweep's progress until all its jobs have an
// outcome (true) or ctx is done (false). p follows the jobs (load is done
// here); rows reads them from the store.
func watchProgress(ctx context.Context, coord *coordinator.Coordinator, p *sweepProgress, rows func() ([]wire.Row, error), log hclog.Logger) bool {
	all, err := rows()
	if err != nil {
		log.Error("progress", "error", err)
		return false
	}
	p.load(all)
	p.setRunning(coord.Workers(), time.Now())
	var view progressView
	switch out := runHooks.progress; {
	case out != nil:
		view = &lineView{out: out, name: p.name, every: runHooks.every}
	case term.IsTerminal(int(os.Stderr.Fd())):
		view = newBarView(os.Stderr, p.name, p.labels, p.snapshot())
	default:
		view = &lineView{out: os.Stderr, name: p.name, every: progressEvery}
	}
	// The state is looked at often, so that the command ends soon after
	// the last outcome whatever the interval of the lines.
	tick := time.NewTicker(200 * time.Millisecond)
	defer tick.Stop()
	for {
		p.setRunning(coord.Workers(), time.Now())
		s := p.snapshot()
		if !s.sweep.finished() {
			// The store is the authority: an outcome it holds that did not
			// come through the coordinator's hook is taken from it.
			if st, err := coord.Status(p.name); err == nil && len(st) == 1 && st[0].Done+st[0].Failed >= st[0].JobsTotal {
				if all, err := rows(); err == nil {
					p.load(all)
					s = p.snapshot()
				}
			}
		}
		if s.sweep.finished() {
			view.end(s, true)
			return true
		}
		view.show(s)
		select {
		case <-ctx.Done():
			view.end(p.snapshot(), false)
			return false
		case <-tick.C:
		}
	}
}

// exitInterrupted is run's exit status when a signal stopped the sweep
// (128 + SIGINT, as shells report a command that Ctrl-C ended).
const exitInterrupted = 130

// studyLabels are the labels of the plan's studies, by index - 1.
func studyLabels(pl *spec.Plan) []string {
	out := make([]string, len(pl.Studies))
	for i, st := range pl.Studies {
		out[i] = st.Label
	}
	return out
}
