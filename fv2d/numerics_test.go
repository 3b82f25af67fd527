package fv2d

import (
	"math"
	"sort"
	"testing"

	"gonum.org/v1/gonum/integrate/quad"
)

// Gauss-Legendre nodes and weights agree with gonum's quad.Legendre (a
// general-purpose reference library), and the rule integrates x^(2n-1) and
// x^(2n-2) on [-1, 1] exactly.
func TestGaussLegendreAgainstGonum(t *testing.T) {
	for n := 1; n <= 12; n++ {
		x, w := gaussLegendre(n)
		gx, gw := make([]float64, n), make([]float64, n)
		quad.Legendre{}.FixedLocations(gx, gw, -1, 1)
		sort.Sort(byNode{gx, gw}) // gonum lists the nodes in decreasing order
		for i := range x {
			if math.Abs(x[i]-gx[i]) > 1e-14 || math.Abs(w[i]-gw[i]) > 1e-14 {
				t.Errorf("n=%d node %d: (%v, %v), gonum (%v, %v)", n, i, x[i], w[i], gx[i], gw[i])
			}
		}
		for _, deg := range []int{2*n - 1, 2*n - 2} {
			var got float64
			for i := range x {
				got += w[i] * math.Pow(x[i], float64(deg))
			}
			want := 0.0
			if deg%2 == 0 {
				want = 2 / float64(deg+1)
			}
			if math.Abs(got-want) > 1e-14 {
				t.Errorf("n=%d: int x^%d = %v, want %v", n, deg, got, want)
			}
		}
	}
}

type byNode struct{ x, w []float64 }

func (b byNode) Len() int           { return len(b.x) }
func (b byNode) Less(i, j int) bool { return b.x[i] < b.x[j] }
func (b byNode) Swap(i, j int) {
	b.x[i], b.x[j] = b.x[j], b.x[i]
	b.w[i], b.w[j] = b.w[j], b.w[i]
}

// The tensor cell rule averages a polynomial of degree 2n-1 in each
// variable exactly, compared with gonum's quad.Fixed applied twice.
func TestCellRuleAgainstGonum(t *testing.T) {
	f := func(x, y float64) float64 { return math.Exp(x) * math.Sin(3*y) }
	r := newCellRule(5, 0.3, 0.2)
	var got float64
	for k := range r.w {
		got += r.w[k] * f(1+r.ox[k], 2+r.oy[k])
	}
	want := quad.Fixed(func(y float64) float64 {
		return quad.Fixed(func(x float64) float64 { return f(x, y) }, 1, 1.3, 20, nil, 0)
	}, 2, 2.2, 20, nil, 0) / (0.3 * 0.2)
	if math.Abs(got-want) > 1e-13 {
		t.Errorf("cell average %v, gonum %v", got, want)
	}
}

// Neumaier (1974) summation recovers the small terms that a naive sum
// drops: 1 + 1e100 + 1 - 1e100 = 2 (the classic example, recalled from
// memory; the naive sum gives 0).
func TestNeumaierSum(t *testing.T) {
	var s neumaier
	for _, x := range []float64{1, 1e100, 1, -1e100} {
		s.add(x)
	}
	if s.sum() != 2 {
		t.Errorf("sum = %v, want 2", s.sum())
	}
}

// Each limiter, written as phi(r) = L(a, ra)/a, matches its classical
// flux-limiter form (Sweby 1984, SIAM J. Numer. Anal. 21; van Leer 1974,
// 1977; Roe 1985) and lies in Sweby's second-order TVD region between
// minmod and superbee.
func TestLimitersSwebyForms(t *testing.T) {
	phi := map[string]func(r float64) float64{
		"minmod":   func(r float64) float64 { return math.Max(0, math.Min(1, r)) },
		"vanleer":  func(r float64) float64 { return (r + math.Abs(r)) / (1 + math.Abs(r)) },
		"mc":       func(r float64) float64 { return math.Max(0, math.Min(math.Min(2*r, 0.5*(1+r)), 2)) },
		"superbee": func(r float64) float64 { return math.Max(0, math.Max(math.Min(2*r, 1), math.Min(r, 2))) },
	}
	for _, name := range limiterNames {
		lim, err := LimiterByName(name)
		if err != nil {
			t.Fatal(err)
		}
		for _, a := range []float64{1, -0.7, 3e-5} {
			for r := -3.0; r <= 5; r += 0.125 {
				got := lim(a, r*a) / a
				if math.Abs(got-phi[name](r)) > 1e-14 {
					t.Errorf("%s: phi(%g) = %v, classical form %v", name, r, got, phi[name](r))
				}
				lo, hi := phi["minmod"](r), phi["superbee"](r)
				if got < lo-1e-15 || got > hi+1e-15 {
					t.Errorf("%s: phi(%g) = %v outside the TVD region [%v, %v]", name, r, got, lo, hi)
				}
				if s := lim(r*a, a); math.Abs(s-lim(a, r*a)) > 1e-15*math.Abs(a)*(1+math.Abs(r)) {
					t.Errorf("%s: not symmetric at r=%g", name, r)
				}
			}
		}
	}
	if _, err := LimiterByName("koren"); err == nil {
		t.Error("unknown limiter accepted")
	}
}

// Ghost cells follow the boundary rules.
func TestGhostFill(t *testing.T) {
	p := &Problem{Eq: Euler, Gamma: 1.4, X1: 4, Y1: 3}
	s := newState(p, 4, 3, 2)
	for k := range s.U {
		for j := 0; j < 3; j++ {
			for i := 0; i < 4; i++ {
				s.U[k][s.Index(i, j)] = float64(100*k + 10*j + i + 1)
			}
		}
	}
	at := func(k, i, j int) float64 { return s.U[k][(j+2)*s.Stride()+i+2] }
	s.fillGhostsX(Periodic, Reflective, 0, s.NY)
	s.fillGhostsY(Transmissive, Reflective, 0, s.NX)
	for _, c := range []struct {
		k, i, j int
		want    float64
	}{
		{0, -1, 1, 14}, {0, -2, 1, 13}, // periodic west: cells 3, 2 of the row
		{0, 4, 1, 14}, {0, 5, 1, 13}, {1, 4, 1, -114}, {2, 4, 1, 214}, // reflective east: mirrored, mx negated
		{0, 2, -1, 3}, {0, 2, -2, 3}, {3, 2, -2, 303}, // transmissive south
		{0, 1, 3, 22}, {2, 1, 4, -212}, {1, 1, 3, 122}, // reflective north: my negated
	} {
		if got := at(c.k, c.i, c.j); got != c.want {
			t.Errorf("var %d ghost (%d,%d) = %v, want %v", c.k, c.i, c.j, got, c.want)
		}
	}
}
