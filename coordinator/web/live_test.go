package web

import (
	"math"
	"testing"
	"time"

	"fvsweep/sweep/job"
	"fvsweep/sweep/wire"
)

// The busy fraction is the share of slot-time in use over the last minute
// of reports, counting the jobs running now: both slots busy reads 100 %
// (the report's Busy, which counts finished jobs only, is 0 then), and a
// worker idle for a minute after a busy spell reads 0 % (its Busy since the
// start stays high). Slot-time accounting, worked by hand.
func TestBusyRecent(t *testing.T) {
	t0 := time.Date(2025, 1, 1, 12, 0, 0, 0, time.UTC)
	rep := func(at time.Duration, busy float64, running ...time.Duration) wire.WorkerReport {
		r := wire.WorkerReport{ID: "w", Concurrency: 2, Started: t0, Sent: t0.Add(at), Every: time.Second, Busy: busy}
		for _, since := range running {
			r.Current = append(r.Current, wire.RunningJob{JobID: "j", Sweep: "s", Since: t0.Add(since)})
		}
		return r
	}
	tr := newTracker()
	// Both slots run from 0 to 4 s; one again from 5 s to 65 s. The span
	// reaches back to the last report before the minute.
	for _, c := range []struct {
		r    wire.WorkerReport
		want float64
	}{
		{rep(1*time.Second, 0, 0, 0), 1},                       // one report, both slots in use
		{rep(5*time.Second, 8.0/10, 5*time.Second), 6.0 / 8},   // 1 s to 5 s: both busy to 4 s, 6 of 8 slot-s
		{rep(9*time.Second, 8.0/18, 5*time.Second), 10.0 / 16}, // 1 s to 9 s: 6 + 4 slot-s of 16
		{rep(70*time.Second, 68.0/140), 56.0 / 122},            // 9 s to 70 s: 56 of 122
		{rep(80*time.Second, 68.0/160), 56.0 / 142},            // 9 s to 80 s
		{rep(130*time.Second, 68.0/260), 0},                    // 70 s to 130 s: idle
	} {
		if got := tr.busyRecent(c.r); math.Abs(got-c.want) > 0.02 {
			t.Errorf("report at %v (Busy %.2f, %d running): busy %.3f, want %.3f", c.r.Sent.Sub(t0), c.r.Busy, len(c.r.Current), got, c.want)
		}
	}
}

// The failure list and the running jobs name only the parameters that
// differ among a study's jobs; the group leaves out the grid.
func TestJobIndexDiffering(t *testing.T) {
	mk := func(id string, study int, lim, nx string) job.Job {
		return job.Job{ID: id, Study: study, Case: "vortex", Refine: "nx", Cost: 10,
			Params: map[string]string{"cfl": "0.8", "limiter": lim, "nx": nx, "ny": nx}}
	}
	ix := newJobIndex([]job.Job{mk("a", 1, "mc", "16"), mk("b", 1, "mc", "32"), mk("c", 1, "minmod", "16"), mk("d", 2, "mc", "64")})
	if got := ix.jobs["b"]; got.params != "limiter=mc nx=32 ny=32" || got.group != "limiter=mc" || got.nx != 32 || got.kase != "vortex" {
		t.Errorf("job b: %+v", got)
	}
	if got := ix.jobs["d"]; got.params != "" || got.group != "" {
		t.Errorf("job d, alone in its study: %+v", got)
	}
	if ix.costTotal != 40 {
		t.Errorf("cost total %g", ix.costTotal)
	}
}

// The running jobs carry the progress their worker reports, and none for a
// job whose runner tells none.
func TestRunningProgress(t *testing.T) {
	now := time.Now()
	quarter := 0.25
	w := wire.WorkerReport{ID: "w", Concurrency: 2, Current: []wire.RunningJob{
		{JobID: "a", Sweep: "s", Since: now.Add(-2 * time.Second), Progress: &quarter},
		{JobID: "b", Sweep: "s", Since: now.Add(-time.Second)}}}
	got := newTracker().running(nil, []wire.WorkerReport{w}, map[string]int{}, "", now)
	if len(got) != 2 || got[0].Progress == nil || *got[0].Progress != 0.25 || got[1].Progress != nil {
		t.Errorf("running %+v", got)
	}
}
