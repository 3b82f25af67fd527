package fv2d

import (
	"math"
	"testing"
)

// trigArgs are arguments for the sine and cosine tests: a sweep of
// [-200, 200] in irregular steps, the multiples of pi/4 and their
// neighbours, where the reduction changes octant, and special values.
func trigArgs() []float64 {
	xs := []float64{0, math.Copysign(0, -1), 1e-300, -1e-300, 1e-8, math.Pi, -math.Pi, 1e6, -3e8}
	for x := -200.0; x <= 200; x += 0.0123456789 {
		xs = append(xs, x)
	}
	for k := -64; k <= 64; k++ {
		x := float64(k) * math.Pi / 4
		xs = append(xs, x, math.Nextafter(x, math.Inf(1)), math.Nextafter(x, math.Inf(-1)))
	}
	return xs
}

// TestTrigAgainstStd holds sine, cosine and sincos within 2 units in the
// last place of 1 of Go's math.Sin and math.Cos (which on targets that fuse
// multiply-adds differ from them in the last bits), and checks the special
// cases documented for math.Sin and math.Cos.
func TestTrigAgainstStd(t *testing.T) {
	tol := 2 * math.Nextafter(1, 2) / (1 << 52) // 2 ulp of 1
	for _, x := range trigArgs() {
		s, c := sincos(x)
		if d := math.Abs(s - math.Sin(x)); d > tol || s != sine(x) {
			t.Errorf("sin(%v) = %v, math.Sin %v", x, s, math.Sin(x))
		}
		if d := math.Abs(c - math.Cos(x)); d > tol || c != cosine(x) {
			t.Errorf("cos(%v) = %v, math.Cos %v", x, c, math.Cos(x))
		}
	}
	if s := sine(math.Copysign(0, -1)); s != 0 || !math.Signbit(s) {
		t.Errorf("sin(-0) = %v, want -0", s)
	}
	for _, x := range []float64{math.NaN(), math.Inf(1), math.Inf(-1)} {
		if s, c := sincos(x); !math.IsNaN(s) || !math.IsNaN(c) {
			t.Errorf("sincos(%v) = %v, %v, want NaN, NaN", x, s, c)
		}
	}
}
