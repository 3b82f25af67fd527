package fv2d

import (
	"math"
	"testing"
)

// BenchmarkExpLog times exponential, logarithm and power beside Go's
// math.Exp, math.Log and math.Pow on the arguments the cases and the exact
// Riemann solver give them.
func BenchmarkExpLog(b *testing.B) {
	xs := make([]float64, 1024)
	for i := range xs {
		xs[i] = 0.01 + float64(i)/1024
	}
	var sink float64
	for _, f := range []struct {
		name string
		f    func(float64) float64
	}{
		{"exponential", func(x float64) float64 { return exponential(-24 * x) }},
		{"math.Exp", func(x float64) float64 { return math.Exp(-24 * x) }},
		{"logarithm", logarithm},
		{"math.Log", math.Log},
		{"power", func(x float64) float64 { return power(x, 2.5) }},
		{"math.Pow", func(x float64) float64 { return math.Pow(x, 2.5) }},
	} {
		b.Run(f.name, func(b *testing.B) {
			for b.Loop() {
				for _, x := range xs {
					sink += f.f(x)
				}
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*len(xs)), "ns/call")
		})
	}
	_ = sink
}
