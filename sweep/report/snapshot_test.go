package report

import (
	"math"
	"strings"
	"testing"

	"fvsweep/fv2d"
	"fvsweep/sweep/field"
)

// Primitive variables from the conserved ones of an ideal gas (law):
// u = mx/rho, v = my/rho, p = (gamma-1) (E - (mx^2+my^2)/(2 rho)).
// State rho = 2, u = 0.5, v = -1, p = 3, gamma = 1.4: mx = 1, my = -2,
// E = 3/0.4 + 0.5*2*(0.25+1) = 8.75.
func TestSnapshotFieldEuler(t *testing.T) {
	h := field.Header{Vars: fv2d.Euler.Vars(), NX: 2, NY: 1, X0: 0, Y0: 0, DX: 0.5, DY: 1, T: 0.25}
	data := [][]float32{{2, 2}, {1, 1}, {-2, -2}, {8.75, 8.75}}
	prob := &fv2d.Problem{Eq: fv2d.Euler, Gamma: 1.4,
		Exact: func(x, y, t float64, w []float64) { w[0], w[1], w[2], w[3] = 2, 0.5, -1, 3+t }}
	for _, tc := range []struct {
		v        string
		want, ex float64
	}{
		{"rho", 2, 2}, {"mx", 1, 1}, {"my", -2, -2}, {"E", 8.75, 3.25/0.4 + 1.25},
		{"u", 0.5, 0.5}, {"v", -1, -1}, {"p", 3, 3.25},
	} {
		f, exact, err := SnapshotField(h, data, tc.v, prob)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(f.V[1]-tc.want) > 1e-6 || f.X1 != 1 || f.Y1 != 1 || f.Name != tc.v {
			t.Errorf("%s: value %g (want %g), extent x1 %g y1 %g", tc.v, f.V[1], tc.want, f.X1, f.Y1)
		}
		if got := exact(0.3, 0.5); math.Abs(got-tc.ex) > 1e-12 {
			t.Errorf("%s: exact %g, want %g (at t = 0.25)", tc.v, got, tc.ex)
		}
	}
	if _, _, err := SnapshotField(h, data, "T", prob); err == nil || !strings.Contains(err.Error(), "rho, mx, my, E, u, v, p") {
		t.Errorf("unknown var: %v", err)
	}
	if _, exact, err := SnapshotField(h, data, "rho", nil); err != nil || exact != nil {
		t.Errorf("no problem: exact %v, err %v", exact != nil, err)
	}
}
