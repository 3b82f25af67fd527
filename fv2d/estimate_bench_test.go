package fv2d

import "testing"

// BenchmarkEstimate is the cost of estimating one run of a sweep whose runs
// share a problem (the common case: only grid and scheme settings vary).
func BenchmarkEstimate(b *testing.B) {
	v, err := Resolve("vortex", map[string]string{"nx": "256", "ny": "256"})
	if err != nil {
		b.Fatal(err)
	}
	b.ReportAllocs()
	for b.Loop() {
		Estimate(v)
	}
}
