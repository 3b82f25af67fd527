package fv2d

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// resolve resolves case name with kv, failing the test on error.
func resolve(t testing.TB, name string, kv map[string]string) Values {
	t.Helper()
	v, err := Resolve(name, kv)
	if err != nil {
		t.Fatal(err)
	}
	return v
}

// run resolves and runs case name with kv, failing the test on error.
func run(t testing.TB, name string, kv map[string]string) *Result {
	t.Helper()
	v := resolve(t, name, kv)
	r, err := Run(context.Background(), v)
	if err != nil {
		t.Fatalf("%s: %v", v, err)
	}
	return r
}

// newSolver builds a solver for case name with kv.
func newSolver(t testing.TB, name string, kv map[string]string) *Solver {
	t.Helper()
	s, err := NewSolver(resolve(t, name, kv))
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(s.Close)
	return s
}

// steps advances s by n CFL steps.
func steps(t testing.TB, s *Solver, n int) {
	t.Helper()
	for i := 0; i < n; i++ {
		if err := s.Step(s.MaxDt()); err != nil {
			t.Fatal(err)
		}
	}
}

// with returns kv with the extra settings added (kv itself is not changed).
func with(kv map[string]string, extra ...string) map[string]string {
	out := map[string]string{}
	for k, v := range kv {
		out[k] = v
	}
	for i := 0; i+1 < len(extra); i += 2 {
		out[extra[i]] = extra[i+1]
	}
	return out
}

// Law (docs/references.md §7, common practice): on a periodic domain a
// finite-volume update in flux-difference form conserves every total to
// round-off; relative drift <= 1e-13 over 1000 steps, totals summed with a
// compensated sum.
func TestPeriodicConservation(t *testing.T) {
	for _, tc := range []struct {
		name string
		kv   map[string]string
	}{
		{"vortex", map[string]string{"nx": "24", "ny": "20"}},
		{"vortex", map[string]string{"nx": "16", "ny": "16", "scheme": "godunov", "flux": "hll", "split": "lie", "alternate": "true", "threads": "2"}},
		{"density-wave", map[string]string{"nx": "20", "ny": "12", "recon": "conserved", "flux": "roe", "limiter": "superbee"}},
		{"burgers-diagonal", map[string]string{"nx": "24", "ny": "24", "limiter": "mc"}},
		{"burgers-sine", map[string]string{"nx": "32", "ny": "2", "flux": "rusanov", "scheme": "godunov"}},
	} {
		t.Run(fmt.Sprint(tc.name, tc.kv), func(t *testing.T) {
			s := newSolver(t, tc.name, tc.kv)
			init := s.State().Totals()
			steps(t, s, 1000)
			for k, tot := range s.State().Totals() {
				drift := math.Abs(tot-init[k]) / math.Max(math.Abs(init[k]), 1e-300)
				if drift > 1e-13 {
					t.Errorf("%s: total %.17g -> %.17g, relative drift %.3g > 1e-13", s.State().Eq.Vars()[k], init[k], tot, drift)
				}
			}
		})
	}
}

// Law (Rankine-Hugoniot, docs/references.md §2): the Burgers shock from
// u_l = 2, u_r = 0 moves at s = (u_l + u_r)/2 = 1 and sits at x0 + t.
func TestBurgersShockSpeed(t *testing.T) {
	for _, scheme := range []string{"godunov", "muscl"} {
		for _, flux := range []string{"exact", "rusanov"} {
			r := run(t, "burgers-riemann", map[string]string{"nx": "200", "ny": "1", "scheme": scheme, "flux": flux,
				"u_l": "2", "u_r": "0", "x0": "0.25", "t_end": "0.5"})
			got, want, dx := r.Functionals["front_x"], 0.25+0.5, 1.0/200
			if math.Abs(got-want) > dx {
				t.Errorf("%s/%s: shock at %.5f, Rankine-Hugoniot says %.5f (dx = %g)", scheme, flux, got, want, dx)
			}
		}
	}
	// Entropy condition (Lax; docs/references.md §2): u_l < u_r opens into a fan
	// u = (x - x0)/t; the centre value (u_l + u_r)/2 = 0.5 sits at x0 + 0.5 t.
	r := run(t, "burgers-riemann", map[string]string{"nx": "200", "ny": "1", "u_l": "0", "u_r": "1", "x0": "0.25", "t_end": "0.5"})
	if got := r.Functionals["front_x"]; math.Abs(got-0.5) > 1.0/200 {
		t.Errorf("rarefaction centre at %.5f, want 0.5", got)
	}
	if e := r.Errors["u"].L1; e > 2e-3 {
		t.Errorf("rarefaction L1 error %.3g", e)
	}
}

// Toro (2009) ch. 4 test 1 (docs/references.md §1): the captured right shock
// sits where the exact solver puts it, x0 + S_R t, and the star densities
// of the plateaus match the table (rho*_L = 0.42632, rho*_R = 0.26557).
func TestEulerShockPosition(t *testing.T) {
	sol, err := SolveRiemann(1.4, 1, 0, 1, 0.125, 0, 0.1)
	if err != nil {
		t.Fatal(err)
	}
	nx := 400
	dx := 1.0 / float64(nx)
	want := 0.5 + sol.RightHead*0.25
	for _, flux := range []string{"hllc", "hll", "exact", "roe"} {
		r := run(t, "shocktube", map[string]string{"test": "1", "nx": fmt.Sprint(nx), "ny": "1", "flux": flux})
		if got := r.Functionals["front_s"]; math.Abs(got-want) > 1.5*dx {
			t.Errorf("%s: shock at %.5f, exact %.5f (dx %g)", flux, got, want, dx)
		}
		s := r.Final
		// plateau midpoints: between the fan tail and the contact, and between
		// the contact and the shock
		xl := 0.5 + 0.25*0.5*(sol.LeftTail+sol.UStar)
		xr := 0.5 + 0.25*0.5*(sol.UStar+sol.RightHead)
		for _, c := range []struct {
			x, rho float64
		}{{xl, 0.42632}, {xr, 0.26557}} {
			got := s.At(0, int(c.x/dx), 0)
			if math.Abs(got-c.rho) > 2e-3*c.rho {
				t.Errorf("%s: rho(%.3f) = %.5f, star density %.5f", flux, c.x, got, c.rho)
			}
		}
	}
}

// Shocks and contacts (docs/references.md §6, common practice; Banks, Aslam & Rider 2008):
// the L1 error of a shock tube converges at an order of about 1 (between
// the contact's 2/3 and the shock's 1).
func TestShocktubeL1Order(t *testing.T) {
	var e []float64
	for _, n := range []int{100, 200, 400} {
		r := run(t, "shocktube", map[string]string{"test": "1", "nx": fmt.Sprint(n), "ny": "1"})
		e = append(e, r.Errors["rho"].L1)
	}
	for i := 1; i < len(e); i++ {
		p := math.Log2(e[i-1] / e[i])
		t.Logf("L1(rho) %.4e -> %.4e: order %.3f", e[i-1], e[i], p)
		if p < 0.5 || p > 1.3 {
			t.Errorf("shock tube L1 order %.3f outside [0.5, 1.3]", p)
		}
	}
}

// With split=lie a tube along y is the transposed tube along x to round-off
// (the sweeps are the same 1-D scheme and the dt is the same). With strang
// the x tube gets two half x sweeps per step and the y tube one full y
// sweep: the Courant number of the sweep that carries the waves differs,
// so the two runs differ slightly (the documented convention).
func TestTubeAxisTranspose(t *testing.T) {
	base := map[string]string{"test": "1", "scheme": "muscl"}
	for _, split := range []string{"lie", "strang"} {
		for _, quad := range []string{"1", "3"} {
			x := run(t, "shocktube", with(base, "split", split, "quad", quad, "axis", "x", "nx", "64", "ny", "4"))
			y := run(t, "shocktube", with(base, "split", split, "quad", quad, "axis", "y", "nx", "4", "ny", "64"))
			if x.Steps != y.Steps {
				t.Errorf("%s: %d steps along x, %d along y", split, x.Steps, y.Steps)
			}
			perm := [4]int{0, 2, 1, 3}
			maxd, l1, norm := 0.0, 0.0, 0.0 // largest relative difference; L1 difference of rho
			for k := 0; k < 4; k++ {
				for j := 0; j < 4; j++ {
					for i := 0; i < 64; i++ {
						a, b := x.Final.At(k, i, j), y.Final.At(perm[k], j, i)
						maxd = math.Max(maxd, math.Abs(a-b)/math.Max(1, math.Abs(a)))
						if k == 0 {
							l1, norm = l1+math.Abs(a-b), norm+math.Abs(a)
						}
					}
				}
			}
			t.Logf("split=%s quad=%s: largest relative x/y difference %.3g, L1 of rho %.3g", split, quad, maxd, l1/norm)
			switch {
			case split == "lie" && maxd > 1e-14:
				t.Errorf("lie: x and y tubes differ by %.3g", maxd)
			case split == "strang" && (l1 == 0 || l1/norm > 5e-3):
				t.Errorf("strang: x and y tubes differ by %.3g (L1 of rho), want small but nonzero", l1/norm)
			}
		}
	}
}

// Lax & Liu (1998) configuration 3 is symmetric under x <-> y. The split
// step X(dt/2) Y(dt) X(dt/2) maps under the reflection to Y(dt/2) X(dt)
// Y(dt/2), so a run starting with y is the exact transpose of the run
// starting with x; the default run is symmetric up to the splitting error.
func TestQuadrantsSymmetry(t *testing.T) {
	kv := map[string]string{"nx": "48", "ny": "48", "config": "3"}
	a := newSolver(t, "quadrants", kv)
	b := newSolver(t, "quadrants", kv)
	b.yFirst = true
	for i := 0; i < 20; i++ {
		dt := a.MaxDt()
		if dt != b.MaxDt() {
			t.Fatalf("step %d: dt %v vs %v", i, dt, b.MaxDt())
		}
		if err := a.Step(dt); err != nil {
			t.Fatal(err)
		}
		if err := b.Step(dt); err != nil {
			t.Fatal(err)
		}
	}
	perm := [4]int{0, 2, 1, 3}
	var asym, norm float64
	for k := 0; k < 4; k++ {
		for j := 0; j < 48; j++ {
			for i := 0; i < 48; i++ {
				if x, y := a.State().At(k, i, j), b.State().At(perm[k], j, i); x != y {
					t.Fatalf("var %d cell (%d,%d): %v, transposed y-first run %v", k, i, j, x, y)
				}
				if k == 0 {
					asym += math.Abs(a.State().At(0, i, j) - a.State().At(0, j, i))
					norm += a.State().At(0, i, j)
				}
			}
		}
	}
	t.Logf("x<->y asymmetry of the x-first run: %.3g (relative, L1 of rho)", asym/norm)
	if asym/norm > 1e-2 {
		t.Errorf("x<->y asymmetry %.3g", asym/norm)
	}
}

// The threads parameter splits the lines of each sweep; every line is
// computed the same way, so the result is bitwise identical.
func TestThreadsBitwise(t *testing.T) {
	for _, tc := range []struct {
		name string
		kv   map[string]string
	}{
		{"vortex", map[string]string{"nx": "41", "ny": "27"}},
		{"quadrants", map[string]string{"nx": "30", "ny": "34", "split": "lie", "alternate": "true", "recon": "conserved"}},
		{"burgers-diagonal", map[string]string{"nx": "25", "ny": "19", "scheme": "godunov"}},
		{"euler-mms", map[string]string{"nx": "20", "ny": "18"}},
	} {
		ref := newSolver(t, tc.name, tc.kv)
		steps(t, ref, 15)
		for _, th := range []string{"2", "3", "7"} {
			s := newSolver(t, tc.name, with(tc.kv, "threads", th))
			steps(t, s, 15)
			for k := range ref.State().U {
				for idx, x := range ref.State().U[k] {
					if y := s.State().U[k][idx]; x != y && !(x != x && y != y) {
						t.Fatalf("%s threads=%s: var %d index %d: %v vs %v", tc.name, th, k, idx, y, x)
					}
				}
			}
			if s.Time() != ref.Time() {
				t.Errorf("%s threads=%s: t %v vs %v", tc.name, th, s.Time(), ref.Time())
			}
		}
	}
}

// Robustness: HLL and HLLC with Einfeldt-type wave speeds are positively
// conservative for the first-order scheme (Einfeldt, Munz, Roe & Sjogreen
// 1991, J. Comput. Phys. 92; Batten, Clarke, Lambert & Causon 1997, SIAM J.
// Sci. Comput. 18): random Riemann states at CFL 0.9 keep density and
// pressure positive. The MUSCL-Hancock scheme with minmod is run on the same
// states too.
func TestRandomRiemannPositivity(t *testing.T) {
	n := 1500
	if testing.Short() {
		n = 300
	}
	rng := rand.New(rand.NewPCG(2, 9))
	logU := func(lo, hi float64) float64 {
		return math.Exp(math.Log(lo) + rng.Float64()*(math.Log(hi)-math.Log(lo)))
	}
	for i := 0; i < n; i++ {
		rl, rr := logU(1e-3, 1e3), logU(1e-3, 1e3)
		pl, pr := logU(1e-3, 1e3), logU(1e-3, 1e3)
		al, ar := math.Sqrt(1.4*pl/rl), math.Sqrt(1.4*pr/rr)
		ul, ur := 3*al*(2*rng.Float64()-1), 3*ar*(2*rng.Float64()-1)
		for _, flux := range []string{"hll", "hllc"} {
			for _, scheme := range []string{"godunov", "muscl"} {
				kv := map[string]string{"test": "0", "nx": "16", "ny": "1", "cfl": "0.9", "flux": flux, "scheme": scheme, "limiter": "minmod",
					"rho_l": fmt.Sprint(rl), "u_l": fmt.Sprint(ul), "p_l": fmt.Sprint(pl),
					"rho_r": fmt.Sprint(rr), "u_r": fmt.Sprint(ur), "p_r": fmt.Sprint(pr)}
				s := newSolver(t, "shocktube", kv)
				for k := 0; k < 12; k++ {
					if err := s.Step(s.MaxDt()); err != nil {
						t.Fatalf("%s %s L=(%g,%g,%g) R=(%g,%g,%g): %v", scheme, flux, rl, ul, pl, rr, ur, pr, err)
					}
				}
				s.Close()
			}
		}
	}
}

// A run that breaks down is a result: the error is a *Failure naming the
// time, the step and the cell.
func TestFailureReport(t *testing.T) {
	// A genuine divergence: Toro test 3 (pressure ratio 1e5) at a Courant
	// number of 3, set through the solver (the cfl parameter stops at 1).
	s := newSolver(t, "shocktube", map[string]string{"test": "3", "nx": "50", "ny": "1"})
	s.cfg.CFL = 3
	var err error
	for i := 0; i < 100 && err == nil; i++ {
		err = s.Step(s.MaxDt())
	}
	var f *Failure
	if !errors.As(err, &f) {
		t.Fatalf("got %v, want a *Failure", err)
	}
	if f.I < 0 || f.J != 0 || f.Step < 1 || len(f.Values) != 4 {
		t.Errorf("failure %+v does not name a cell", f)
	}
	msg := f.Error()
	for _, want := range []string{"t=", fmt.Sprintf("cell (%d,0)", f.I), "step", "rho="} {
		if !strings.Contains(msg, want) {
			t.Errorf("message %q lacks %q", msg, want)
		}
	}
	t.Log(msg)

	// The step guard.
	_, err = Run(context.Background(), resolve(t, "vortex", map[string]string{"nx": "16", "ny": "16", "max_steps": "3"}))
	if !errors.As(err, &f) || !strings.Contains(f.Reason, "step guard") || f.Step != 3 {
		t.Errorf("max_steps=3: got %v", err)
	}
	// A run that could never reach t_end within the guard fails at once, not
	// after max_steps steps (cfl=1e-300 would take 10^6 steps of 64^2 cells).
	_, err = Run(context.Background(), resolve(t, "vortex", map[string]string{"nx": "64", "ny": "64", "cfl": "1e-300"}))
	if !errors.As(err, &f) || !strings.Contains(f.Reason, "step guard") || f.Step != 0 {
		t.Errorf("cfl=1e-300: got %v", err)
	}
}

// Run stops between steps when its context is cancelled.
func TestRunCancel(t *testing.T) {
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	_, err := Run(ctx, resolve(t, "vortex", map[string]string{"nx": "16", "ny": "16"}))
	if !errors.Is(err, context.Canceled) {
		t.Errorf("got %v, want context.Canceled", err)
	}
}

// The last step is clipped to land exactly on t_end.
func TestFinalTimeExact(t *testing.T) {
	for _, tc := range []struct {
		name string
		kv   map[string]string
		want float64
	}{
		{"vortex", map[string]string{"nx": "16", "ny": "16", "t_end": "0.37"}, 0.37},
		{"shocktube", map[string]string{"test": "3", "nx": "32", "ny": "1"}, 0.012},
		{"quadrants", map[string]string{"config": "12", "nx": "16", "ny": "16"}, 0.25},
		{"burgers-riemann", map[string]string{"u_l": "0", "u_r": "0", "nx": "8", "ny": "1", "t_end": "0.3"}, 0.3},
	} {
		r := run(t, tc.name, tc.kv)
		if r.TFinal != tc.want || r.Final.T != tc.want {
			t.Errorf("%s: t_final %v, want %v", tc.name, r.TFinal, tc.want)
		}
	}
}
