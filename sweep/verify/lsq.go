package verify

import (
	"fmt"
	"math"
	"slices"
)

// Fits of the least-squares uncertainty, named by the error expansion
// phi_i - phi_0 they assume (Eça & Hoekstra 2014, docs/references.md §14).
const (
	FitPower       = "power"        // alpha h^p, p free
	FitFirst       = "first"        // alpha h
	FitSecond      = "second"       // alpha h^2
	FitFirstSecond = "first+second" // alpha_1 h + alpha_2 h^2
	FitDataRange   = "data-range"   // no fit describes the data: the data range
)

// Order range and factors of safety of the least-squares uncertainty
// (Eça & Hoekstra 2014, recalled from memory; docs/references.md §14).
const (
	// LSQOrderLow and LSQOrderHigh bound the observed orders that are
	// trusted for a formally second-order method: 0.5 <= p < 2.1.
	LSQOrderLow  = 0.5
	LSQOrderHigh = 2.1
	// SafetyLSQTrusted is Fs when the power fit is used with a trusted order.
	SafetyLSQTrusted = 1.25
	// SafetyLSQOther is Fs for the other fits, and the factor of the data
	// range when no fit is used.
	SafetyLSQOther = 3.0
)

// UncertaintyOptions tunes LeastSquaresUncertainty. The zero value is the
// procedure for a formally second-order method.
type UncertaintyOptions struct {
	// OrderLow and OrderHigh bound the trusted observed orders,
	// OrderLow <= p < OrderHigh. Zero selects LSQOrderLow, and for
	// OrderHigh LSQOrderHigh, or DesignOrder + 0.1 when DesignOrder is set
	// (our extension of the paper's second-order range to other orders).
	OrderLow, OrderHigh float64
	// DesignOrder is the formal order of the scheme, 0 when unknown.
	DesignOrder float64
}

// ExpansionFit is one least-squares fit phi_i ≈ phi_0 + (error expansion).
type ExpansionFit struct {
	Fit          string  `json:"fit"` // FitPower, FitFirst, FitSecond or FitFirstSecond
	Weighted     bool    `json:"weighted"`
	Extrapolated float64 `json:"extrapolated"` // phi_0
	// Coef is alpha (alpha_1, alpha_2 for FitFirstSecond) with h in units
	// of the finest spacing h_1.
	Coef  []float64 `json:"coef"`
	Order *float64  `json:"order,omitempty"` // p, FitPower only
	Sigma float64   `json:"sigma"`           // standard deviation of the fit
	DOF   int       `json:"dof"`             // grids less parameters

	exps []float64 // exponents of the expansion's terms
}

// value is the fitted phi at x = h/h_1.
func (f *ExpansionFit) value(x float64) float64 {
	v := f.Extrapolated
	for k, e := range f.exps {
		v += f.Coef[k] * math.Pow(x, e)
	}
	return v
}

// Uncertainty is the result of LeastSquaresUncertainty: the numerical
// uncertainty U of each grid's value, finest first, and how it was found.
// No field is NaN or infinite; a quantity the data do not define is nil.
type Uncertainty struct {
	H   []float64 `json:"h"`   // sorted finest first
	Phi []float64 `json:"phi"` // in the order of H
	// Fit is the chosen fit (FitDataRange when none is used); Weighted
	// whether its weighted version was chosen.
	Fit      string `json:"fit"`
	Weighted bool   `json:"weighted"`
	// Order is the observed order p of the best power fit, nil when the
	// residual has no minimum for p in [0.05, 16] or the data are constant.
	Order        *float64 `json:"order,omitempty"`
	Extrapolated *float64 `json:"extrapolated,omitempty"` // phi_0 of the chosen fit
	Sigma        float64  `json:"sigma"`                  // its standard deviation
	// DataRange is Delta_M = max phi_i - min phi_i.
	DataRange float64 `json:"data_range"`
	// SafetyFactor is the factor on the error estimate: 1.25 or 3, or
	// 3 sigma/Delta_phi for a poor fit; on the data range for FitDataRange.
	SafetyFactor float64 `json:"safety_factor"`
	// Uncertainty is U_1/|phi_1|, a fraction (nil when phi_1 = 0), and
	// UncertaintyAbs is U_1, of the finest grid.
	Uncertainty    *float64       `json:"uncertainty,omitempty"`
	UncertaintyAbs float64        `json:"uncertainty_abs"`
	U              []float64      `json:"u"`    // U_i of every grid, in the order of H
	Fits           []ExpansionFit `json:"fits"` // every fit that could be made
	Notes          []string       `json:"notes,omitempty"`
	Warnings       []string       `json:"warnings,omitempty"`
}

// LeastSquaresUncertainty estimates the numerical uncertainty of a
// functional phi computed on grids of spacing h (same length, at least
// three, any order), after L. Eça and M. Hoekstra, "A procedure for the
// estimation of the numerical uncertainty of CFD calculations based on grid
// refinement studies", J. Comput. Phys. 262 (2014) 104-130. The procedure as
// implemented (details recalled from memory, docs/references.md §14):
//
//  1. Fit, with x_i = h_i/h_1, the expansions
//     phi_i = phi_0 + alpha x_i^p (power, p free), phi_0 + alpha x_i (first),
//     phi_0 + alpha x_i^2 (second), phi_0 + alpha_1 x_i + alpha_2 x_i^2
//     (first+second), each by least squares unweighted and weighted with
//     w_i = (1/h_i) / sum_j (1/h_j), and keep of each the version with the
//     smaller standard deviation
//     sigma = sqrt(sum r_i^2/(n - m)) or sqrt(n sum w_i r_i^2/(n - m))
//     (n grids, m parameters; sigma = 0 when n = m).
//  2. Data that oscillate (successive differences change sign) use the data
//     range: U_i = 3 Delta_M, Delta_M = max phi - min phi.
//  3. If the power fit's order lies in [OrderLow, OrderHigh) (0.5 <= p < 2.1
//     for a second-order method) the error estimate is
//     eps_i = |phi_fit(x_i) - phi_0| of the power fit and Fs = 1.25;
//     otherwise it is that of whichever of first, second and first+second
//     has the smallest sigma (fits with n = m excluded) and Fs = 3; when
//     none can be made, the data range as in step 2.
//  4. With Delta_phi = Delta_M/(n - 1): U_i = Fs eps_i + sigma + |phi_i - phi_fit(x_i)|
//     when sigma < Delta_phi, else U_i = 3 sigma/Delta_phi (eps_i + sigma + |phi_i - phi_fit(x_i)|).
//
// For phi = phi_0 + C h^p exactly with p in the trusted range, U_1 is the
// GCI of Celik et al. 2008 with Fs = 1.25 (times |phi_1|). Constant data
// give U = 0. Three grids are accepted with a warning: the three-parameter
// fits then pass through the data and have no standard deviation.
//
// It returns an error wrapping ErrGCIInput for input GCI rejects, fewer
// than three grids, values whose range overflows float64, or an order range
// that is not 0 <= OrderLow < OrderHigh.
func LeastSquaresUncertainty(phi, h []float64, opts UncertaintyOptions) (*Uncertainty, error) {
	hs, ps, err := checkGrids(phi, h, 3)
	if err != nil {
		return nil, err
	}
	lo, hi, err := opts.orderRange()
	if err != nil {
		return nil, err
	}
	n := len(hs)
	u := &Uncertainty{H: hs, Phi: ps, U: make([]float64, n)}
	if n < 4 {
		u.Warnings = append(u.Warnings, "three grids: fewer than the four the least-squares procedure needs to measure scatter; the three-parameter fits pass through the data")
	}
	u.Warnings = slices.Concat(u.Warnings, ratioWarnings(hs, 1), roundOffWarnings(ps, 1))
	u.DataRange = slices.Max(ps) - slices.Min(ps)
	if math.IsInf(u.DataRange, 0) {
		return nil, fmt.Errorf("%w: the values span more than the float64 range", ErrGCIInput)
	}
	if u.DataRange == 0 {
		u.Fit, u.Extrapolated, u.Uncertainty = FitDataRange, num(ps[0]), num(0)
		u.Notes = append(u.Notes, "all values are equal: no grid dependence is visible, U = 0")
		return u, nil
	}
	x := scaledSpacings(hs)
	w := fitWeights(x)
	power, alt, edge := bestFits(x, ps, w, u)
	switch edge {
	case fitAbove:
		u.Warnings = append(u.Warnings, fmt.Sprintf("the power fit's residual falls until the largest order scanned (%g): the observed order is implausibly high", powerOrderMax))
	case fitBelow:
		u.Warnings = append(u.Warnings, fmt.Sprintf("the power fit's residual falls until the smallest order scanned (%g): the values barely converge, if at all", powerOrderMin))
	}
	if power != nil {
		u.Order = power.Order
		u.Warnings = append(u.Warnings, orderWarnings(u.Order, opts.DesignOrder)...)
	}
	var chosen *ExpansionFit
	fs := SafetyLSQOther
	switch {
	case !monotone(ps):
		u.Notes = append(u.Notes, "the values oscillate under refinement: the data range is used")
	case power != nil && *power.Order >= lo && *power.Order < hi:
		chosen, fs = power, SafetyLSQTrusted
	default:
		if power != nil {
			u.Notes = append(u.Notes, fmt.Sprintf("observed order %.4g is outside [%g, %g): the error is estimated from fixed-order expansions with Fs = 3", *power.Order, lo, hi))
		} else {
			u.Notes = append(u.Notes, "the power fit has no order in [0.05, 16]: the error is estimated from fixed-order expansions with Fs = 3")
		}
		chosen = alt
	}
	if chosen != nil {
		u.Sigma = chosen.Sigma
	} else if power != nil {
		u.Sigma = power.Sigma // of the fit the data range replaces
	}
	if chosen == nil {
		u.useDataRange()
		return u, nil
	}
	u.Fit, u.Weighted, u.Extrapolated, u.Sigma = chosen.Fit, chosen.Weighted, num(chosen.Extrapolated), chosen.Sigma
	dphi := u.DataRange / float64(n-1)
	poor := u.Sigma >= dphi
	if poor {
		fs = SafetyLSQOther * u.Sigma / dphi
		u.Notes = append(u.Notes, fmt.Sprintf("standard deviation %.3g is not below the mean spacing of the data %.3g: U = 3 sigma/Delta_phi (eps + sigma + |residual|)", u.Sigma, dphi))
	}
	u.SafetyFactor = fs
	for i := range ps {
		fit := chosen.value(x[i])
		eps := math.Abs(fit - chosen.Extrapolated)
		res := math.Abs(ps[i] - fit)
		if poor {
			u.U[i] = fs * (eps + u.Sigma + res)
		} else {
			u.U[i] = fs*eps + u.Sigma + res
		}
	}
	if !allFinite(u.U) || math.IsInf(*u.Extrapolated, 0) || math.IsNaN(*u.Extrapolated) {
		u.Notes = append(u.Notes, "the fitted uncertainty overflows float64: the data range is used")
		u.useDataRange()
		return u, nil
	}
	u.finish()
	return u, nil
}

// orderRange returns the trusted order range of the options.
func (o UncertaintyOptions) orderRange() (lo, hi float64, err error) {
	lo, hi = o.OrderLow, o.OrderHigh
	if lo == 0 {
		lo = LSQOrderLow
	}
	if hi == 0 {
		hi = LSQOrderHigh
		if o.DesignOrder > 0 {
			hi = o.DesignOrder + 0.1
		}
	}
	d := o.DesignOrder
	if !(lo >= 0 && hi > lo) || math.IsInf(hi, 0) || math.IsNaN(d) || math.IsInf(d, 0) || d < 0 {
		return 0, 0, fmt.Errorf("%w: order range [%g, %g) or design order %g unusable", ErrGCIInput, lo, hi, d)
	}
	return lo, hi, nil
}

// useDataRange sets U_i = 3 Delta_M for every grid.
func (u *Uncertainty) useDataRange() {
	u.Fit, u.Weighted, u.Extrapolated, u.SafetyFactor = FitDataRange, false, nil, SafetyLSQOther
	for i := range u.U {
		u.U[i] = SafetyLSQOther * u.DataRange
	}
	u.finish()
	if math.IsInf(u.UncertaintyAbs, 0) {
		u.UncertaintyAbs = math.MaxFloat64
		for i := range u.U {
			u.U[i] = math.MaxFloat64
		}
		u.Uncertainty = nil
		u.Notes = append(u.Notes, "3 Delta_M overflows float64 and is given as the largest float64")
	}
}

// finish sets the finest grid's uncertainty, absolute and relative.
func (u *Uncertainty) finish() {
	u.UncertaintyAbs = u.U[0]
	u.Uncertainty = nil
	if u.Phi[0] != 0 {
		u.Uncertainty = num(u.U[0] / math.Abs(u.Phi[0]))
	} else {
		u.Notes = append(u.Notes, "phi_1 = 0: the relative uncertainty is undefined")
	}
	if u.Uncertainty != nil && math.IsInf(*u.Uncertainty, 0) {
		u.Uncertainty = nil
		u.Notes = append(u.Notes, "the relative uncertainty overflows float64 and is omitted")
	}
}

// fitWeights returns w_i = (1/x_i) / sum_j (1/x_j), which favour the fine
// grids (Eça & Hoekstra 2014, recalled from memory).
func fitWeights(x []float64) []float64 {
	w := make([]float64, len(x))
	var sum float64
	for i := range x {
		w[i] = 1 / x[i]
		sum += w[i]
	}
	for i := range w {
		w[i] /= sum
	}
	return w
}

// bestFits makes every fit, unweighted and weighted, records them in u.Fits
// and returns the better-sigma power fit and the smallest-sigma fixed-order
// fit with at least one degree of freedom (either nil when none could be
// made). Fits that overflow float64 are left out. When no power fit has its minimum inside the orders scanned, edge
// says at which end the unweighted one lies (fitBelow or fitAbove).
func bestFits(x, phi, w []float64, u *Uncertainty) (power, alt *ExpansionFit, edge int) {
	n := len(x)
	better := func(best **ExpansionFit, f ExpansionFit) {
		if !finiteFit(f) {
			return
		}
		u.Fits = append(u.Fits, f)
		if *best == nil || f.Sigma < (*best).Sigma {
			*best = &u.Fits[len(u.Fits)-1]
		}
	}
	u.Fits = make([]ExpansionFit, 0, 8) // no reallocation: the pointers above stay valid
	for _, wt := range [][]float64{nil, w} {
		pf := powerFit(x, phi, wt)
		if wt == nil && (pf.status == fitAbove || pf.status == fitBelow) {
			edge = pf.status
		}
		if pf.status != fitOK {
			continue
		}
		better(&power, ExpansionFit{Fit: FitPower, Weighted: wt != nil, Extrapolated: pf.phi0,
			Coef: []float64{pf.alpha}, Order: num(pf.p), Sigma: fitSigma(pf.s, n, 3, wt != nil),
			DOF: n - 3, exps: []float64{pf.p}})
	}
	for _, e := range []struct {
		name string
		exps []float64
	}{{FitFirst, []float64{1}}, {FitSecond, []float64{2}}, {FitFirstSecond, []float64{1, 2}}} {
		m := len(e.exps) + 1
		for _, wt := range [][]float64{nil, w} {
			c, s, ok := polyFit(x, phi, wt, e.exps)
			if !ok {
				continue
			}
			f := ExpansionFit{Fit: e.name, Weighted: wt != nil, Extrapolated: c[0], Coef: c[1:],
				Sigma: fitSigma(s, n, m, wt != nil), DOF: n - m, exps: e.exps}
			if n > m {
				better(&alt, f)
			} else if finiteFit(f) {
				u.Fits = append(u.Fits, f)
			}
		}
	}
	if power != nil {
		edge = fitOK
	}
	return power, alt, edge
}

// finiteFit reports whether every number of f is finite; a fit that
// overflows float64 is not used.
func finiteFit(f ExpansionFit) bool {
	return allFinite(f.Coef) && allFinite([]float64{f.Extrapolated, f.Sigma}) && (f.Order == nil || allFinite([]float64{*f.Order}))
}

// fitSigma is the standard deviation of a fit of m parameters to n values
// with residual sum s (sum w_i r_i^2 with sum w_i = 1 when weighted); 0
// when n <= m.
func fitSigma(s float64, n, m int, weighted bool) float64 {
	if n <= m {
		return 0
	}
	if weighted {
		s *= float64(n)
	}
	return math.Sqrt(s / float64(n-m))
}

// polyFit fits phi_i ≈ c_0 + sum_k c_k x_i^exps[k-1] by (weighted, w nil:
// unweighted) least squares through the normal equations, solved by
// Gaussian elimination with partial pivoting; it returns the coefficients,
// the residual sum sum w_i r_i^2, and false when the system is singular or
// overflows.
func polyFit(x, phi, w []float64, exps []float64) (c []float64, s float64, ok bool) {
	m := len(exps) + 1
	var a [3][4]float64 // augmented normal matrix, m <= 3
	basis := func(i, k int) float64 {
		if k == 0 {
			return 1
		}
		return math.Pow(x[i], exps[k-1])
	}
	for i := range x {
		wi := weight(w, i)
		for j := 0; j < m; j++ {
			bj := basis(i, j)
			for k := 0; k < m; k++ {
				a[j][k] += wi * bj * basis(i, k)
			}
			a[j][m] += wi * bj * phi[i]
		}
	}
	for col := 0; col < m; col++ {
		piv := col
		for r := col + 1; r < m; r++ {
			if math.Abs(a[r][col]) > math.Abs(a[piv][col]) {
				piv = r
			}
		}
		a[col], a[piv] = a[piv], a[col]
		if a[col][col] == 0 || math.IsNaN(a[col][col]) || math.IsInf(a[col][col], 0) {
			return nil, 0, false
		}
		for r := col + 1; r < m; r++ {
			f := a[r][col] / a[col][col]
			for k := col; k <= m; k++ {
				a[r][k] -= f * a[col][k]
			}
		}
	}
	c = make([]float64, m)
	for j := m - 1; j >= 0; j-- {
		v := a[j][m]
		for k := j + 1; k < m; k++ {
			v -= a[j][k] * c[k]
		}
		c[j] = v / a[j][j]
	}
	for i := range x {
		r := phi[i]
		for k := 0; k < m; k++ {
			r -= c[k] * basis(i, k)
		}
		s += weight(w, i) * r * r
	}
	if !allFinite(c) || math.IsNaN(s) || math.IsInf(s, 0) {
		return nil, 0, false
	}
	return c, s, true
}

// monotone reports whether the successive differences of v (sorted by h)
// never change sign; zero differences are skipped.
func monotone(v []float64) bool {
	sign := 0.0
	for i := 1; i < len(v); i++ {
		d := v[i] - v[i-1]
		if d == 0 {
			continue
		}
		if sign != 0 && (d > 0) != (sign > 0) {
			return false
		}
		sign = d
	}
	return true
}

func allFinite(v []float64) bool {
	for _, x := range v {
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return false
		}
	}
	return true
}
