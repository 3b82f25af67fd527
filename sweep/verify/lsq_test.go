package verify

import (
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/optimize"
)

func mustLSQ(t testing.TB, phi, h []float64, opts UncertaintyOptions) *Uncertainty {
	t.Helper()
	u, err := LeastSquaresUncertainty(phi, h, opts)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := json.Marshal(u); err != nil {
		t.Fatalf("not JSON-safe: %v (%+v)", err, u)
	}
	return u
}

// TestLSQReducesToGCI: for phi = phi_0 + C h^p exactly with p in the
// trusted range, the least-squares uncertainty of the finest grid is the
// GCI with Fs = 1.25 (Eça & Hoekstra 2014, recalled from memory,
// docs/references.md §14), here the GCI of the finest triple by Celik et
// al. 2008 (§5), whatever the number of grids and the ratios.
func TestLSQReducesToGCI(t *testing.T) {
	grids := [][]float64{
		{0.01, 0.02, 0.04},
		{0.01, 0.02, 0.04, 0.08},
		{0.1, 0.15, 0.2, 0.3, 0.45},
		{1, 1.3, 1.8, 2.5, 3.1, 4},
	}
	for _, p := range []float64{0.6, 1, 1.53, 2} {
		for _, c := range []float64{0.4, -2} {
			for _, h := range grids {
				phi := make([]float64, len(h))
				for i := range h {
					phi[i] = 3 + c*math.Pow(h[i]/h[0], p)*1e-2
				}
				u := mustLSQ(t, phi, h, UncertaintyOptions{})
				st := mustGCI(t, phi, h)
				gci := *st.Records[0].GCIFine * math.Abs(phi[0])
				if u.Fit != FitPower || u.SafetyFactor != 1.25 || math.Abs(u.UncertaintyAbs-gci) > 1e-6*gci {
					t.Errorf("p=%g C=%g h=%v: fit %s Fs %g U %.10g, GCI*|phi1| %.10g (notes %q)",
						p, c, h, u.Fit, u.SafetyFactor, u.UncertaintyAbs, gci, u.Notes)
				}
				if math.Abs(*u.Order-p) > 1e-6 || math.Abs(*u.Extrapolated-3) > 1e-9 {
					t.Errorf("p=%g h=%v: order %.10g phi_0 %.12g", p, h, *u.Order, *u.Extrapolated)
				}
			}
		}
	}
}

// TestLSQGrowsWithScatter: the same power law with a growing scatter gives
// a growing uncertainty (Eça & Hoekstra 2014: sigma enters U).
func TestLSQGrowsWithScatter(t *testing.T) {
	h := []float64{1, 1.5, 2.25, 3.375, 5.0625, 7.59375}
	pattern := []float64{0.6, -1, 0.4, 1, -0.7, 0.2}
	prev := -1.0
	for _, s := range []float64{0, 0.005, 0.01, 0.02, 0.04, 0.08} {
		phi := make([]float64, len(h))
		for i := range h {
			phi[i] = 2 + 1e-3*math.Pow(h[i], 1.5)*(1+s*pattern[i])
		}
		u := mustLSQ(t, phi, h, UncertaintyOptions{})
		if !(u.UncertaintyAbs > prev) {
			t.Errorf("scatter %g: U %.6g not above %.6g of less scatter (fit %s, sigma %.3g, notes %q)", s, u.UncertaintyAbs, prev, u.Fit, u.Sigma, u.Notes)
		}
		if s > 0 && !(u.Sigma > 0) {
			t.Errorf("scatter %g: sigma %g", s, u.Sigma)
		}
		prev = u.UncertaintyAbs
	}
}

// TestLSQOutsideTheRange: an observed order outside [0.5, 2.1) is not
// trusted: the fixed-order expansions give the error with Fs = 3, and data
// that oscillate, or that no fit describes, get the data range (Eça &
// Hoekstra 2014 and the data-range rule of Eça et al. 2008,
// docs/references.md §14).
func TestLSQOutsideTheRange(t *testing.T) {
	h := []float64{1, 2, 4, 8, 16}
	law := func(p float64) []float64 {
		phi := make([]float64, len(h))
		for i := range h {
			phi[i] = 1 + 1e-3*math.Pow(h[i], p)
		}
		return phi
	}
	for _, p := range []float64{0.3, 3, 4} {
		u := mustLSQ(t, law(p), h, UncertaintyOptions{})
		if u.Fit == FitPower || u.Fit == FitDataRange || u.SafetyFactor < 3 {
			t.Errorf("p=%g: fit %s Fs %g, want a fixed-order fit with Fs >= 3 (notes %q)", p, u.Fit, u.SafetyFactor, u.Notes)
		}
		if math.Abs(*u.Order-p) > 1e-4 {
			t.Errorf("p=%g: observed order %g", p, *u.Order)
		}
		// The true error of the finest grid is 1e-3. Fixed-order fits bound
		// it for fast convergence; for p = 0.3 they do not (a limitation of
		// the procedure, docs/verification.md), so only p > 2 is checked.
		if p > 2 && u.UncertaintyAbs < 1e-3 {
			t.Errorf("p=%g: U %g below the true error 1e-3", p, u.UncertaintyAbs)
		}
	}
	// A design order of 4 moves the range to [0.5, 4.1): p = 3 is trusted.
	if u := mustLSQ(t, law(3), h, UncertaintyOptions{DesignOrder: 4}); u.Fit != FitPower || u.SafetyFactor != 1.25 {
		t.Errorf("design 4, p = 3: fit %s Fs %g", u.Fit, u.SafetyFactor)
	}
	// Oscillating values: the data range, U = 3 Delta_M on every grid.
	osc := []float64{1, 1.02, 0.99, 1.03, 0.98}
	u := mustLSQ(t, osc, h, UncertaintyOptions{})
	if u.Fit != FitDataRange || u.Extrapolated != nil || math.Abs(u.UncertaintyAbs-3*0.05) > 1e-12 || u.U[4] != u.U[0] {
		t.Errorf("oscillating: fit %s U %v ext %v", u.Fit, u.U, u.Extrapolated)
	}
	// Monotone but ragged values: the best fit's sigma is not below the
	// mean spacing Delta_phi = Delta_M/(n-1), so U = 3 sigma/Delta_phi (...).
	rag := []float64{1, 1.3, 1.31, 1.32, 1.33}
	u = mustLSQ(t, rag, h, UncertaintyOptions{})
	dphi := 0.33 / 4
	if !(u.Sigma >= dphi) || math.Abs(u.SafetyFactor-3*u.Sigma/dphi) > 1e-12 || u.UncertaintyAbs < u.SafetyFactor*u.Sigma {
		t.Errorf("ragged: fit %s sigma %g Fs %g U %g (notes %q)", u.Fit, u.Sigma, u.SafetyFactor, u.UncertaintyAbs, u.Notes)
	}
}

func TestLSQDegenerateAndErrors(t *testing.T) {
	h := []float64{1, 2, 4, 8}
	u := mustLSQ(t, []float64{2, 2, 2, 2}, h, UncertaintyOptions{})
	if u.UncertaintyAbs != 0 || *u.Uncertainty != 0 || *u.Extrapolated != 2 {
		t.Errorf("constant: %+v", u)
	}
	u = mustLSQ(t, []float64{0, 0.01, 0.04, 0.09}, h, UncertaintyOptions{})
	if u.Uncertainty != nil || !(u.UncertaintyAbs > 0) {
		t.Errorf("phi_1 = 0: relative %v absolute %g", u.Uncertainty, u.UncertaintyAbs)
	}
	u = mustLSQ(t, []float64{1.01, 1.04, 1.16}, []float64{1, 2, 4}, UncertaintyOptions{})
	if !strings.Contains(strings.Join(u.Warnings, "; "), "three grids") {
		t.Errorf("three grids: warnings %q", u.Warnings)
	}
	for name, c := range map[string]struct {
		phi, h []float64
		opts   UncertaintyOptions
	}{
		"two grids":  {[]float64{1, 2}, []float64{1, 2}, UncertaintyOptions{}},
		"NaN":        {[]float64{1, math.NaN(), 2}, []float64{1, 2, 4}, UncertaintyOptions{}},
		"same h":     {[]float64{1, 2, 3}, []float64{1, 2, 2}, UncertaintyOptions{}},
		"range":      {[]float64{-1.7e308, 0, 1.7e308}, []float64{1, 2, 4}, UncertaintyOptions{}},
		"bad orders": {[]float64{1, 2, 3}, []float64{1, 2, 4}, UncertaintyOptions{OrderLow: 2, OrderHigh: 1}},
	} {
		if _, err := LeastSquaresUncertainty(c.phi, c.h, c.opts); !errors.Is(err, ErrGCIInput) {
			t.Errorf("%s: err %v, want ErrGCIInput", name, err)
		}
	}
}

// TestPolyFitLinearSolve: the fixed-order fits agree with gonum's QR least
// squares of the sqrt(w)-scaled system (docs/references.md §11).
func TestPolyFitLinearSolve(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for trial := 0; trial < 50; trial++ {
		n := 4 + rng.IntN(4)
		x := make([]float64, n)
		phi := make([]float64, n)
		x[0] = 1
		for i := 1; i < n; i++ {
			x[i] = x[i-1] * (1.3 + rng.Float64())
		}
		for i := range x {
			phi[i] = 1 + 0.01*x[i] - 0.003*x[i]*x[i] + 0.01*rng.NormFloat64()
		}
		for _, w := range [][]float64{nil, fitWeights(x)} {
			for _, exps := range [][]float64{{1}, {2}, {1, 2}} {
				c, s, ok := polyFit(x, phi, w, exps)
				if !ok {
					t.Fatalf("polyFit failed: x %v", x)
				}
				m := len(exps) + 1
				a := mat.NewDense(n, m, nil)
				b := mat.NewVecDense(n, nil)
				for i := range x {
					sw := math.Sqrt(weight(w, i))
					a.Set(i, 0, sw)
					for k, e := range exps {
						a.Set(i, k+1, sw*math.Pow(x[i], e))
					}
					b.SetVec(i, sw*phi[i])
				}
				var qr mat.QR
				qr.Factorize(a)
				var want mat.VecDense
				if err := qr.SolveVecTo(&want, false, b); err != nil {
					t.Fatal(err)
				}
				var res mat.VecDense
				res.MulVec(a, &want)
				res.SubVec(b, &res)
				for k := range c {
					if d := math.Abs(c[k] - want.AtVec(k)); d > 1e-8*(1+math.Abs(want.AtVec(k))) {
						t.Errorf("trial %d exps %v weighted %v: c[%d] %.12g, gonum %.12g", trial, exps, w != nil, k, c[k], want.AtVec(k))
					}
				}
				if ss := mat.Dot(&res, &res); math.Abs(s-ss) > 1e-8*ss+1e-20 {
					t.Errorf("trial %d: residual %g, gonum %g", trial, s, ss)
				}
			}
		}
	}
}

// TestPowerFitOptimizer: the nonlinear power fit reaches the minimum that
// gonum's Nelder-Mead finds for S(phi_0, alpha, p) = sum w_i r_i^2 from the
// same data (docs/references.md §11), weighted and unweighted.
func TestPowerFitOptimizer(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for trial := 0; trial < 20; trial++ {
		n := 4 + rng.IntN(3)
		x := make([]float64, n)
		phi := make([]float64, n)
		p0 := 0.7 + 1.5*rng.Float64()
		for i := range x {
			x[i] = math.Pow(1.5+0.5*rng.Float64(), float64(i))
			if i > 0 {
				x[i] = math.Max(x[i], x[i-1]*1.3)
			}
			phi[i] = 1 + 0.05*math.Pow(x[i], p0)*(1+0.03*rng.NormFloat64())
		}
		for _, w := range [][]float64{nil, fitWeights(x)} {
			f := powerFit(x, phi, w)
			if f.status != fitOK {
				t.Fatalf("trial %d: status %d", trial, f.status)
			}
			obj := func(v []float64) float64 {
				var s float64
				for i := range x {
					r := phi[i] - v[0] - v[1]*math.Pow(x[i], v[2])
					s += weight(w, i) * r * r
				}
				return s
			}
			res, err := optimize.Minimize(optimize.Problem{Func: obj},
				[]float64{f.phi0 + 1e-3, f.alpha * 1.1, f.p * 0.9},
				&optimize.Settings{Converger: &optimize.FunctionConverge{Absolute: 1e-30, Relative: 1e-14, Iterations: 200}, MajorIterations: 20000},
				&optimize.NelderMead{})
			if err != nil {
				t.Fatal(err)
			}
			if f.s > res.F*(1+1e-6)+1e-28 {
				t.Errorf("trial %d weighted %v: S %.12g above Nelder-Mead's %.12g", trial, w != nil, f.s, res.F)
			}
			if d := math.Abs(f.p - res.X[2]); d > 1e-3*f.p {
				t.Errorf("trial %d weighted %v: p %.8g, Nelder-Mead %.8g", trial, w != nil, f.p, res.X[2])
			}
		}
	}
}

// coverage runs the synthetic battery phi_i = phi_0 + a h_i^p (1 + nu z_i),
// z_i standard normal, and returns, per noise level nu (and over all, last),
// the fraction of sequences whose interval [phi_1 - U, phi_1 + U] contains
// phi_0, for Celik's GCI (finest triple; an undefined GCI counts as not
// covering) and for the least-squares U, and the median of U/|phi_1 - phi_0|
// of each.
func coverage(t testing.TB, sequences int) (noises, celik, lsq []float64, medC, medL float64) {
	rng := rand.New(rand.NewPCG(2014, 262))
	noises = []float64{0, 0.01, 0.03, 0.1}
	inC := make([]int, len(noises)+1)
	inL := make([]int, len(noises)+1)
	var rc, rl []float64
	for k := 0; k < sequences; k++ {
		n := 4 + rng.IntN(3)                                                    // 4 to 6 grids
		r := 1.3 + 0.7*rng.Float64()                                            // constant refinement ratio in [1.3, 2]
		p := 0.8 + 1.4*rng.Float64()                                            // order in [0.8, 2.2]
		a := math.Copysign(math.Pow(10, -3+2*rng.Float64()), rng.Float64()-0.5) // |a| in [1e-3, 1e-1]
		nu := noises[k%len(noises)]
		const phi0 = 1.0
		h := make([]float64, n)
		phi := make([]float64, n)
		for i := range h {
			h[i] = math.Pow(r, float64(i))
			phi[i] = phi0 + a*math.Pow(h[i], p)*(1+nu*rng.NormFloat64())
		}
		err := math.Abs(phi[0] - phi0)
		st, e := GCI(phi, h, GCIOptions{})
		if e != nil {
			t.Fatal(e)
		}
		uc := math.Inf(1) // an undefined GCI: no interval
		if g := st.Records[0].GCIFine; g != nil {
			uc = *g * math.Abs(phi[0])
		}
		u, e := LeastSquaresUncertainty(phi, h, UncertaintyOptions{})
		if e != nil {
			t.Fatal(e)
		}
		for _, j := range []int{k % len(noises), len(noises)} {
			if uc >= err && !math.IsInf(uc, 1) {
				inC[j]++
			}
			if u.UncertaintyAbs >= err {
				inL[j]++
			}
		}
		if err > 0 {
			rc = append(rc, uc/err)
			rl = append(rl, u.UncertaintyAbs/err)
		}
	}
	for j := range inC {
		m := float64(sequences / len(noises))
		if j == len(noises) {
			m = float64(sequences)
		}
		celik = append(celik, float64(inC[j])/m)
		lsq = append(lsq, float64(inL[j])/m)
	}
	slices.Sort(rc)
	slices.Sort(rl)
	return noises, celik, lsq, rc[len(rc)/2], rl[len(rl)/2]
}

// TestCoverage is the coverage study of docs/verification.md: 4000
// sequences, orders 0.8 to 2.2, constant ratios 1.3 to 2, 4 to 6 grids,
// noise 0, 1, 3 and 10 % of the error. Eça & Hoekstra 2014 aim at 95 %
// coverage; this implementation measured 95.7 % overall, and the check
// holds it at 95 % so that a change that loses coverage fails.
func TestCoverage(t *testing.T) {
	if testing.Short() {
		t.Skip("coverage study")
	}
	noises, celik, lsq, medC, medL := coverage(t, 4000)
	for j, nu := range noises {
		t.Logf("noise %4.0f %%: coverage Celik GCI %5.1f %%, least squares %5.1f %%", 100*nu, 100*celik[j], 100*lsq[j])
	}
	all := len(noises)
	t.Logf("all:          coverage Celik GCI %5.1f %%, least squares %5.1f %%; median U/|error| %.2f and %.2f",
		100*celik[all], 100*lsq[all], medC, medL)
	if lsq[all] < 0.95 {
		t.Errorf("least-squares coverage %.3f below 0.95", lsq[all])
	}
	if lsq[all] <= celik[all] {
		t.Errorf("least-squares coverage %.3f not above Celik's %.3f", lsq[all], celik[all])
	}
}

func TestWarnings(t *testing.T) {
	cases := []struct {
		name   string
		phi, h []float64
		want   string // "" for no warning
	}{
		{"Celik et al. 2008 example", []float64{6.063, 5.972, 5.863}, []float64{1, 1.5, 2}, ""},
		{"order 34.22", []float64{1, 1.0000000001, 3}, []float64{0.1, 0.2, 0.4}, "above 6"},
		{"ratio 1.01", []float64{1.0001, 1.000102, 1.000104}, []float64{1, 1.01, 1.0201}, "below 1.3"},
		{"round-off", []float64{1, 1 + 2e-12, 1.1}, []float64{1, 2, 4}, "round-off"},
		{"far from asymptotic", []float64{1.5, 2, 3}, []float64{1, 2, 4}, "far from 1"},
	}
	for _, c := range cases {
		st := mustGCI(t, c.phi, c.h)
		w := strings.Join(st.Records[0].Warnings, "; ")
		if (c.want == "") != (w == "") || !strings.Contains(w, c.want) {
			t.Errorf("%s: warnings %q, want %q", c.name, w, c.want)
		}
	}
	st, err := GCI([]float64{1, 1.1}, []float64{1, 2}, GCIOptions{AssumedOrder: 1})
	if err != nil || !strings.Contains(strings.Join(st.Records[0].Warnings, ";"), "two grids") {
		t.Errorf("two grids: %v %v", err, st)
	}
	st, _ = GCI([]float64{1 + 1e-6, 1 + 32e-6, 1 + 1024e-6}, []float64{1, 2, 4}, GCIOptions{DesignOrder: 2})
	if w := strings.Join(st.Records[0].Warnings, ";"); !strings.Contains(w, "twice the design order") {
		t.Errorf("order 5 with design 2: %q", w)
	}
}

func ExampleLeastSquaresUncertainty() {
	h := []float64{0.025, 0.05, 0.1, 0.2, 0.4}
	phi := []float64{1.0003, 1.0012, 1.0048, 1.019, 1.07}
	u, err := LeastSquaresUncertainty(phi, h, UncertaintyOptions{})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("fit %s (weighted %v), p = %.2f, phi_0 = %.5f, U = %.2g (%.3f%%)\n",
		u.Fit, u.Weighted, *u.Order, *u.Extrapolated, u.UncertaintyAbs, 100**u.Uncertainty)
	// Output:
	// fit power (weighted true), p = 1.89, phi_0 = 0.99988, U = 0.00066 (0.066%)
}

// BenchmarkVerify10k: the maths of 10,000 groups of 6 grids (GCI of every
// triple, the least-squares order and uncertainty, and the order verdict).
func BenchmarkVerify10k(b *testing.B) {
	rng := rand.New(rand.NewPCG(5, 6))
	const groups = 10000
	hs := make([][]float64, groups)
	phis := make([][]float64, groups)
	errs := make([][]float64, groups)
	for g := range hs {
		p := 0.8 + 1.4*rng.Float64()
		hs[g] = []float64{1, 2, 4, 8, 16, 32}
		phis[g] = make([]float64, 6)
		errs[g] = make([]float64, 6)
		for i, h := range hs[g] {
			errs[g][i] = 1e-3 * math.Pow(h, p) * (1 + 0.02*rng.NormFloat64())
			phis[g][i] = 1 + errs[g][i]
		}
	}
	for b.Loop() {
		for g := range hs {
			if _, err := GCI(phis[g], hs[g], GCIOptions{}); err != nil {
				b.Fatal(err)
			}
			if _, err := LeastSquaresUncertainty(phis[g], hs[g], UncertaintyOptions{}); err != nil {
				b.Fatal(err)
			}
			Verdict(hs[g], errs[g], 2, 0.15)
		}
	}
}
