package fv2d

import (
	"sync"
	"testing"
)

// An Estimator of its own estimates as Estimate does and samples a problem
// once for all the runs that share it (they differ only in grid and scheme),
// from any number of goroutines.
func TestEstimatorCache(t *testing.T) {
	var e Estimator // the zero value is ready
	runs := []map[string]string{
		{"nx": "32", "ny": "32"}, {"nx": "64", "ny": "64", "scheme": "godunov"},
		{"nx": "128", "ny": "128", "flux": "roe", "cfl": "0.4"}, {"nx": "64", "ny": "64", "threads": "4"},
	}
	var wg sync.WaitGroup
	for _, kv := range runs {
		v := resolve(t, "vortex", kv)
		want := Estimate(v)
		for range 4 {
			wg.Go(func() {
				if got := e.Estimate(v); got != want {
					t.Errorf("%v: Estimator %+v, Estimate %+v", kv, got, want)
				}
			})
		}
	}
	wg.Wait()
	// 32^2 samples 32 x 32 points, the rest 64 x 64: two problems.
	if n := len(e.cache); n != 2 {
		t.Errorf("%d sampled problems cached, want 2", n)
	}
}
