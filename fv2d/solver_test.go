package fv2d

import (
	"context"
	"math"
	"testing"
)

// run resolves and runs case name with kv, failing the test on error.
func run(t testing.TB, name string, kv map[string]string) *Result {
	t.Helper()
	v, err := Resolve(name, kv)
	if err != nil {
		t.Fatal(err)
	}
	r, err := Run(context.Background(), v)
	if err != nil {
		t.Fatalf("%s: %v", v, err)
	}
	return r
}

func TestVortexSmoke(t *testing.T) {
	for _, n := range []string{"32", "64", "128"} {
		r := run(t, "vortex", map[string]string{"nx": n, "ny": n, "flux": "rusanov", "t_end": "1"})
		t.Logf("n=%s steps=%d L1(rho)=%.3e speed=%.3g", n, r.Steps, r.Errors["rho"].L1, r.CellUpdatesPerS)
		_ = math.Abs
	}
}
