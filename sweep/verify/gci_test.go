package verify

import (
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"strings"
	"testing"
)

func round(x float64, digits int) float64 {
	s := math.Pow(10, float64(digits))
	return math.Round(x*s) / s
}

// TestGCICelikWorkedExample reproduces the worked example of I. B. Celik et
// al., J. Fluids Eng. 130(7) 078001, 2008, Table 1 first column (recalled
// from memory, docs/references.md §5) to the digits
// printed there.
func TestGCICelikWorkedExample(t *testing.T) {
	h, err := SpacingsFromCells([]float64{18000, 8000, 4500}, 2)
	if err != nil {
		t.Fatal(err)
	}
	st, err := GCI([]float64{6.063, 5.972, 5.863}, h, GCIOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if len(st.Records) != 1 || st.LeastSquares != nil {
		t.Fatalf("%d records, least squares %v; want 1 record and none", len(st.Records), st.LeastSquares)
	}
	r := st.Records[0]
	check := func(name string, got *float64, scale float64, digits int, want float64) {
		t.Helper()
		if got == nil {
			t.Errorf("%s missing (notes %q)", name, r.Notes)
			return
		}
		if v := round(*got*scale, digits); v != want {
			t.Errorf("%s = %.6g, printed %g (rounded %g)", name, *got*scale, want, v)
		}
	}
	if round(r.R21, 3) != 1.5 || round(*r.R32, 3) != 1.333 {
		t.Errorf("r21 %g r32 %g, paper 1.5 1.333", r.R21, *r.R32)
	}
	check("p", r.Order, 1, 2, 1.53)
	check("phi_ext^21", r.Extrapolated, 1, 4, 6.1685)
	check("e_a^21 %", r.EApprox, 100, 1, 1.5)
	check("e_ext^21 %", r.EExtrap, 100, 1, 1.7)
	check("GCI_fine^21 %", r.GCIFine, 100, 1, 2.2)
	if r.Convergence != Monotone || r.SafetyFactor != 1.25 {
		t.Errorf("convergence %q Fs %g, want monotone 1.25", r.Convergence, r.SafetyFactor)
	}
	// The same study given as spacings, coarse to fine, gives the same numbers.
	st2, err := GCI([]float64{5.863, 6.063, 5.972}, []float64{h[2], h[0], h[1]}, GCIOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if *st2.Records[0].Order != *r.Order || st2.Phi[0] != 6.063 {
		t.Errorf("unsorted input: p %g phi %v", *st2.Records[0].Order, st2.Phi)
	}
}

// TestGCIPowerLaw: for phi = phi0 + C h^p exactly, the procedure recovers p
// and phi0, for several non-constant refinement ratios and both signs of C.
// The asymptotic ratio GCI_32/(r21^p GCI_21) is then exactly phi1/phi2
// (derived: GCI_21 = Fs |C| h1^p/|phi1|, GCI_32 = Fs |C| h2^p/|phi2|), which
// is the "about 1" of Roache 1998 (recalled from memory).
func TestGCIPowerLaw(t *testing.T) {
	for _, tc := range []struct{ p, c float64 }{{1, 0.3}, {2, -0.7}, {1.5, 2}, {0.6, 1}, {4, 0.01}} {
		for _, h := range [][]float64{{0.01, 0.02, 0.04}, {0.01, 0.015, 0.02}, {0.1, 0.13, 0.3}} {
			phi := make([]float64, 3)
			for i := range h {
				phi[i] = 2 + tc.c*math.Pow(h[i]/h[0], tc.p)*1e-2
			}
			st, err := GCI(phi, h, GCIOptions{})
			if err != nil {
				t.Fatal(err)
			}
			r := st.Records[0]
			if r.Convergence != Monotone || r.Order == nil {
				t.Errorf("p=%g h=%v: %q order %v notes %q", tc.p, h, r.Convergence, r.Order, r.Notes)
				continue
			}
			if math.Abs(*r.Order-tc.p) > 1e-8 || math.Abs(*r.Extrapolated-2) > 1e-10 || math.Abs(*r.AsymptoticRatio-phi[0]/phi[1]) > 1e-8 {
				t.Errorf("p=%g h=%v: order %.12g ext %.12g ratio %.12g", tc.p, h, *r.Order, *r.Extrapolated, *r.AsymptoticRatio)
			}
		}
	}
}

// TestGCIFirstOrderUnequalRatios: first-order data on r21 = 1.5, r32 = 4/3
// has R = 1 exactly; it converges (p = 1) and is not called divergent.
func TestGCIFirstOrderUnequalRatios(t *testing.T) {
	h := []float64{1, 1.5, 2}
	phi := []float64{1 + 0.1, 1 + 0.15, 1 + 0.2}
	r := mustGCI(t, phi, h).Records[0]
	if r.Convergence != Monotone || r.Order == nil || math.Abs(*r.Order-1) > 1e-6 {
		t.Errorf("R=%v: %q order %v notes %q", r.Ratio, r.Convergence, r.Order, r.Notes)
	}
}

func mustGCI(t *testing.T, phi, h []float64) *GCIStudy {
	t.Helper()
	st, err := GCI(phi, h, GCIOptions{})
	if err != nil {
		t.Fatal(err)
	}
	assertFinite(t, st)
	return st
}

// assertFinite fails when the study cannot be written as JSON (a NaN or Inf
// anywhere) and returns the JSON.
func assertFinite(t testing.TB, st *GCIStudy) string {
	t.Helper()
	b, err := json.Marshal(st)
	if err != nil {
		t.Fatalf("not JSON-safe: %v (%+v)", err, st)
	}
	return string(b)
}

func TestGCIDegenerate(t *testing.T) {
	h := []float64{0.01, 0.02, 0.04}
	cases := []struct {
		name, conv string
		phi        []float64
		order      bool // order defined
		gci        bool // gci_fine defined
		note       string
	}{
		{"all equal", Monotone, []float64{3, 3, 3}, false, true, "all three values are equal"},
		{"fine pair equal", Monotone, []float64{3, 3, 3.1}, false, false, "phi1 = phi2"},
		{"coarse pair equal", Divergent, []float64{3.1, 3, 3}, false, false, "phi2 = phi3"},
		{"diverging", Divergent, []float64{1, 1.2, 1.3}, false, false, "no positive order"},
		{"oscillating, decaying", Oscillatory, []float64{1.0, 1.01, 0.97}, true, true, ""},
		{"oscillating, growing", Oscillatory, []float64{1.0, 1.1, 1.05}, true, true, "does not decay"},
		{"zero fine value", Monotone, []float64{0, 0.01, 0.04}, true, false, "phi1 = 0"},
		{"zero everywhere", Monotone, []float64{0, 0, 0}, false, true, "all three"},
	}
	for _, c := range cases {
		st := mustGCI(t, c.phi, h)
		r := st.Records[0]
		if r.Convergence != c.conv {
			t.Errorf("%s: convergence %q, want %q", c.name, r.Convergence, c.conv)
		}
		if (r.Order != nil) != c.order || (r.GCIFine != nil) != c.gci {
			t.Errorf("%s: order %v gci %v, want defined %v %v (notes %q)", c.name, r.Order, r.GCIFine, c.order, c.gci, r.Notes)
		}
		if c.note != "" && !strings.Contains(strings.Join(r.Notes, "; "), c.note) {
			t.Errorf("%s: notes %q lack %q", c.name, r.Notes, c.note)
		}
		if r.EApprox == nil && c.phi[0] != 0 {
			t.Errorf("%s: e_approx missing", c.name)
		}
	}
	// All equal: no grid dependence means GCI 0.
	if r := mustGCI(t, []float64{3, 3, 3}, h).Records[0]; *r.GCIFine != 0 || *r.Extrapolated != 3 {
		t.Errorf("all equal: gci %g ext %g", *r.GCIFine, *r.Extrapolated)
	}
}

func TestGCITwoGrids(t *testing.T) {
	st, err := GCI([]float64{6.063, 5.972}, []float64{1, 1.5}, GCIOptions{AssumedOrder: 2})
	if err != nil {
		t.Fatal(err)
	}
	assertFinite(t, st)
	r := st.Records[0]
	// phi_ext = phi1 + (phi1 - phi2)/(r^p - 1) with r = 1.5, p = 2 (Celik et al. 2008 eq. 4).
	want := 6.063 + 0.091/1.25
	if r.SafetyFactor != 3 || !r.OrderAssumed || *r.Order != 2 || math.Abs(*r.Extrapolated-want) > 1e-12 {
		t.Errorf("two grids: %+v", r)
	}
	if g := 3 * (0.091 / 6.063) / 1.25; math.Abs(*r.GCIFine-g) > 1e-12 {
		t.Errorf("GCI %g, want Fs e_a/(r^p-1) = %g", *r.GCIFine, g)
	}
	if r.Convergence != "" || r.AsymptoticRatio != nil {
		t.Errorf("two grids cannot classify: %q %v", r.Convergence, r.AsymptoticRatio)
	}
}

func TestGCIManyGrids(t *testing.T) {
	// phi = 1 + 0.5 h^2 - 0.2 h^3: the triples' orders rise towards 2 as h
	// falls; the least-squares order over all grids lies inside their range.
	h := []float64{0.4, 0.2, 0.1, 0.05, 0.025}
	phi := make([]float64, len(h))
	for i := range h {
		phi[i] = 1 + 0.5*h[i]*h[i] - 0.2*h[i]*h[i]*h[i]
	}
	st := mustGCI(t, phi, h)
	if len(st.Records) != 3 || st.LeastSquares == nil || st.LeastSquares.Order == nil {
		t.Fatalf("records %d, least squares %+v", len(st.Records), st.LeastSquares)
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	for i, r := range st.Records {
		if r.Grids[0] != i {
			t.Errorf("record %d grids %v", i, r.Grids)
		}
		lo, hi = math.Min(lo, *r.Order), math.Max(hi, *r.Order)
	}
	if math.Abs(*st.Records[0].Order-2) > 0.05 {
		t.Errorf("finest triple order %g, want about 2", *st.Records[0].Order)
	}
	if p := *st.LeastSquares.Order; p < lo-0.1 || p > hi+0.1 {
		t.Errorf("least-squares order %g outside the triples' range [%g, %g]", p, lo, hi)
	}
	// Exact power law on four grids: the least-squares fit is exact.
	for i := range h {
		phi[i] = 1 + 0.5*math.Pow(h[i], 1.7)
	}
	ls := mustGCI(t, phi, h).LeastSquares
	if math.Abs(*ls.Order-1.7) > 1e-6 || math.Abs(*ls.Extrapolated-1) > 1e-8 {
		t.Errorf("power law: least squares p %g phi0 %g", *ls.Order, *ls.Extrapolated)
	}
}

func TestGCIInputErrors(t *testing.T) {
	cases := []struct {
		name   string
		phi, h []float64
		opts   GCIOptions
	}{
		{"one grid", []float64{1}, []float64{1}, GCIOptions{}},
		{"length", []float64{1, 2, 3}, []float64{1, 2}, GCIOptions{}},
		{"NaN value", []float64{1, math.NaN(), 3}, []float64{1, 2, 3}, GCIOptions{}},
		{"zero spacing", []float64{1, 2, 3}, []float64{0, 2, 3}, GCIOptions{}},
		{"equal spacing", []float64{1, 2, 3}, []float64{1, 2, 2}, GCIOptions{}},
		{"two grids without order", []float64{1, 2}, []float64{1, 2}, GCIOptions{}},
		{"order with three grids", []float64{1, 2, 3}, []float64{1, 2, 4}, GCIOptions{AssumedOrder: 2}},
		{"negative Fs", []float64{1, 2, 3}, []float64{1, 2, 4}, GCIOptions{SafetyFactor: -1}},
		{"overflowing difference", []float64{-1.7e308, 1.7e308, 0}, []float64{1, 2, 4}, GCIOptions{}},
	}
	for _, c := range cases {
		if _, err := GCI(c.phi, c.h, c.opts); !errors.Is(err, ErrGCIInput) {
			t.Errorf("%s: err = %v, want ErrGCIInput", c.name, err)
		}
	}
	if _, err := SpacingsFromCells([]float64{100, 0}, 2); !errors.Is(err, ErrGCIInput) {
		t.Errorf("zero cells: %v", err)
	}
	if _, err := SpacingsFromCells([]float64{100}, 4); !errors.Is(err, ErrGCIInput) {
		t.Errorf("dim 4: %v", err)
	}
}

// FuzzGCI: any finite input gives either an input error or a JSON-safe
// study with no NaN or Inf, and never panics.
func FuzzGCI(f *testing.F) {
	f.Add(6.063, 5.972, 5.863, 5.7, 1.0, 1.5, 2.0, 2.5)
	f.Add(1.0, 1.0, 1.0, 1.0, 1.0, 2.0, 4.0, 8.0)
	f.Add(0.0, 1e-300, -1e300, 3.0, 1e-300, 1e-299, 1e300, 1e301)
	f.Add(1.0, 1.1, 1.05, 1.07, 1.0, 1.0000001, 1.0000002, 3.0)
	f.Fuzz(func(t *testing.T, p1, p2, p3, p4, h1, h2, h3, h4 float64) {
		for _, n := range []int{2, 3, 4} {
			phi := []float64{p1, p2, p3, p4}[:n]
			h := []float64{h1, h2, h3, h4}[:n]
			opts := GCIOptions{}
			if n == 2 {
				opts.AssumedOrder = 2
			}
			st, err := GCI(phi, h, opts)
			if err != nil {
				if !errors.Is(err, ErrGCIInput) {
					t.Fatalf("error not ErrGCIInput: %v", err)
				}
				continue
			}
			assertFinite(t, st)
			for _, r := range st.Records {
				if r.Order != nil && !(*r.Order > 0) {
					t.Fatalf("order %g not positive: %+v", *r.Order, r)
				}
			}
			if n < 3 {
				continue
			}
			u, err := LeastSquaresUncertainty(phi, h, UncertaintyOptions{})
			if err != nil {
				if !errors.Is(err, ErrGCIInput) {
					t.Fatalf("error not ErrGCIInput: %v", err)
				}
				continue
			}
			if _, err := json.Marshal(u); err != nil || !(u.UncertaintyAbs >= 0) {
				t.Fatalf("least squares not JSON-safe or U < 0: %v %+v", err, u)
			}
		}
	})
}

func ExampleGCI() {
	h, _ := SpacingsFromCells([]float64{18000, 8000, 4500}, 2)
	st, err := GCI([]float64{6.063, 5.972, 5.863}, h, GCIOptions{})
	if err != nil {
		fmt.Println(err)
		return
	}
	r := st.Records[0]
	fmt.Printf("%s, p = %.2f, phi_ext = %.4f, GCI_fine = %.1f%%\n", r.Convergence, *r.Order, *r.Extrapolated, 100**r.GCIFine)
	// Output:
	// monotone, p = 1.53, phi_ext = 6.1685, GCI_fine = 2.2%
}

func BenchmarkGCI(b *testing.B) {
	h := []float64{0.4, 0.2, 0.1, 0.05, 0.025}
	phi := []float64{1.07, 1.019, 1.0048, 1.0012, 1.0003}
	for b.Loop() {
		if _, err := GCI(phi, h, GCIOptions{}); err != nil {
			b.Fatal(err)
		}
	}
}
