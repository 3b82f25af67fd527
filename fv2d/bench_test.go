package fv2d

import (
	"fmt"
	"testing"
)

// benchSteps advances a solver of case name b.N steps at the CFL time step
// and reports cell updates per second (a cell update is one cell advanced
// one full step, all sweeps included).
func benchSteps(b *testing.B, name string, kv map[string]string) {
	v, err := Resolve(name, kv)
	if err != nil {
		b.Fatal(err)
	}
	s, err := NewSolver(v)
	if err != nil {
		b.Fatal(err)
	}
	defer s.Close()
	if err := s.Step(s.MaxDt()); err != nil { // warm up: first dispatch, caches
		b.Fatal(err)
	}
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if err := s.Step(s.MaxDt()); err != nil {
			b.Fatal(err)
		}
	}
	b.StopTimer()
	cells := float64(s.nx * s.ny)
	b.ReportMetric(cells*float64(b.N)/b.Elapsed().Seconds(), "cell-updates/s")
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
