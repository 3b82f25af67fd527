package fv2d

import (
	"fmt"
	"testing"
)

// benchSteps advances a solver of case name b.N steps at the CFL time step
// and reports cell updates per second of wall time (a cell update is one
// cell advanced one full step, all sweeps included) and per second of CPU
// time, which stays meaningful on a machine shared with other work.
func benchSteps(b *testing.B, name string, kv map[string]string) {
	s := newSolver(b, name, kv)
	if err := s.Step(s.MaxDt()); err != nil { // warm up: first dispatch, caches
		b.Fatal(err)
	}
	b.ReportAllocs()
	b.ResetTimer()
	cpu0 := cpuTime()
	for i := 0; i < b.N; i++ {
		if err := s.Step(s.MaxDt()); err != nil {
			b.Fatal(err)
		}
	}
	b.StopTimer()
	cpu := cpuTime() - cpu0
	cells := float64(s.nx * s.ny)
	b.ReportMetric(cells*float64(b.N)/b.Elapsed().Seconds(), "cell-updates/s")
	if cpu > 0 {
		// per CPU second of the whole process (all threads): with threads=T
		// on T free cores this is about cell-updates/s / T.
		b.ReportMetric(cells*float64(b.N)/cpu.Seconds(), "cell-updates/cpu-s")
	}
}

// BenchmarkEulerMUSCLHLLCStep is one Strang step of the isentropic vortex:
// MUSCL-Hancock in primitive variables, van Leer, HLLC.
func BenchmarkEulerMUSCLHLLCStep(b *testing.B) {
	for _, n := range []int{64, 128, 512} {
		for _, th := range []int{1, 2} {
			b.Run(fmt.Sprintf("n=%d/threads=%d", n, th), func(b *testing.B) {
				benchSteps(b, "vortex", map[string]string{
					"nx": fmt.Sprint(n), "ny": fmt.Sprint(n), "threads": fmt.Sprint(th),
					"scheme": "muscl", "limiter": "vanleer", "flux": "hllc", "split": "strang",
				})
			})
		}
	}
}

// BenchmarkBurgersStep is one Strang step of the 2-D Burgers diagonal wave:
// MUSCL-Hancock, van Leer, exact Godunov flux.
func BenchmarkBurgersStep(b *testing.B) {
	for _, n := range []int{128, 512} {
		for _, th := range []int{1, 2} {
			b.Run(fmt.Sprintf("n=%d/threads=%d", n, th), func(b *testing.B) {
				benchSteps(b, "burgers-diagonal", map[string]string{
					"nx": fmt.Sprint(n), "ny": fmt.Sprint(n), "threads": fmt.Sprint(th), "t_end": "0.01",
				})
			})
		}
	}
}

// BenchmarkEulerGodunovStep is the first-order scheme with HLLC, at one and
// two threads.
func BenchmarkEulerGodunovStep(b *testing.B) {
	for _, th := range []int{1, 2} {
		b.Run(fmt.Sprintf("n=512/threads=%d", th), func(b *testing.B) {
			benchSteps(b, "vortex", map[string]string{"nx": "512", "ny": "512", "scheme": "godunov", "threads": fmt.Sprint(th)})
		})
	}
}

// BenchmarkEulerSweep times one sweep of the Euler MUSCL-Hancock HLLC step
// (512x512 vortex, one thread): x at dt/2 as in a Strang step, the same with
// the wave speeds for the next step, and y at dt.
func BenchmarkEulerSweep(b *testing.B) {
	s := newSolver(b, "vortex", map[string]string{"nx": "512", "ny": "512", "threads": "1"})
	dt := s.MaxDt()
	for _, c := range []struct {
		name  string
		kind  jobKind
		dt    float64
		speed bool
	}{{"x", jobSweepX, 0.5 * dt, false}, {"x+speeds", jobSweepX, 0.5 * dt, true}, {"y", jobSweepY, dt, false}} {
		b.Run(c.name, func(b *testing.B) {
			b.ReportAllocs()
			for range b.N {
				if !s.sweep(c.kind, c.dt, c.speed) {
					b.Fatal("non-physical state")
				}
			}
		})
	}
}
