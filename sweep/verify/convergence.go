package verify

import (
	"errors"
	"fmt"
	"math"
	"sort"
)

// ObservedOrders returns the observed order of accuracy of each successive
// pair of a grid sequence with spacings h and errors e (same length, any
// order):
//
//	p_i = ln(e_i / e_{i+1}) / ln(h_i / h_{i+1}),   i = 0 .. len(h)-2,
//
// which is ln(E_coarse/E_fine) / ln(h_coarse/h_fine) whichever of the two is
// coarser. A pair whose order is undefined (an error or spacing that is not
// positive and finite, or two equal spacings) gives NaN; Verdict and FitOrder
// treat such data as unusable. It panics if len(h) != len(e).
func ObservedOrders(h, e []float64) []float64 {
	if len(h) != len(e) {
		panic("sweep: ObservedOrders: len(h) != len(e)")
	}
	if len(h) < 2 {
		return nil
	}
	p := make([]float64, len(h)-1)
	for i := range p {
		p[i] = pairOrder(h[i], h[i+1], e[i], e[i+1])
	}
	return p
}

// pairOrder is the observed order between two grids, NaN when undefined.
func pairOrder(h1, h2, e1, e2 float64) float64 {
	if !positive(h1) || !positive(h2) || !positive(e1) || !positive(e2) || h1 == h2 {
		return math.NaN()
	}
	p := math.Log(e1/e2) / math.Log(h1/h2)
	if math.IsInf(p, 0) || math.IsNaN(p) {
		return math.NaN()
	}
	return p
}

func positive(x float64) bool { return x > 0 && !math.IsInf(x, 1) }

// Fit is the least-squares fit of ln E = ln C + p ln h over a grid sequence.
type Fit struct {
	Order   float64 `json:"order"`    // p
	OrderSE float64 `json:"order_se"` // standard error of p
	LnC     float64 `json:"ln_c"`     // ln C
	LnCSE   float64 `json:"ln_c_se"`  // standard error of ln C
	C       float64 `json:"c"`        // C = exp(ln C)
	CSE     float64 `json:"c_se"`     // standard error of C to first order: C * LnCSE
	N       int     `json:"n"`        // grids in the fit
	DOF     int     `json:"dof"`      // residual degrees of freedom, N - 2
	R2      float64 `json:"r2"`       // coefficient of determination (1 when DOF = 0)
}

// ErrFitData is returned (wrapped) by FitOrder for data that cannot be fitted.
var ErrFitData = errors.New("cannot fit order")

// FitOrder fits ln e_i = ln C + p ln h_i by ordinary least squares over all
// grids and returns p and ln C with their standard errors,
//
//	s^2 = sum r_i^2 / (n-2),  SE(p) = s / sqrt(Sxx),  SE(ln C) = s sqrt(1/n + xbar^2/Sxx),
//
// where x = ln h and Sxx = sum (x_i - xbar)^2 (simple linear regression,
// common practice). With two grids the line passes through both points,
// DOF is 0 and both standard errors are reported as 0. The order of the
// grids does not matter. It returns an error wrapping ErrFitData when fewer
// than two grids are given, the lengths differ, a value is not positive and
// finite, or all spacings are equal.
func FitOrder(h, e []float64) (Fit, error) {
	if len(h) != len(e) {
		return Fit{}, fmt.Errorf("%w: %d spacings but %d errors", ErrFitData, len(h), len(e))
	}
	n := len(h)
	if n < 2 {
		return Fit{}, fmt.Errorf("%w: need at least 2 grids, have %d", ErrFitData, n)
	}
	x := make([]float64, n)
	y := make([]float64, n)
	for i := range h {
		if !positive(h[i]) {
			return Fit{}, fmt.Errorf("%w: spacing %d is %g, not positive and finite", ErrFitData, i, h[i])
		}
		if !positive(e[i]) {
			return Fit{}, fmt.Errorf("%w: error %d is %g, not positive and finite", ErrFitData, i, e[i])
		}
		x[i], y[i] = math.Log(h[i]), math.Log(e[i])
	}
	fn := float64(n)
	xbar, ybar, sxx, sxy, syy := lineSums(x, y)
	if sxx == 0 {
		return Fit{}, fmt.Errorf("%w: all spacings are equal", ErrFitData)
	}
	p := sxy / sxx
	a := ybar - p*xbar
	var ssr float64
	for i := range x {
		r := y[i] - (a + p*x[i])
		ssr += r * r
	}
	f := Fit{Order: p, LnC: a, C: math.Exp(a), N: n, DOF: n - 2, R2: 1}
	if f.DOF > 0 {
		s2 := ssr / float64(f.DOF)
		f.OrderSE = math.Sqrt(s2 / sxx)
		f.LnCSE = math.Sqrt(s2 * (1/fn + xbar*xbar/sxx))
		f.CSE = f.C * f.LnCSE
		if syy > 0 {
			f.R2 = 1 - ssr/syy
		}
	}
	if math.IsInf(f.C, 0) {
		f.C, f.CSE = math.MaxFloat64, 0 // keep the record JSON-safe; LnC holds the value
	}
	return f, nil
}

// lineSums returns the means of x and y and the sums of the products of
// their deviations, Sxx = sum (x_i - xbar)^2, Sxy = sum (x_i - xbar)(y_i -
// ybar), Syy = sum (y_i - ybar)^2: the least-squares line of y against x
// has slope Sxy/Sxx. x and y have the same length, at least one.
func lineSums(x, y []float64) (xbar, ybar, sxx, sxy, syy float64) {
	for i := range x {
		xbar += x[i]
		ybar += y[i]
	}
	xbar /= float64(len(x))
	ybar /= float64(len(y))
	for i := range x {
		dx, dy := x[i]-xbar, y[i]-ybar
		sxx += dx * dx
		sxy += dx * dy
		syy += dy * dy
	}
	return xbar, ybar, sxx, sxy, syy
}

// sortedByH returns copies of h and v ordered by increasing h (finest grid
// first); equal spacings keep their input order.
func sortedByH(h, v []float64) ([]float64, []float64) {
	idx := make([]int, len(h))
	for i := range idx {
		idx[i] = i
	}
	sort.SliceStable(idx, func(a, b int) bool { return h[idx[a]] < h[idx[b]] })
	hs := make([]float64, len(h))
	vs := make([]float64, len(v))
	for k, i := range idx {
		hs[k], vs[k] = h[i], v[i]
	}
	return hs, vs
}
