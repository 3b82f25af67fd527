//go:build linux

package fv2d

import (
	"context"
	"runtime"
	"sync"
	"sync/atomic"
	"testing"
)

// cpu_s is the solving threads' own CPU time: it cannot exceed threads x
// the wall time of the run (a thread runs on one core at a time; a law of
// CPU accounting), and it hardly changes when other goroutines compete for
// the cores, while the wall time grows with them.
func TestRunCPUTimeIsItsOwn(t *testing.T) {
	if testing.Short() {
		t.Skip("times runs under load")
	}
	v := resolveOK(t, "vortex", map[string]string{"nx": "96", "ny": "96", "threads": "2", "t_end": "2"})
	run := func() *Result {
		t.Helper()
		r, err := Run(context.Background(), v)
		if err != nil {
			t.Fatal(err)
		}
		if !(r.CPUS > 0) || r.CPUS > 2*r.WallS*1.02+0.01 {
			t.Fatalf("cpu_s %.3f for wall_s %.3f on 2 threads: want 0 < cpu_s <= 2 wall_s", r.CPUS, r.WallS)
		}
		return r
	}
	alone := run()
	var stop atomic.Bool
	var wg sync.WaitGroup
	for range 3 * runtime.GOMAXPROCS(0) {
		wg.Add(1)
		go func() {
			defer wg.Done()
			x := 1.0
			for !stop.Load() {
				for i := 0; i < 1000; i++ {
					x = x*1.0000001 + 1e-9
				}
			}
			_ = x
		}()
	}
	loaded := run()
	stop.Store(true)
	wg.Wait()
	t.Logf("alone: wall %.3f s, cpu %.3f s; with %d spinning goroutines: wall %.3f s, cpu %.3f s",
		alone.WallS, alone.CPUS, 3*runtime.GOMAXPROCS(0), loaded.WallS, loaded.CPUS)
	if r := loaded.CPUS / alone.CPUS; r < 0.6 || r > 1.6 {
		t.Errorf("cpu_s under load %.3f s is %.2f times that alone (%.3f s); want the run's own work, about the same", loaded.CPUS, r, alone.CPUS)
	}
}
