package fv2d

import (
	"math"
	"math/rand/v2"
	"testing"
)

// benchPairs returns n face states typical of a smooth flow: neighbouring
// cells differing by a few percent (what a solver sees at most faces).
func benchPairs(n int) [][2]prim {
	rng := rand.New(rand.NewPCG(21, 22))
	out := make([][2]prim, n)
	for i := range out {
		w := prim{1 + 0.5*rng.Float64(), rng.NormFloat64(), rng.NormFloat64(), 1 + 0.5*rng.Float64()}
		d := func(x float64) float64 { return x * (1 + 0.05*rng.NormFloat64()) }
		out[i] = [2]prim{w, {d(w.r), w.u + 0.05*rng.NormFloat64(), w.v + 0.05*rng.NormFloat64(), d(w.p)}}
	}
	return out
}

var fluxSink float64

func benchEuler(b *testing.B, f EulerFlux, pairs [][2]prim) {
	b.ReportAllocs()
	var s float64
	i := 0
	for b.Loop() {
		l, r := pairs[i][0], pairs[i][1]
		f0, f1, f2, f3 := f(1.4, l.r, l.u, l.v, l.p, r.r, r.u, r.v, r.p)
		s += f0 + f1 + f2 + f3
		i++
		if i == len(pairs) {
			i = 0
		}
	}
	fluxSink = s
}

// BenchmarkEulerFlux times one flux evaluation (ns/op = ns per face) on
// smooth-flow face states and on the five Toro tests (strong jumps).
func BenchmarkEulerFlux(b *testing.B) {
	smooth := benchPairs(1024)
	var jumps [][2]prim
	for _, tc := range toroTests {
		jumps = append(jumps, [2]prim{{tc.rl, tc.ul, 0.1, tc.pl}, {tc.rr, tc.ur, -0.1, tc.pr}})
	}
	for _, name := range EulerFluxNames {
		f, _ := EulerFluxByName(name)
		b.Run(name+"/smooth", func(b *testing.B) { benchEuler(b, f, smooth) })
		b.Run(name+"/toro", func(b *testing.B) { benchEuler(b, f, jumps) })
	}
}

// BenchmarkBurgersFlux times one Burgers flux evaluation.
func BenchmarkBurgersFlux(b *testing.B) {
	rng := rand.New(rand.NewPCG(23, 24))
	u := make([]float64, 1025)
	for i := range u {
		u[i] = math.Sin(0.05*float64(i)) + 0.02*rng.NormFloat64()
	}
	for _, name := range BurgersFluxNames {
		f, _ := BurgersFluxByName(name)
		b.Run(name, func(b *testing.B) {
			b.ReportAllocs()
			var s float64
			i := 0
			for b.Loop() {
				s += f(u[i], u[i+1])
				i++
				if i == len(u)-1 {
					i = 0
				}
			}
			fluxSink = s
		})
	}
}

// BenchmarkSolveRiemann times the exact solver alone on Toro's tests.
func BenchmarkSolveRiemann(b *testing.B) {
	b.ReportAllocs()
	var s float64
	i := 0
	for b.Loop() {
		tc := &toroTests[i]
		r, _ := SolveRiemann(1.4, tc.rl, tc.ul, tc.pl, tc.rr, tc.ur, tc.pr)
		s += r.PStar
		i++
		if i == len(toroTests) {
			i = 0
		}
	}
	fluxSink = s
}
