package verify

import (
	"errors"
	"fmt"
	"math"
	"testing"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat"
)

func TestObservedOrdersPowerLaw(t *testing.T) {
	// e = C h^p exactly gives p on every pair, whichever way the grids run.
	for _, p := range []float64{0.5, 1, 2, 2.7} {
		h := []float64{0.1, 0.05, 0.025, 0.0125}
		e := make([]float64, len(h))
		for i := range h {
			e[i] = 3.7 * math.Pow(h[i], p)
		}
		got := ObservedOrders(h, e)
		if len(got) != 3 {
			t.Fatalf("p=%g: %d orders, want 3", p, len(got))
		}
		for i, q := range got {
			if math.Abs(q-p) > 1e-12 {
				t.Errorf("p=%g: pair %d order %.15g", p, i, q)
			}
		}
		// Reversed order, non-uniform ratio.
		h2 := []float64{0.01, 0.03, 0.07}
		e2 := []float64{2 * math.Pow(0.01, p), 2 * math.Pow(0.03, p), 2 * math.Pow(0.07, p)}
		for i, q := range ObservedOrders(h2, e2) {
			if math.Abs(q-p) > 1e-12 {
				t.Errorf("p=%g non-uniform: pair %d order %.15g", p, i, q)
			}
		}
	}
}

func TestObservedOrdersUndefined(t *testing.T) {
	cases := []struct {
		name string
		h, e []float64
	}{
		{"zero error", []float64{0.2, 0.1}, []float64{1, 0}},
		{"negative error", []float64{0.2, 0.1}, []float64{-1, 0.5}},
		{"equal spacing", []float64{0.1, 0.1}, []float64{1, 0.5}},
		{"infinite error", []float64{0.2, 0.1}, []float64{math.Inf(1), 0.5}},
		{"NaN error", []float64{0.2, 0.1}, []float64{math.NaN(), 0.5}},
		{"zero spacing", []float64{0, 0.1}, []float64{1, 0.5}},
	}
	for _, c := range cases {
		if got := ObservedOrders(c.h, c.e); len(got) != 1 || !math.IsNaN(got[0]) {
			t.Errorf("%s: got %v, want [NaN]", c.name, got)
		}
	}
	if got := ObservedOrders([]float64{1}, []float64{1}); got != nil {
		t.Errorf("one grid: got %v, want nil", got)
	}
}

// TestFitOrderAgainstGonum checks the fit against gonum's
// stat.LinearRegression and its standard errors against the covariance
// matrix s^2 (X^T X)^-1 of ordinary least squares, formed and inverted with
// gonum/mat (an independent computation of the same estimator).
func TestFitOrderAgainstGonum(t *testing.T) {
	h := []float64{1.0 / 16, 1.0 / 32, 1.0 / 64, 1.0 / 128, 1.0 / 256}
	wobble := []float64{1.07, 0.96, 1.03, 0.98, 1.01} // invented scatter around e = 0.8 h^2
	e := make([]float64, len(h))
	x := make([]float64, len(h))
	y := make([]float64, len(h))
	for i := range h {
		e[i] = 0.8 * h[i] * h[i] * wobble[i]
		x[i], y[i] = math.Log(h[i]), math.Log(e[i])
	}
	fit, err := FitOrder(h, e)
	if err != nil {
		t.Fatal(err)
	}
	alpha, beta := stat.LinearRegression(x, y, nil, false)
	if math.Abs(fit.Order-beta) > 1e-12 || math.Abs(fit.LnC-alpha) > 1e-12 {
		t.Errorf("fit p=%.15g lnC=%.15g, gonum beta=%.15g alpha=%.15g", fit.Order, fit.LnC, beta, alpha)
	}
	if r2 := stat.RSquared(x, y, nil, alpha, beta); math.Abs(fit.R2-r2) > 1e-12 {
		t.Errorf("R2 %.15g, gonum %.15g", fit.R2, r2)
	}

	n := len(x)
	X := mat.NewDense(n, 2, nil)
	for i := range x {
		X.Set(i, 0, 1)
		X.Set(i, 1, x[i])
	}
	var xtx, inv mat.Dense
	xtx.Mul(X.T(), X)
	if err := inv.Inverse(&xtx); err != nil {
		t.Fatal(err)
	}
	var ssr float64
	for i := range x {
		r := y[i] - alpha - beta*x[i]
		ssr += r * r
	}
	s2 := ssr / float64(n-2)
	seA, seB := math.Sqrt(s2*inv.At(0, 0)), math.Sqrt(s2*inv.At(1, 1))
	if math.Abs(fit.OrderSE-seB) > 1e-10*seB || math.Abs(fit.LnCSE-seA) > 1e-10*seA {
		t.Errorf("SE(p)=%.12g SE(lnC)=%.12g, covariance matrix gives %.12g %.12g", fit.OrderSE, fit.LnCSE, seB, seA)
	}
	if fit.DOF != 3 || fit.N != 5 {
		t.Errorf("N=%d DOF=%d, want 5 3", fit.N, fit.DOF)
	}
	if math.Abs(fit.CSE-fit.C*fit.LnCSE) > 1e-15 {
		t.Errorf("CSE %g != C*LnCSE %g", fit.CSE, fit.C*fit.LnCSE)
	}
}

func TestFitOrderTwoGrids(t *testing.T) {
	fit, err := FitOrder([]float64{0.1, 0.2}, []float64{0.01, 0.04})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(fit.Order-2) > 1e-12 || fit.DOF != 0 || fit.OrderSE != 0 || fit.R2 != 1 {
		t.Errorf("two grids: %+v", fit)
	}
}

func TestFitOrderErrors(t *testing.T) {
	cases := []struct {
		name string
		h, e []float64
	}{
		{"one grid", []float64{0.1}, []float64{1}},
		{"length", []float64{0.1, 0.2}, []float64{1}},
		{"zero error", []float64{0.1, 0.2}, []float64{0, 1}},
		{"negative spacing", []float64{-0.1, 0.2}, []float64{1, 2}},
		{"equal spacings", []float64{0.1, 0.1, 0.1}, []float64{1, 2, 3}},
		{"NaN", []float64{0.1, 0.2}, []float64{math.NaN(), 1}},
	}
	for _, c := range cases {
		if _, err := FitOrder(c.h, c.e); !errors.Is(err, ErrFitData) {
			t.Errorf("%s: err = %v, want ErrFitData", c.name, err)
		}
	}
}

func ExampleObservedOrders() {
	h := []float64{1.0 / 32, 1.0 / 64, 1.0 / 128}
	e := []float64{4.1e-3, 1.1e-3, 2.8e-4}
	for _, p := range ObservedOrders(h, e) {
		fmt.Printf("%.2f\n", p)
	}
	// Output:
	// 1.90
	// 1.97
}

func ExampleFitOrder() {
	h := []float64{1.0 / 32, 1.0 / 64, 1.0 / 128, 1.0 / 256}
	e := []float64{4.1e-3, 1.1e-3, 2.8e-4, 7.1e-5}
	fit, err := FitOrder(h, e)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("p = %.3f ± %.3f\n", fit.Order, fit.OrderSE)
	// Output:
	// p = 1.953 ± 0.014
}

func BenchmarkFitOrder(b *testing.B) {
	h := []float64{1.0 / 32, 1.0 / 64, 1.0 / 128, 1.0 / 256}
	e := []float64{4.1e-3, 1.1e-3, 2.8e-4, 7.1e-5}
	for b.Loop() {
		if _, err := FitOrder(h, e); err != nil {
			b.Fatal(err)
		}
	}
}
