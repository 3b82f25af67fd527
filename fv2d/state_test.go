package fv2d

import (
	"math"
	"testing"
)

// SetPrimitive stores rho, rho u, rho v and the ideal-gas total energy
// E = p/(gamma-1) + rho (u^2+v^2)/2 (common practice; Toro 2009 chapter 1,
// recalled from memory) in the one cell it names, and Primitive gives the
// state back to round-off.
func TestStateSetPrimitive(t *testing.T) {
	p := &Problem{Eq: Euler, Gamma: 1.4, X1: 1, Y1: 1}
	for _, tc := range []struct {
		w    [4]float64
		want [4]float64 // rho, mx, my, E by hand
	}{
		// Toro's test 1, left state (docs/references.md §1): at rest,
		// E = 1/0.4 = 2.5.
		{[4]float64{1, 0, 0, 1}, [4]float64{1, 0, 0, 2.5}},
		// Moving: E = 1/0.4 + 0.5*1.4*(9+0.25) = 2.5 + 6.475.
		{[4]float64{1.4, 3, -0.5, 1}, [4]float64{1.4, 4.2, -0.7, 8.975}},
		// Toro's test 3, left state: E = 1000/0.4.
		{[4]float64{1, 0, 0, 1000}, [4]float64{1, 0, 0, 2500}},
	} {
		s := newState(p, 3, 2, 2)
		s.SetPrimitive(1, 1, tc.w[:])
		for k := range 4 {
			if got := s.At(k, 1, 1); math.Abs(got-tc.want[k]) > 1e-14*math.Max(1, math.Abs(tc.want[k])) {
				t.Errorf("w %v: %s = %.17g, want %.17g", tc.w, Euler.Vars()[k], got, tc.want[k])
			}
		}
		for k := range s.U {
			for idx, x := range s.U[k] {
				if x != 0 && idx != s.Index(1, 1) {
					t.Errorf("w %v: %s at index %d is %g, want only cell (1,1) written", tc.w, Euler.Vars()[k], idx, x)
				}
			}
		}
		var back [4]float64
		s.Primitive(1, 1, back[:])
		for k := range 4 {
			if math.Abs(back[k]-tc.w[k]) > 1e-14*math.Max(1, math.Abs(tc.w[k])) {
				t.Errorf("w %v: Primitive gives %v back", tc.w, back)
				break
			}
		}
	}

	// Burgers: the one variable is u.
	s := newState(&Problem{Eq: Burgers, X1: 1, Y1: 1}, 2, 2, 1)
	s.SetPrimitive(0, 1, []float64{-0.75})
	if got := s.At(0, 0, 1); got != -0.75 {
		t.Errorf("Burgers: u = %g, want -0.75", got)
	}
}
