package fv2d

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// toroTest is one of the five Riemann problems of Toro 2009 ch. 4 with its
// exact star state (docs/references.md §1: recalled from Toro 2009 ch. 4 and
// re-computed independently). abs is half a unit of the last decimal shown
// where the table shows fewer than 5 significant digits (test 2 is given to
// 5 decimals: p* = 0.00189), else 0.
type toroTest struct {
	n                      int
	rl, ul, pl, rr, ur, pr float64
	pstar, ustar, rsl, rsr float64
	left, right            WaveKind
	abs                    float64
}

var toroTests = []toroTest{
	{1, 1.0, 0.0, 1.0, 0.125, 0.0, 0.1, 0.30313, 0.92745, 0.42632, 0.26557, Rarefaction, Shock, 0},
	{2, 1.0, -2.0, 0.4, 1.0, 2.0, 0.4, 0.00189, 0.00000, 0.02185, 0.02185, Rarefaction, Rarefaction, 5e-6},
	{3, 1.0, 0.0, 1000.0, 1.0, 0.0, 0.01, 460.894, 19.5975, 0.57506, 5.99924, Rarefaction, Shock, 0},
	{4, 1.0, 0.0, 0.01, 1.0, 0.0, 100.0, 46.0950, -6.19633, 5.99242, 0.57511, Shock, Rarefaction, 0},
	{5, 5.99924, 19.5975, 460.894, 5.99242, -6.19633, 46.0950, 1691.64, 8.68975, 14.2823, 31.0426, Shock, Shock, 0},
}

// relClose reports |got - want| <= tol |want|, or |got| <= tol when want is 0.
func relClose(got, want, tol float64) bool {
	if want == 0 {
		return math.Abs(got) <= tol
	}
	return math.Abs(got-want) <= tol*math.Abs(want)
}

// tableClose reports whether got matches a table value want to relative
// 1e-4 or to abs, whichever is larger.
func tableClose(got, want, abs float64) bool {
	return math.Abs(got-want) <= math.Max(1e-4*math.Abs(want), abs)
}

// Star states and wave structure of Toro's tests 1-5 (docs/references.md §1, recalled
// from Toro 2009 ch. 4; relative tolerance 1e-4 as the table has 5-6 digits).
func TestRiemannToroStarStates(t *testing.T) {
	for _, tc := range toroTests {
		s, err := SolveRiemann(1.4, tc.rl, tc.ul, tc.pl, tc.rr, tc.ur, tc.pr)
		if err != nil {
			t.Fatalf("test %d: %v", tc.n, err)
		}
		ps, us, rsl, rsr := s.Star()
		// Test 2 has u* = 0 by symmetry (law): checked to round-off.
		uabs := math.Max(tc.abs, 1e-14)
		if !tableClose(ps, tc.pstar, tc.abs) || !tableClose(us, tc.ustar, uabs) ||
			!tableClose(rsl, tc.rsl, tc.abs) || !tableClose(rsr, tc.rsr, tc.abs) {
			t.Errorf("test %d: p*=%.6g u*=%.6g rho*L=%.6g rho*R=%.6g, want %g %g %g %g",
				tc.n, ps, us, rsl, rsr, tc.pstar, tc.ustar, tc.rsl, tc.rsr)
		}
		if l, r := s.Waves(); l != tc.left || r != tc.right {
			t.Errorf("test %d: waves %v/%v, want %v/%v", tc.n, l, r, tc.left, tc.right)
		}
		if s.Iterations > 10 {
			t.Errorf("test %d: %d Newton iterations, expected a few (Toro 2009 §4.3.2)", tc.n, s.Iterations)
		}
		// The waves are ordered: left wave, contact, right wave (law).
		if !(s.LeftHead <= s.LeftTail && s.LeftTail <= s.UStar && s.UStar <= s.RightTail && s.RightTail <= s.RightHead) {
			t.Errorf("test %d: wave speeds out of order: %g %g %g %g %g", tc.n,
				s.LeftHead, s.LeftTail, s.UStar, s.RightTail, s.RightHead)
		}
	}
}

// p* is the root of f(p) = f_L(p) + f_R(p) + u_R - u_L to round-off: it
// agrees to 1e-12 with the root found by plain bisection, and the
// velocities from both sides agree (Toro 2009 eqs. 4.5, 4.9).
func TestRiemannPressureFunctionRoot(t *testing.T) {
	for _, tc := range toroTests {
		s, _ := SolveRiemann(1.4, tc.rl, tc.ul, tc.pl, tc.rr, tc.ur, tc.pr)
		f := func(p float64) float64 {
			fl, _, _ := pressureFn(1.4, p, tc.rl, tc.pl, s.AL)
			fr, _, _ := pressureFn(1.4, p, tc.rr, tc.pr, s.AR)
			return fl + fr + tc.ur - tc.ul
		}
		lo, hi := 0.0, 1e4
		for range 200 {
			if mid := 0.5 * (lo + hi); f(mid) < 0 {
				lo = mid
			} else {
				hi = mid
			}
		}
		if !relClose(s.PStar, 0.5*(lo+hi), 1e-12) {
			t.Errorf("test %d: p* = %.17g, bisection %.17g", tc.n, s.PStar, 0.5*(lo+hi))
		}
		fl, _, _ := pressureFn(1.4, s.PStar, tc.rl, tc.pl, s.AL)
		fr, _, _ := pressureFn(1.4, s.PStar, tc.rr, tc.pr, s.AR)
		uL, uR := tc.ul-fl, tc.ur+fr
		scale := math.Abs(tc.ul) + math.Abs(tc.ur) + s.AL + s.AR
		if math.Abs(uL-uR) > 1e-12*scale {
			t.Errorf("test %d: u* from the left %.17g, from the right %.17g", tc.n, uL, uR)
		}
	}
}

// conserved returns (rho, m, E) of a 1-D primitive state.
func conserved1D(g, r, u, p float64) [3]float64 {
	return [3]float64{r, r * u, p/(g-1) + 0.5*r*u*u}
}

// flux1D returns the 1-D Euler flux of a primitive state.
func flux1D(g, r, u, p float64) [3]float64 {
	return [3]float64{r * u, r*u*u + p, u * (p/(g-1) + 0.5*r*u*u + p)}
}

// rhResidual returns max_k |F_k(b) - F_k(a) - s (U_k(b) - U_k(a))| relative
// to the size of the fluxes (Rankine-Hugoniot jump condition, law).
func rhResidual(g float64, a, b [3]float64, s float64) float64 {
	ua, ub := conserved1D(g, a[0], a[1], a[2]), conserved1D(g, b[0], b[1], b[2])
	fa, fb := flux1D(g, a[0], a[1], a[2]), flux1D(g, b[0], b[1], b[2])
	res, scale := 0.0, 0.0
	for k := range 3 {
		res = math.Max(res, math.Abs(fb[k]-fa[k]-s*(ub[k]-ua[k])))
		scale = math.Max(scale, math.Abs(fa[k])+math.Abs(fb[k])+math.Abs(s)*(math.Abs(ua[k])+math.Abs(ub[k])))
	}
	return res / scale
}

// Every shock of the exact solution satisfies the Rankine-Hugoniot jump
// conditions at its computed speed (law, docs/references.md §2); every fan is a
// simple wave: the Riemann invariant u + 2a/(gamma-1) (left fan) or
// u - 2a/(gamma-1) (right fan) is constant across it (Toro 2009 §4.4.3,
// law), and the sampled solution is continuous at the fan edges.
func TestRiemannJumpsAndFans(t *testing.T) {
	const g = 1.4
	for _, tc := range toroTests {
		s, _ := SolveRiemann(g, tc.rl, tc.ul, tc.pl, tc.rr, tc.ur, tc.pr)
		wl := [3]float64{tc.rl, tc.ul, tc.pl}
		wr := [3]float64{tc.rr, tc.ur, tc.pr}
		wsl := [3]float64{s.RhoStarL, s.UStar, s.PStar}
		wsr := [3]float64{s.RhoStarR, s.UStar, s.PStar}
		if s.Left == Shock {
			if r := rhResidual(g, wl, wsl, s.LeftHead); r > 1e-12 {
				t.Errorf("test %d: left shock RH residual %g", tc.n, r)
			}
		} else {
			checkFan(t, tc.n, "left", s, s.LeftHead, s.LeftTail, wl, wsl, +1)
		}
		if s.Right == Shock {
			if r := rhResidual(g, wsr, wr, s.RightHead); r > 1e-12 {
				t.Errorf("test %d: right shock RH residual %g", tc.n, r)
			}
		} else {
			checkFan(t, tc.n, "right", s, s.RightTail, s.RightHead, wsr, wr, -1)
		}
		// The contact carries no pressure or velocity jump (law): both star
		// states sampled just beside it have p*, u*.
		for _, xi := range []float64{s.UStar - 1e-9, s.UStar + 1e-9} {
			_, u, p := s.Sample(xi)
			if !relClose(p, s.PStar, 1e-12) || math.Abs(u-s.UStar) > 1e-12*(1+math.Abs(s.UStar)) {
				t.Errorf("test %d: sample at the contact (%g, %g), want (%g, %g)", tc.n, u, p, s.UStar, s.PStar)
			}
		}
	}
}

// checkFan checks a rarefaction between speeds lo and hi with outer states
// a (left of it) and b (right of it); sign +1 for the left fan.
func checkFan(t *testing.T, n int, side string, s RiemannSolution, lo, hi float64, a, b [3]float64, sign float64) {
	t.Helper()
	g := s.Gamma
	inv := func(r, u, p float64) float64 { return u + sign*2*math.Sqrt(g*p/r)/(g-1) }
	want := inv(a[0], a[1], a[2])
	if got := inv(b[0], b[1], b[2]); !relClose(got, want, 1e-12) {
		t.Errorf("test %d: %s fan: Riemann invariant %g across the fan, %g before", n, side, got, want)
	}
	for k := 0; k <= 8; k++ {
		xi := lo + (hi-lo)*float64(k)/8
		r, u, p := s.Sample(xi)
		if got := inv(r, u, p); !relClose(got, want, 1e-12) {
			t.Errorf("test %d: %s fan at xi=%g: invariant %g, want %g", n, side, xi, got, want)
		}
		// Inside the fan the wave speed u -+ a equals xi (law, Toro 2009 §4.4.3).
		if k > 0 && k < 8 {
			if c := u - sign*math.Sqrt(g*p/r); math.Abs(c-xi) > 1e-12*(1+math.Abs(xi)) {
				t.Errorf("test %d: %s fan at xi=%g: characteristic speed %g", n, side, xi, c)
			}
		}
	}
	// Continuity at the fan edges.
	for _, e := range []struct {
		xi float64
		w  [3]float64
	}{{lo, a}, {hi, b}} {
		r, u, p := s.Sample(e.xi)
		if !relClose(r, e.w[0], 1e-10) || math.Abs(u-e.w[1]) > 1e-10*(1+math.Abs(u)) || !relClose(p, e.w[2], 1e-10) {
			t.Errorf("test %d: %s fan edge xi=%g: (%g,%g,%g), want %v", n, side, e.xi, r, u, p, e.w)
		}
	}
}

// Far from the waves the sampled solution is the initial data (law).
func TestRiemannSampleFarField(t *testing.T) {
	for _, tc := range toroTests {
		s, _ := SolveRiemann(1.4, tc.rl, tc.ul, tc.pl, tc.rr, tc.ur, tc.pr)
		if r, u, p := s.Sample(-1e6); r != tc.rl || u != tc.ul || p != tc.pl {
			t.Errorf("test %d: far left (%g,%g,%g)", tc.n, r, u, p)
		}
		if r, u, p := s.Sample(1e6); r != tc.rr || u != tc.ur || p != tc.pr {
			t.Errorf("test %d: far right (%g,%g,%g)", tc.n, r, u, p)
		}
	}
}

// Mirroring the problem (x -> -x: u -> -u, L <-> R) mirrors the solution (law).
func TestRiemannMirror(t *testing.T) {
	for _, tc := range toroTests {
		a, _ := SolveRiemann(1.4, tc.rl, tc.ul, tc.pl, tc.rr, tc.ur, tc.pr)
		b, _ := SolveRiemann(1.4, tc.rr, -tc.ur, tc.pr, tc.rl, -tc.ul, tc.pl)
		if !relClose(b.PStar, a.PStar, 1e-13) || math.Abs(b.UStar+a.UStar) > 1e-13*(1+math.Abs(a.UStar)) ||
			!relClose(b.RhoStarL, a.RhoStarR, 1e-13) || !relClose(b.RhoStarR, a.RhoStarL, 1e-13) {
			t.Errorf("test %d: mirrored star state (%g,%g,%g,%g) vs (%g,%g,%g,%g)", tc.n,
				b.PStar, b.UStar, b.RhoStarL, b.RhoStarR, a.PStar, a.UStar, a.RhoStarL, a.RhoStarR)
		}
	}
}

// SolveRiemann rejects bad input and vacuum generation with an error naming
// the cause (pressure positivity condition, Toro 2009 eq. 4.40).
func TestRiemannErrors(t *testing.T) {
	tests := []struct {
		name                      string
		g, rl, ul, pl, rr, ur, pr float64
		want                      string
	}{
		{"vacuum", 1.4, 1, -10, 1, 1, 10, 1, "vacuum"},
		{"vacuum just past the limit", 1.4, 1, -5.000001 * math.Sqrt(1.4), 1, 1, 5 * math.Sqrt(1.4), 1, "vacuum"},
		{"zero density", 1.4, 0, 0, 1, 1, 0, 1, "rho_l"},
		{"negative pressure", 1.4, 1, 0, 1, 1, 0, -1, "p_r"},
		{"NaN pressure", 1.4, 1, 0, math.NaN(), 1, 0, 1, "p_l"},
		{"infinite velocity", 1.4, 1, math.Inf(1), 1, 1, 0, 1, "velocities"},
		{"gamma 1", 1, 1, 0, 1, 1, 0, 1, "gamma"},
	}
	for _, tc := range tests {
		_, err := SolveRiemann(tc.g, tc.rl, tc.ul, tc.pl, tc.rr, tc.ur, tc.pr)
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: err = %v, want one naming %q", tc.name, err, tc.want)
		}
	}
}

// Random states without vacuum, spanning 8 decades of density and pressure
// ratio and strong collisions: the solver converges (f(p*) = 0 to round-off),
// gives finite positive star values and samples, no NaN in the exact flux,
// and never needs many iterations.
func TestRiemannRandomRobustness(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	n := 20000
	if testing.Short() {
		n = 2000
	}
	maxIter := 0
	for i := 0; i < n; i++ {
		g := 1.1 + 0.6*rng.Float64()
		rl, rr := math.Pow(10, 8*rng.Float64()-4), math.Pow(10, 8*rng.Float64()-4)
		pl, pr := math.Pow(10, 8*rng.Float64()-4), math.Pow(10, 8*rng.Float64()-4)
		al, ar := math.Sqrt(g*pl/rl), math.Sqrt(g*pr/rr)
		crit := 2 * (al + ar) / (g - 1)
		// u_R - u_L from strong compression up to 99.9% of the vacuum limit.
		du := crit * (0.999 - 20*rng.Float64())
		ul := (rng.Float64() - 0.5) * crit
		ur := ul + du
		s, err := SolveRiemann(g, rl, ul, pl, rr, ur, pr)
		if err != nil {
			t.Fatalf("state %d: %v", i, err)
		}
		for _, v := range []float64{s.PStar, s.RhoStarL, s.RhoStarR} {
			if !(v > 0) || math.IsInf(v, 0) {
				t.Fatalf("state %d (g=%g, %g %g %g | %g %g %g): star %+v", i, g, rl, ul, pl, rr, ur, pr, s)
			}
		}
		fl, _, _ := pressureFn(g, s.PStar, rl, pl, al)
		fr, _, _ := pressureFn(g, s.PStar, rr, pr, ar)
		if r := math.Abs(fl+fr+du) / (math.Abs(fl) + math.Abs(fr) + math.Abs(du)); r > 1e-11 {
			t.Fatalf("state %d (g=%g, %g %g %g | %g %g %g): |f(p*)| relative %g after %d iterations",
				i, g, rl, ul, pl, rr, ur, pr, r, s.Iterations)
		}
		maxIter = max(maxIter, s.Iterations)
		// Sampled states are finite and positive, and so is the exact flux.
		for _, xi := range []float64{s.LeftHead, 0.5 * (s.LeftHead + s.LeftTail), s.UStar, 0.5 * (s.UStar + s.RightTail), s.RightHead, 0} {
			r, u, p := s.Sample(xi)
			if !(r > 0) || !(p > 0) || math.IsNaN(u) || math.IsInf(r+u+p, 0) {
				t.Fatalf("state %d (g=%g, %g %g %g | %g %g %g): Sample(%g) = (%g, %g, %g)", i, g, rl, ul, pl, rr, ur, pr, xi, r, u, p)
			}
		}
		f0, f1, f2, f3 := EulerExact(g, rl, ul, 1, pl, rr, ur, -1, pr)
		if f := f0 + f1 + f2 + f3; math.IsNaN(f) || math.IsInf(f, 0) {
			t.Fatalf("state %d: exact flux (%g %g %g %g)", i, f0, f1, f2, f3)
		}
	}
	if maxIter > 30 {
		t.Errorf("up to %d Newton iterations", maxIter)
	}
	t.Logf("most Newton iterations: %d", maxIter)
}

// Toro's test 1 (Toro 2009 ch. 4): the star state and the wave structure.
func ExampleSolveRiemann() {
	s, err := SolveRiemann(1.4, 1, 0, 1, 0.125, 0, 0.1)
	if err != nil {
		fmt.Println(err)
		return
	}
	p, u, rl, rr := s.Star()
	left, right := s.Waves()
	fmt.Printf("p*=%.5f u*=%.5f rho*L=%.5f rho*R=%.5f\n", p, u, rl, rr)
	fmt.Printf("%v (%.4f to %.4f), contact at %.4f, %v at %.4f\n", left, s.LeftHead, s.LeftTail, u, right, s.RightHead)
	rho, _, _ := s.Sample(0.5) // x = 0.5 t: between contact and shock
	fmt.Printf("rho(x/t=0.5)=%.5f\n", rho)
	// Output:
	// p*=0.30313 u*=0.92745 rho*L=0.42632 rho*R=0.26557
	// rarefaction (-1.1832 to -0.0703), contact at 0.9275, shock at 1.7522
	// rho(x/t=0.5)=0.42632
}
