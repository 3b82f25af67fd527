package fv2d

import (
	"math"
	"math/rand/v2"
	"testing"
)

// The manufactured source terms are checked against the definition
// S = U_t + F(U)_x + G(U)_y evaluated by centred finite differences of the
// manufactured fields (Roache 1998; Roy et al. 2004): the conserved
// variables and fluxes are written here from the equations themselves,
// independently of mms.go. A centred difference of step d has error
// d^2/6 |f'''|; with wave numbers up to 4 pi, amplitudes of order 1 and
// products of up to three fields, |f'''| stays below about 5e3, so with
// d = 1e-4 the three differences err by at most about 3 * 5e3 * 1e-8 / 6
// < 1e-5, plus round-off of order 1e-16 / d = 1e-12. A missing or wrong term
// of the source is of order 0.1 to 10.

const mmsStep = 1e-4

// mmsTol is the tolerance of the difference check with step mmsStep.
var mmsTol = 3 * 5e3 * mmsStep * mmsStep / 6

// burgersConsFlux writes U = u and the fluxes f(u) = g(u) = u^2/2 at the manufactured state.
func burgersConsFlux(x, y, t float64, c, f, g []float64) {
	var w [1]float64
	mmsBurgersExact(x, y, t, w[:])
	u := w[0]
	c[0], f[0], g[0] = u, 0.5*u*u, 0.5*u*u
}

// eulerConsFlux writes U, F(U), G(U) of the 2-D Euler equations of an ideal
// gas at the manufactured state.
func eulerConsFlux(gamma float64) func(x, y, t float64, c, f, g []float64) {
	return func(x, y, t float64, c, f, g []float64) {
		var w [4]float64
		mmsEulerExact(x, y, t, w[:])
		r, u, v, p := w[0], w[1], w[2], w[3]
		E := p/(gamma-1) + 0.5*r*(u*u+v*v)
		c[0], c[1], c[2], c[3] = r, r*u, r*v, E
		f[0], f[1], f[2], f[3] = r*u, r*u*u+p, r*u*v, u*(E+p)
		g[0], g[1], g[2], g[3] = r*v, r*u*v, r*v*v+p, v*(E+p)
	}
}

// fdResidual is U_t + F_x + G_y at (x, y, t) by centred differences of step d.
func fdResidual(nv int, cf func(x, y, t float64, c, f, g []float64), x, y, t, d float64) []float64 {
	c1, f1, g1 := make([]float64, nv), make([]float64, nv), make([]float64, nv)
	c2, f2, g2 := make([]float64, nv), make([]float64, nv), make([]float64, nv)
	res := make([]float64, nv)
	cf(x, y, t+d, c1, f1, g1)
	cf(x, y, t-d, c2, f2, g2)
	for k := range res {
		res[k] = (c1[k] - c2[k]) / (2 * d)
	}
	cf(x+d, y, t, c1, f1, g1)
	cf(x-d, y, t, c2, f2, g2)
	for k := range res {
		res[k] += (f1[k] - f2[k]) / (2 * d)
	}
	cf(x, y+d, t, c1, f1, g1)
	cf(x, y-d, t, c2, f2, g2)
	for k := range res {
		res[k] += (g1[k] - g2[k]) / (2 * d)
	}
	return res
}

func TestMMSSourcesAgainstDifferences(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	cases := []struct {
		name   string
		nv     int
		cf     func(x, y, t float64, c, f, g []float64)
		source func(x, y, t float64, s []float64)
	}{
		{"burgers", 1, burgersConsFlux, mmsBurgersSource},
		{"euler gamma=1.4", 4, eulerConsFlux(1.4), mmsEulerSource(1.4)},
		{"euler gamma=5/3", 4, eulerConsFlux(5.0 / 3), mmsEulerSource(5.0 / 3)},
	}
	for _, c := range cases {
		s := make([]float64, c.nv)
		var worst, smallest float64 = 0, math.Inf(1)
		for n := 0; n < 200; n++ {
			x, y, tt := rng.Float64(), rng.Float64(), 2*rng.Float64()
			c.source(x, y, tt, s)
			fd := fdResidual(c.nv, c.cf, x, y, tt, mmsStep)
			for k := range s {
				e := math.Abs(s[k] - fd[k])
				worst = math.Max(worst, e)
				smallest = math.Min(smallest, math.Abs(s[k]))
				if e > mmsTol {
					t.Fatalf("%s: S[%d](%g,%g,%g) = %.12g, differences give %.12g (|diff| %.2g > %.2g)",
						c.name, k, x, y, tt, s[k], fd[k], e, mmsTol)
				}
			}
		}
		// The check has teeth: with the larger step the difference error
		// grows like d^2, so it must be visible but still small.
		c.source(0.3, 0.7, 0.4, s)
		coarse := fdResidual(c.nv, c.cf, 0.3, 0.7, 0.4, 100*mmsStep)
		fine := fdResidual(c.nv, c.cf, 0.3, 0.7, 0.4, 10*mmsStep)
		var ec, ef float64
		for k := range s {
			ec = math.Max(ec, math.Abs(s[k]-coarse[k]))
			ef = math.Max(ef, math.Abs(s[k]-fine[k]))
		}
		if ratio := ec / ef; ratio < 80 || ratio > 120 {
			t.Errorf("%s: difference error ratio %.3g for a 10x step, want about 100 (second order)", c.name, ratio)
		}
		t.Logf("%s: max |S - FD| = %.2g over 200 random points (tol %.2g), d^2 ratio %.4g", c.name, worst, mmsTol, ec/ef)
	}
}

// TestMMSNoTermVanishes: every source component is nonzero somewhere and
// changes sign (the fields exercise every term of the equations).
func TestMMSNoTermVanishes(t *testing.T) {
	src := mmsEulerSource(1.4)
	s := make([]float64, 4)
	min, max := [4]float64{}, [4]float64{}
	for i := 0; i < 50; i++ {
		for j := 0; j < 50; j++ {
			src((float64(i)+0.5)/50, (float64(j)+0.5)/50, 0.3, s)
			for k := range s {
				min[k], max[k] = math.Min(min[k], s[k]), math.Max(max[k], s[k])
			}
		}
	}
	for k := range s {
		if !(min[k] < -0.1 && max[k] > 0.1) {
			t.Errorf("Euler source %d spans only [%g, %g]", k, min[k], max[k])
		}
	}
}

func TestMMSCasesResolve(t *testing.T) {
	for _, name := range []string{"burgers-mms", "euler-mms"} {
		v, err := Resolve(name, map[string]string{"nx": "8", "ny": "8"})
		if err != nil {
			t.Fatal(err)
		}
		c, _ := LookupCase(name)
		p, err := c.Setup(v)
		if err != nil {
			t.Fatal(err)
		}
		if p.Exact == nil || p.Source == nil || p.BC != periodicBox {
			t.Errorf("%s: exact %v source %v bc %v", name, p.Exact != nil, p.Source != nil, p.BC)
		}
		// Periodic on the unit square: the fields repeat with period 1.
		n := len(p.Eq.PrimVars())
		a, b := make([]float64, n), make([]float64, n)
		p.Exact(0.1, 0.2, 0.3, a)
		p.Exact(1.1, -0.8, 0.3, b)
		for k := range a {
			if math.Abs(a[k]-b[k]) > 1e-12 {
				t.Errorf("%s: not periodic in variable %d: %g vs %g", name, k, a[k], b[k])
			}
		}
	}
}
