package coordinator

import (
	"fmt"
	"fvsweep/sweep/wire"
	"sort"
	"sync"
	"time"
)

// registry keeps the latest report of every live worker. A worker is live
// until three report intervals pass without a report (the interval is at
// most ReportBounds.MaxEvery, so every worker expires), or it says it
// leaves. It holds at most MaxWorkers workers and takes a worker's report
// at most once per MinEvery.
type registry struct {
	mu      sync.Mutex
	b       wire.ReportBounds
	workers map[string]seen
}

type seen struct {
	r     wire.WorkerReport
	at    time.Time
	first map[string]time.Time // job ID -> when this worker first listed it
}

func newRegistry(b wire.ReportBounds) *registry { return &registry{b: b, workers: map[string]seen{}} }

// update takes report r; it returns why it dropped it, or "".
func (g *registry) update(r wire.WorkerReport, now time.Time) string {
	g.mu.Lock()
	defer g.mu.Unlock()
	if r.Leaving {
		delete(g.workers, r.ID)
		return ""
	}
	old, known := g.workers[r.ID]
	switch {
	case known && now.Sub(old.at) < g.b.MinEvery:
		return "too soon after the last report"
	case !known && len(g.workers) >= g.b.MaxWorkers:
		g.expire(now)
		if len(g.workers) >= g.b.MaxWorkers {
			return fmt.Sprintf("%d workers known already", len(g.workers))
		}
	}
	g.workers[r.ID] = seen{r: r, at: now, first: firstSeen(old.first, r, now)}
	return ""
}

// firstSeen notes when each job of r was first listed by this worker and
// moves a job's Since no earlier than one report interval before that: a
// report cannot make a job look as if it had run for hours (an honest
// worker lists a job within one interval of starting it).
func firstSeen(before map[string]time.Time, r wire.WorkerReport, now time.Time) map[string]time.Time {
	first := make(map[string]time.Time, len(r.Current))
	for i, j := range r.Current {
		at, ok := before[j.JobID]
		if !ok {
			at = now
		}
		first[j.JobID] = at
		if earliest := at.Add(-r.Every); j.Since.Before(earliest) {
			r.Current[i].Since = earliest
		}
	}
	return first
}

// expire drops the workers whose reports stopped; g.mu is held.
func (g *registry) expire(now time.Time) {
	for id, s := range g.workers {
		if now.Sub(s.at) > 3*s.r.Every {
			delete(g.workers, id)
		}
	}
}

// live returns the live workers' reports sorted by ID, dropping the dead.
func (g *registry) live(now time.Time) []wire.WorkerReport {
	g.mu.Lock()
	defer g.mu.Unlock()
	g.expire(now)
	out := make([]wire.WorkerReport, 0, len(g.workers))
	for _, s := range g.workers {
		out = append(out, s.r)
	}
	sort.Slice(out, func(i, j int) bool { return out[i].ID < out[j].ID })
	return out
}

// running maps the job IDs live workers run now to the worker's ID.
func (g *registry) running(now time.Time) map[string]string {
	out := map[string]string{}
	for _, r := range g.live(now) {
		for _, j := range r.Current {
			out[j.JobID] = r.ID
		}
	}
	return out
}

// runningIn counts the jobs of sweep name that live workers run now.
func (g *registry) runningIn(name string, now time.Time) int {
	n := 0
	for _, r := range g.live(now) {
		for _, j := range r.Current {
			if j.Sweep == name {
				n++
			}
		}
	}
	return n
}

// lastSeen maps each worker's ID to when its latest report came.
func (g *registry) lastSeen() map[string]time.Time {
	g.mu.Lock()
	defer g.mu.Unlock()
	out := make(map[string]time.Time, len(g.workers))
	for id, s := range g.workers {
		out[id] = s.at
	}
	return out
}
