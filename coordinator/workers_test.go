package coordinator

import (
	"fmt"
	"testing"
	"time"

	"fvsweep/sweep/job"
	"fvsweep/sweep/wire"
)

// The registry takes one report per MinEvery from a worker, at most
// MaxWorkers workers, expires every worker three intervals after its last
// report, and does not let a report date a job back by hours.
func TestRegistryBounds(t *testing.T) {
	b := wire.DefaultReportBounds()
	b.MaxWorkers = 3
	g := newRegistry(b)
	now := time.Date(2026, 1, 1, 12, 0, 0, 0, time.UTC)
	rep := func(id string) wire.WorkerReport {
		return wire.WorkerReport{ID: id, Concurrency: 1, Every: 2 * time.Second,
			Current: []wire.RunningJob{{JobID: job.NewID(id), Sweep: "s", Since: now.Add(-60649 * time.Hour)}}}
	}
	for i := 0; i < 3; i++ {
		if why := g.update(rep(fmt.Sprint("w", i)), now); why != "" {
			t.Fatalf("worker %d refused: %s", i, why)
		}
	}
	if why := g.update(rep("w9"), now); why == "" {
		t.Error("a fourth worker was taken beyond MaxWorkers = 3")
	}
	if why := g.update(rep("w0"), now.Add(b.MinEvery/2)); why == "" {
		t.Error("a report sooner than MinEvery was taken")
	}
	live := g.live(now)
	if len(live) != 3 {
		t.Fatalf("%d live", len(live))
	}
	if since := live[0].Current[0].Since; now.Sub(since) > 2*time.Second {
		t.Errorf("a job reported running since %v shows as running for %v", since, now.Sub(since))
	}
	// Three intervals later, with no report, every worker is gone and a
	// new one is taken.
	later := now.Add(6*time.Second + time.Millisecond)
	if n := len(g.live(later)); n != 0 {
		t.Errorf("%d workers live after three silent intervals", n)
	}
	if why := g.update(rep("w9"), later); why != "" {
		t.Errorf("a new worker refused after the others expired: %s", why)
	}
}
