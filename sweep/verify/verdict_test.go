package verify

import (
	"fmt"
	"math"
	"strings"
	"testing"
)

func powerLaw(h []float64, terms ...float64) []float64 {
	// terms: pairs (coefficient, exponent).
	e := make([]float64, len(h))
	for i := range h {
		for k := 0; k+1 < len(terms); k += 2 {
			e[i] += terms[k] * math.Pow(h[i], terms[k+1])
		}
	}
	return e
}

func TestVerdict(t *testing.T) {
	h := []float64{1.0 / 32, 1.0 / 64, 1.0 / 128, 1.0 / 256}
	cases := []struct {
		name           string
		h, e           []float64
		design, tol    float64
		status         string
		preAsymptotic  bool
		finestApproxTo float64
	}{
		{"second order", h, powerLaw(h, 3, 2), 2, 0.15, StatusPass, false, 2},
		{"first order of a second-order scheme", h, powerLaw(h, 3, 1), 2, 0.15, StatusLow, false, 1},
		{"third order", h, powerLaw(h, 3, 3), 2, 0.15, StatusHigh, false, 3},
		// e = h + 1e4 h^3: the finest pair shows 1.48, the fit 2.08: off
		// design and not settled.
		{"not settled", h, powerLaw(h, 1, 1, 1e4, 3), 2, 0.3, StatusPreAsymptotic, true, 1.48},
		// e = h^2 + 1000 h^4: finest pair 2.06, fit 2.31: pass, flagged.
		{"pass but coarse grids off", h, powerLaw(h, 1, 2, 1000, 4), 2, 0.2, StatusPass, true, 2.06},
		{"one grid", h[:1], powerLaw(h[:1], 1, 2), 2, 0.1, StatusInsufficient, false, 0},
		{"zero errors", h, []float64{1e-3, 0, 0, 0}, 2, 0.1, StatusInsufficient, false, 0},
		{"bad tol", h, powerLaw(h, 3, 2), 2, 0, StatusInsufficient, false, 0},
	}
	for _, c := range cases {
		v := Verdict(c.h, c.e, c.design, c.tol)
		if v.Status != c.status || v.PreAsymptotic != c.preAsymptotic {
			t.Errorf("%s: status %q pre-asymptotic %v, want %q %v (%s)", c.name, v.Status, v.PreAsymptotic, c.status, c.preAsymptotic, v.Summary)
		}
		if c.status != StatusInsufficient && math.Abs(v.Finest-c.finestApproxTo) > 0.01 {
			t.Errorf("%s: finest order %g, want about %g", c.name, v.Finest, c.finestApproxTo)
		}
		if v.Summary == "" {
			t.Errorf("%s: empty summary", c.name)
		}
	}
}

func TestDesignOrder(t *testing.T) {
	// Common practice: first-order Godunov 1, MUSCL-type second-order 2.
	for s, want := range map[string]float64{"godunov": 1, "muscl": 2} {
		if p, ok := DesignOrder(s); !ok || p != want {
			t.Errorf("DesignOrder(%q) = %g %v", s, p, ok)
		}
	}
	if _, ok := DesignOrder("weno"); ok {
		t.Error("unknown scheme accepted")
	}
}

func ExampleVerdict() {
	h := []float64{1.0 / 32, 1.0 / 64, 1.0 / 128, 1.0 / 256}
	e := []float64{4.1e-3, 1.1e-3, 2.8e-4, 7.1e-5}
	design, _ := DesignOrder("muscl")
	v := Verdict(h, e, design, 0.15)
	fmt.Println(v.Summary)
	// Output:
	// pass: finest-pair order 1.98, fitted 1.95 ± 0.014 over 4 grids, design 2 ± 0.15
}

// The pass band of a limited second-order scheme on a smooth case is
// [1.85, 2.6] (docs/references.md §4, common practice): an order of 2.4 on the
// finest pair passes it and fails the symmetric band 2 ± 0.15.
func TestVerdictBand(t *testing.T) {
	h := []float64{0.4, 0.2, 0.1}
	e := []float64{1, 1.0 / math.Pow(2, 2.4), 1.0 / math.Pow(2, 4.8)}
	if v := VerdictBand(h, e, 2, 0.15, 0.6); v.Status != StatusPass {
		t.Errorf("band [1.85, 2.6]: %s (%s)", v.Status, v.Summary)
	}
	if v := Verdict(h, e, 2, 0.15); v.Status != StatusHigh {
		t.Errorf("band 2 ± 0.15: %s (%s)", v.Status, v.Summary)
	}
	e = []float64{1, 1.0 / math.Pow(2, 1.8), 1.0 / math.Pow(2, 3.6)}
	if v := VerdictBand(h, e, 2, 0.15, 0.6); v.Status != StatusLow {
		t.Errorf("order 1.8 in band [1.85, 2.6]: %s (%s)", v.Status, v.Summary)
	}
}

// TestVerdictWarnings: close grids (Celik et al. 2008: ratio >= 1.3), an
// order above twice the design order or negative, and two grids only are
// said out loud; a clean study says nothing.
func TestVerdictWarnings(t *testing.T) {
	h := []float64{1.0 / 32, 1.0 / 64, 1.0 / 128}
	cases := []struct {
		name string
		h, e []float64
		want string
	}{
		{"clean second order", h, powerLaw(h, 3, 2), ""},
		{"ratio 1.01", []float64{1.0 / 100, 1.0 / 101, 1.0 / 102}, powerLaw([]float64{1.0 / 100, 1.0 / 101, 1.0 / 102}, 3, 2), "below 1.3"},
		{"order 5 of a second-order scheme", h, powerLaw(h, 3, 5), "twice the design order"},
		{"diverging", h, powerLaw(h, 3, -0.5), "negative"},
		{"two grids", h[:2], powerLaw(h[:2], 3, 2), "two grids"},
		{"one grid", h[:1], powerLaw(h[:1], 3, 2), "fewer than"},
	}
	for _, c := range cases {
		v := Verdict(c.h, c.e, 2, 0.15)
		w := fmt.Sprint(v.Warnings)
		if (c.want == "") != (len(v.Warnings) == 0) || !strings.Contains(w, c.want) {
			t.Errorf("%s: warnings %s, want %q", c.name, w, c.want)
		}
	}
}
