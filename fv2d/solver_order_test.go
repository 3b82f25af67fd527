package fv2d

import (
	"math"
	"testing"
)

// Estimate predicts the step count from the initial wave speeds: exact for
// a uniform-speed flow, close for the vortex, and cheap at any size.
func TestEstimate(t *testing.T) {
	for _, tc := range []struct {
		name string
		kv   map[string]string
		tol  float64
	}{
		{"density-wave", map[string]string{"nx": "40", "ny": "40"}, 0.02},
		{"vortex", map[string]string{"nx": "64", "ny": "64"}, 0.05},
		{"shocktube", map[string]string{"test": "1", "nx": "100", "ny": "1"}, 0.1},
	} {
		v := resolve(t, tc.name, tc.kv)
		c := Estimate(v)
		r := run(t, tc.name, tc.kv)
		rel := math.Abs(c.Steps-float64(r.Steps)) / float64(r.Steps)
		t.Logf("%s: estimated %g steps, ran %d; %d bytes", tc.name, c.Steps, r.Steps, c.Bytes)
		if rel > tc.tol || c.Cells != r.NX*r.NY || c.Bytes <= 0 {
			t.Errorf("%s: estimate %+v vs %d steps", tc.name, c, r.Steps)
		}
	}
	v := resolve(t, "vortex", map[string]string{"nx": "4096", "ny": "4096"})
	c := Estimate(v)
	if want := int64(4 * 4100 * 4100 * 8); c.Bytes < want {
		t.Errorf("4096^2 estimate %d bytes, state alone is %d", c.Bytes, want)
	}
}
