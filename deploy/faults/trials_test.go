package faults

import (
	"math/rand/v2"
	"strings"
	"testing"
	"time"
)

// manyJobs is 120 jobs of 10 to 400 ms.
var manyJobs = strings.Replace(strings.Replace(shortJobs, `"short-jobs"`, `"many-jobs"`, 1),
	`fixed = { t_end = 0.3 }`, `fixed = { t_end = 0.5 }`+"\n"+`together = [{ split = ["strang", "lie"] }]`, 1)

// TestRepeatedKills runs one sweep through at least 20 SIGKILLs at random
// times (100 to 400 ms apart) of a random victim: the coordinator, one of
// the two workers, or the NATS node; each victim is restarted at once on
// the same files. It counts the jobs expected, stored, stored twice and
// lost, and fails unless every job is stored exactly once.
func TestRepeatedKills(t *testing.T) {
	if testing.Short() {
		t.Skip("about 20 s; runs without -short")
	}
	seed := uint64(time.Now().UnixNano())
	rng := rand.New(rand.NewPCG(seed, 1))
	t.Logf("seed %d", seed)
	r := newRig(t)
	spec, name, ids := r.writeSpec(manyJobs)
	node, url := r.singleNode(freePort(t))
	coord := r.start("serve", r.serveArgs("--nats", url, "--max-deliver", "10")...)
	coord.waitOutput("workers join with", 20*time.Second)
	obs := observe(t, url)
	r.submit(spec, url)
	victims := []*proc{coord, r.worker("worker-a", url, 1), r.worker("worker-b", url, 1), node}
	kills := map[string]int{}
	const want = 20
	for n := 0; n < want; n++ {
		time.Sleep(time.Duration(100+rng.IntN(300)) * time.Millisecond)
		if obs.jobs() >= len(ids) {
			t.Fatalf("the sweep finished after %d kills, before %d: make it longer", n, want)
		}
		v := victims[rng.IntN(len(victims))]
		v.restart()
		kills[v.name]++
	}
	t.Logf("kills: %v", kills)
	// What the last victims held comes back within a few ack waits (1 s),
	// not the minutes of a default: the time after the last kill that the
	// two one-slot workers did not spend running the jobs left (their
	// wall_s, which a loaded machine stretches as much as the sweep) is
	// the recovery, and stays under 10 s.
	last := time.Now()
	r.waitDone(name, url, len(ids), 60*time.Second)
	d := time.Since(last)
	work := obs.workSince(last)
	if stall := d - work/2; stall > 10*time.Second {
		t.Errorf("the sweep took %v after the last kill for %v of jobs on 2 slots: %v not spent running jobs, want under 10 s",
			d.Round(time.Second), work.Round(time.Second), stall.Round(time.Second))
	}
	t.Logf("after the last kill: %v, of which %v of jobs on 2 slots", d.Round(100*time.Millisecond), (work / 2).Round(100*time.Millisecond))
	coord.stop(20 * time.Second)
	f, _ := r.count(name, ids, coord, obs)
	wantClean(t, f)
}
