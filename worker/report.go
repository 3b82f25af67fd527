package worker

import (
	"encoding/json"
	"math"
	"runtime"
	"time"

	"fvsweep/sweep/wire"
)

// background sends the reports and the in-progress heartbeats until stop
// is closed.
func (w *Worker) background(stop <-chan struct{}) {
	rep := time.NewTicker(w.cfg.ReportEvery)
	hb := time.NewTicker(w.cfg.Heartbeat)
	defer rep.Stop()
	defer hb.Stop()
	w.report(false)
	last := time.Now()
	first := w.firstJob
	var soon <-chan time.Time
	for {
		select {
		case <-stop:
			return
		case <-rep.C:
			w.report(false)
			last = time.Now()
		case <-first:
			first = nil
			// The first job is reported at once, so that a status shows it
			// running (a resumed sweep) without waiting a report interval;
			// a coordinator takes one report per wire MinEvery.
			soon = time.After(firstReportGap - time.Since(last))
		case <-soon:
			soon = nil
			w.report(false)
			last = time.Now()
		case now := <-hb.C:
			w.mu.Lock()
			for _, t := range w.tasks {
				if now.Sub(t.beat) >= w.cfg.Heartbeat/2 {
					t.msg.InProgress()
					t.beat = now
				}
			}
			for m, beat := range w.buffered {
				if now.Sub(beat) >= w.cfg.Heartbeat/2 {
					m.InProgress()
					w.buffered[m] = now
				}
			}
			w.mu.Unlock()
		}
	}
}

// firstReportGap is the least time between the worker's first report and
// the one that shows its first job (twice the default wire MinEvery).
const firstReportGap = 100 * time.Millisecond

// Stats is what a worker has done so far.
type Stats struct {
	Done, Failed int
	// Busy is the fraction of slot time spent running jobs since Run
	// started: sum of run times / (Concurrency x elapsed).
	Busy float64
}

// Stats returns the worker's counters.
func (w *Worker) Stats() Stats {
	s := Stats{Done: int(w.done.Load()), Failed: int(w.failed.Load())}
	if el := time.Since(w.started); el > 0 && !w.started.IsZero() {
		s.Busy = float64(w.busy.Load()) / (float64(w.cfg.Concurrency) * float64(el))
	}
	return s
}

// report publishes the worker's report (core NATS, fire and forget).
func (w *Worker) report(leaving bool) {
	st := w.Stats()
	r := wire.WorkerReport{
		ID: w.cfg.ID, Host: w.host, Cores: runtime.NumCPU(), Concurrency: w.cfg.Concurrency,
		Started: w.started, Sent: time.Now(), Every: w.cfg.ReportEvery,
		Done: st.Done, Failed: st.Failed, Busy: st.Busy, Leaving: leaving, Solvers: w.programs(),
	}
	w.mu.Lock()
	for _, t := range w.tasks {
		rj := wire.RunningJob{JobID: t.jb.ID, Sweep: t.jb.Sweep, Since: t.since}
		if f := math.Float64frombits(t.progress.Load()); f >= 0 && f <= 1 {
			rj.Progress = &f
		}
		r.Current = append(r.Current, rj)
	}
	w.mu.Unlock()
	data, err := json.Marshal(r)
	if err == nil {
		err = w.nc.Publish(w.cfg.Names.WorkerSubject(w.cfg.ID), data)
	}
	if err != nil {
		w.log.Debug("sending report", "error", err)
	}
}
