package verify

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"strconv"
)

// Convergence classes of a grid triple (see GCI).
const (
	Monotone    = "monotone"
	Oscillatory = "oscillatory"
	Divergent   = "divergent"
)

// Factors of safety of the GCI (Roache 1998, recalled from memory).
const (
	SafetyThreeGrids = 1.25 // three or more grids: the order is observed
	SafetyTwoGrids   = 3.0  // two grids: the order is assumed
)

// GCIOptions tunes GCI. The zero value is the procedure of Celik et al. 2008.
type GCIOptions struct {
	// SafetyFactor Fs; 0 selects SafetyThreeGrids or SafetyTwoGrids.
	SafetyFactor float64
	// AssumedOrder is the order used when only two grids are given (for
	// example the design order of the scheme). It is required then and must
	// not be set with three or more grids, whose order is observed.
	AssumedOrder float64
	// DesignOrder is the formal order of the scheme, 0 when unknown; it only
	// sharpens the warnings (an observed order above twice it is implausible).
	DesignOrder float64
}

// GCIRecord is the discretisation-error estimate from one grid triple (or
// the one pair of a two-grid study), grid 1 the finest. A quantity that the
// data do not define is nil (omitted from JSON) and Notes says why; no field
// is ever NaN or infinite.
type GCIRecord struct {
	Grids []int     `json:"grids"` // indices into GCIStudy.H, finest first
	H     []float64 `json:"h"`
	Phi   []float64 `json:"phi"`
	R21   float64   `json:"r21"`           // h2 / h1
	R32   *float64  `json:"r32,omitempty"` // h3 / h2

	// Ratio is R = eps21 / eps32 with eps21 = phi2 - phi1, eps32 = phi3 - phi2.
	Ratio *float64 `json:"ratio,omitempty"`
	// Convergence is Monotone, Oscillatory or Divergent; empty for two grids.
	Convergence string `json:"convergence,omitempty"`

	Order        *float64 `json:"order,omitempty"` // apparent order p
	OrderAssumed bool     `json:"order_assumed,omitempty"`
	Iterations   int      `json:"iterations,omitempty"` // fixed-point iterations for p

	SafetyFactor float64  `json:"safety_factor"`
	Extrapolated *float64 `json:"extrapolated,omitempty"` // phi_ext^21
	EApprox      *float64 `json:"e_approx,omitempty"`     // e_a^21 = |(phi1 - phi2)/phi1|
	EExtrap      *float64 `json:"e_extrap,omitempty"`     // e_ext^21 = |(phi_ext - phi1)/phi_ext|
	GCIFine      *float64 `json:"gci_fine,omitempty"`     // GCI_fine^21 = Fs e_a^21 / (r21^p - 1)
	GCI32        *float64 `json:"gci_32,omitempty"`       // Fs e_a^32 / (r32^p - 1)
	// AsymptoticRatio is GCI_32 / (r21^p GCI_21); near 1 in the asymptotic range.
	AsymptoticRatio *float64 `json:"asymptotic_ratio,omitempty"`

	Notes []string `json:"notes,omitempty"`
	// Warnings says where the record is implausible: close grids, orders out
	// of range, differences at round-off level, far from asymptotic, too few
	// grids (see the thresholds in warnings.go).
	Warnings []string `json:"warnings,omitempty"`
}

// LeastSquaresOrder is the fit phi_i = phi_0 + alpha (h_i/h_1)^p over all
// grids of a study (Eça & Hoekstra, J. Comput. Phys. 262, 2014, §3: the
// least-squares version of Richardson extrapolation). Nil fields are not
// defined by the data; Notes says why.
type LeastSquaresOrder struct {
	Order        *float64 `json:"order,omitempty"`
	Extrapolated *float64 `json:"extrapolated,omitempty"` // phi_0
	Alpha        *float64 `json:"alpha,omitempty"`        // with h in units of the finest spacing h_1
	ResidualRMS  float64  `json:"residual_rms"`
	Notes        []string `json:"notes,omitempty"`
	Warnings     []string `json:"warnings,omitempty"` // plausibility, see Warnings
}

// GCIStudy is the result of GCI: the grids sorted finest first, one record
// per successive triple (one record for two grids) and, with four or more
// grids, the least-squares order over all of them.
type GCIStudy struct {
	H            []float64          `json:"h"`
	Phi          []float64          `json:"phi"`
	Records      []GCIRecord        `json:"records"`
	LeastSquares *LeastSquaresOrder `json:"least_squares,omitempty"`
}

// ErrGCIInput is returned (wrapped) by GCI and SpacingsFromCells for input
// that no estimate can be made from.
var ErrGCIInput = errors.New("bad GCI input")

// checkGrids checks the input of GCI and LeastSquaresUncertainty and returns
// copies of h and phi sorted finest first.
func checkGrids(phi, h []float64, minGrids int) (hs, ps []float64, err error) {
	if len(phi) != len(h) {
		return nil, nil, fmt.Errorf("%w: %d values but %d grids", ErrGCIInput, len(phi), len(h))
	}
	if len(phi) < minGrids {
		return nil, nil, fmt.Errorf("%w: need at least %d grids, have %d", ErrGCIInput, minGrids, len(phi))
	}
	for i := range phi {
		if math.IsNaN(phi[i]) || math.IsInf(phi[i], 0) {
			return nil, nil, fmt.Errorf("%w: value %d is %g, not finite", ErrGCIInput, i+1, phi[i])
		}
		if !positive(h[i]) {
			return nil, nil, fmt.Errorf("%w: spacing %d is %g, not positive and finite", ErrGCIInput, i+1, h[i])
		}
	}
	hs, ps = sortedByH(h, phi)
	for i := 1; i < len(hs); i++ {
		if hs[i] == hs[i-1] {
			return nil, nil, fmt.Errorf("%w: two grids have the same spacing %g", ErrGCIInput, hs[i])
		}
		if d := ps[i] - ps[i-1]; math.IsInf(d, 0) {
			return nil, nil, fmt.Errorf("%w: values %g and %g differ by more than the float64 range", ErrGCIInput, ps[i-1], ps[i])
		}
	}
	return hs, ps, nil
}

// SpacingsFromCells returns the representative grid spacing of each grid
// from its cell count: h = (1/N)^(1/dim) (Celik et al. 2008, eq. 1, for a
// domain of unit size; only ratios of h enter the GCI).
func SpacingsFromCells(cells []float64, dim int) ([]float64, error) {
	if dim < 1 || dim > 3 {
		return nil, fmt.Errorf("%w: dimension %d is not 1, 2 or 3", ErrGCIInput, dim)
	}
	h := make([]float64, len(cells))
	for i, n := range cells {
		if !(n >= 1) || math.IsInf(n, 1) {
			return nil, fmt.Errorf("%w: cell count %d is %g, not >= 1 and finite", ErrGCIInput, i+1, n)
		}
		h[i] = math.Pow(1/n, 1/float64(dim))
	}
	return h, nil
}

// GCI estimates the discretisation error of a functional phi computed on
// grids of spacing h (same length, at least two, any order: the grids are
// sorted by h, finest first, and that order is reported back), following
// I. B. Celik et al., "Procedure for Estimation and Reporting of Uncertainty
// Due to Discretization in CFD Applications", J. Fluids Eng. 130(7) 078001,
// 2008. Refinement ratios need not be 2 nor constant.
//
// For each successive triple h1 < h2 < h3, with eps21 = phi2 - phi1,
// eps32 = phi3 - phi2, r21 = h2/h1, r32 = h3/h2 and s = sign(eps32/eps21):
//
//	p = |ln|eps32/eps21| + q(p)| / ln r21,  q(p) = ln((r21^p - s)/(r32^p - s))
//
// solved by fixed-point iteration from q = 0 (Celik et al. eq. 3), then
//
//	phi_ext^21 = (r21^p phi1 - phi2)/(r21^p - 1),  e_a^21 = |(phi1 - phi2)/phi1|,
//	e_ext^21 = |(phi_ext^21 - phi1)/phi_ext^21|,  GCI_fine^21 = Fs e_a^21/(r21^p - 1),
//
// GCI_32 = Fs e_a^32/(r32^p - 1) and the asymptotic-range ratio
// GCI_32/(r21^p GCI_21) (Roache 1998), which is 1 for phi = phi_0 + C h^p.
//
// Classification, with R = eps21/eps32 (F. Stern et al., J. Fluids Eng.
// 123(4), 2001: 0 < R < 1 monotone convergence, R < 0 oscillatory, R > 1
// divergence, for a constant refinement ratio): R < 0 is Oscillatory; R > 0
// is Monotone when 0 < R < ln r21 / ln r32 and Divergent otherwise. The bound
// is where phi = phi_0 + C h^p has a solution p > 0: for that model
// R(p) = (1 - r21^-p)/(r32^p - 1) falls strictly from ln r21/ln r32 at p -> 0
// to 0 at p -> infinity, so it reduces to R < 1 for equal ratios but, unlike
// R < 1, does not call first-order convergence on r21 = 1.5, r32 = 4/3
// (R = 1) divergent. Oscillatory triples are estimated with s = -1 as in
// Celik et al.; a note marks |R| >= 1, where the oscillation grows.
//
// Degenerate triples are results, not errors. All three values equal:
// Monotone, p undefined, phi_ext = phi1 and e_a, e_ext, GCI all 0 (no grid
// dependence is visible in the data). phi1 = phi2 but phi3 differs (R = 0):
// Monotone with p unbounded, so p, phi_ext and the GCI are omitted; e_a = 0.
// phi2 = phi3 but phi1 differs (R infinite) and every other Divergent
// triple: p and everything that depends on it are omitted. When the
// fixed-point iteration does not converge for a Monotone triple, p is found
// by bisection on the same equation (which then has exactly one root) and a
// note says so; for an Oscillatory one (or one whose apparent order is 0)
// it is omitted. A relative error whose denominator is 0 is omitted.
//
// With two grids the order is opts.AssumedOrder, Fs defaults to 3.0 and no
// classification, GCI_32 or asymptotic ratio exists. With four or more grids
// GCIStudy.LeastSquares holds the order fitted over all grids.
//
// GCI returns an error wrapping ErrGCIInput when the lengths differ, fewer
// than two grids are given, a value or spacing is not finite, a spacing is
// not positive, two spacings are equal, two successive values differ by more
// than the float64 range, or the options do not fit the number of grids.
func GCI(phi, h []float64, opts GCIOptions) (*GCIStudy, error) {
	hs, ps, err := checkGrids(phi, h, 2)
	if err != nil {
		return nil, err
	}
	fs := opts.SafetyFactor
	if math.IsNaN(fs) || math.IsInf(fs, 0) || fs < 0 {
		return nil, fmt.Errorf("%w: safety factor %g is not a finite non-negative number", ErrGCIInput, fs)
	}
	if d := opts.DesignOrder; math.IsNaN(d) || math.IsInf(d, 0) || d < 0 {
		return nil, fmt.Errorf("%w: design order %g is not a finite non-negative number", ErrGCIInput, d)
	}
	st := &GCIStudy{H: hs, Phi: ps}
	if len(hs) == 2 {
		p := opts.AssumedOrder
		if !positive(p) {
			return nil, fmt.Errorf("%w: two grids need an assumed order > 0 (for example the design order)", ErrGCIInput)
		}
		if fs == 0 {
			fs = SafetyTwoGrids
		}
		r := pairRecord(hs, ps, p, fs)
		r.Warnings = append([]string{"two grids: fewer than the three the procedure needs to observe the order; it is assumed"},
			append(ratioWarnings(hs, 1), roundOffWarnings(ps, 1)...)...)
		st.Records = []GCIRecord{r}
		return st, nil
	}
	if opts.AssumedOrder != 0 {
		return nil, fmt.Errorf("%w: an assumed order is only used with two grids; %d grids give an observed order", ErrGCIInput, len(hs))
	}
	if fs == 0 {
		fs = SafetyThreeGrids
	}
	for i := 0; i+2 < len(hs); i++ {
		r := tripleRecord(hs[i:i+3], ps[i:i+3], fs)
		r.Grids = []int{i, i + 1, i + 2}
		r.Warnings = slices.Concat(ratioWarnings(r.H, i+1), roundOffWarnings(r.Phi, i+1),
			orderWarnings(r.Order, opts.DesignOrder), asymptoticWarnings(r.AsymptoticRatio))
		st.Records = append(st.Records, r)
	}
	if len(hs) >= 4 {
		st.LeastSquares = leastSquaresOrder(hs, ps)
		st.LeastSquares.Warnings = orderWarnings(st.LeastSquares.Order, opts.DesignOrder)
	}
	return st, nil
}

func pairRecord(h, phi []float64, p, fs float64) GCIRecord {
	r := GCIRecord{
		Grids: []int{0, 1}, H: h[:2:2], Phi: phi[:2:2],
		R21: h[1] / h[0], Order: num(p), OrderAssumed: true, SafetyFactor: fs,
		Notes: []string{"two grids: the order is assumed, not observed, and convergence cannot be classified"},
	}
	r.estimate(phi[0], phi[1], phi[1]-phi[0], p)
	r.sanitise()
	return r
}

func tripleRecord(h, phi []float64, fs float64) GCIRecord {
	r := estimateTriple(h, phi, fs)
	r.sanitise()
	return r
}

func estimateTriple(h, phi []float64, fs float64) GCIRecord {
	phi1, phi2, phi3 := phi[0], phi[1], phi[2]
	r21, r32 := h[1]/h[0], h[2]/h[1]
	r := GCIRecord{H: h[:3:3], Phi: phi[:3:3], R21: r21, R32: num(r32), SafetyFactor: fs}
	eps21, eps32 := phi2-phi1, phi3-phi2
	if eps21 == 0 && eps32 == 0 {
		r.Convergence = Monotone
		r.Extrapolated, r.EApprox, r.EExtrap = num(phi1), num(0), num(0)
		r.GCIFine, r.GCI32 = num(0), num(0)
		r.note("all three values are equal: no grid dependence is visible, the order is undefined")
		return r
	}
	R := eps21 / eps32
	if eps32 == 0 || math.IsInf(R, 0) {
		r.Convergence = Divergent
		r.EApprox = relative(eps21, phi1)
		r.note("phi2 = phi3 but phi1 differs: the change between grids grows under refinement")
		return r
	}
	r.Ratio = num(R)
	if R == 0 {
		r.Convergence = Monotone
		r.EApprox = num(0)
		r.note("phi1 = phi2 but phi3 differs: the order is unbounded and no GCI can be formed; refine once more")
		return r
	}
	lr21, lr32 := math.Log(r21), math.Log(r32)
	var p float64
	var ok bool
	switch {
	case R < 0:
		r.Convergence = Oscillatory
		if R <= -1 {
			r.note("|R| >= 1: the oscillation does not decay under refinement")
		}
		p, r.Iterations, ok = celikOrder(R, lr21, lr32, -1)
		if !ok || !(p > 0) {
			r.EApprox = relative(eps21, phi1)
			if ok {
				r.note("the apparent order is 0: no error estimate can be formed")
			} else {
				r.note("the fixed-point iteration for the order did not converge")
			}
			return r
		}
	case R < lr21/lr32:
		r.Convergence = Monotone
		p, r.Iterations, ok = celikOrder(R, lr21, lr32, 1)
		if !ok || !(p > 0) {
			p = bisectMonotoneOrder(R, lr21, lr32)
			r.note("the fixed-point iteration for the order did not converge; p from bisection on the same equation")
		}
	default:
		r.Convergence = Divergent
		r.EApprox = relative(eps21, phi1)
		r.note("R = " + fmtG(R) + " >= ln r21 / ln r32 = " + fmtG(lr21/lr32) + ": no positive order fits, the grids diverge")
		return r
	}
	r.Order = num(p)
	r.estimate(phi1, phi2, eps21, p)
	r.GCI32 = ratioOrNil(fs*math.Abs(eps32/phi2), math.Expm1(p*lr32), phi2 != 0)
	if ea21 := math.Abs(eps21 / phi1); phi1 != 0 && phi2 != 0 && ea21 > 0 {
		// GCI_32/(r21^p GCI_21) = (e_a^32/e_a^21) (1 - r21^-p)/(r32^p - 1), free of overflow.
		ea32 := math.Abs(eps32 / phi2)
		r.AsymptoticRatio = num(ea32 / ea21 * -math.Expm1(-p*lr21) / math.Expm1(p*lr32))
	}
	return r
}

// estimate fills phi_ext, e_a, e_ext and GCI_fine of the pair (phi1, phi2)
// for order p, using phi_ext = phi1 - eps21/(r21^p - 1), which stays finite
// when r21^p overflows.
func (r *GCIRecord) estimate(phi1, phi2, eps21, p float64) {
	d := math.Expm1(p * math.Log(r.R21)) // r21^p - 1 > 0
	ext := phi1 - eps21/d
	r.Extrapolated = num(ext)
	r.EApprox = relative(eps21, phi1)
	r.EExtrap = relative(ext-phi1, ext)
	if r.EApprox != nil {
		r.GCIFine = num(r.SafetyFactor * *r.EApprox / d)
	} else {
		r.note("phi1 = 0: relative errors and the GCI are undefined")
	}
	if r.EExtrap == nil {
		r.note("phi_ext = 0: the extrapolated relative error is undefined")
	}
}

// celikOrder solves p ln r21 = |ln|1/R| + q(p)| by the fixed-point
// iteration of Celik et al. 2008, eq. 3, with q(p) = ln((r21^p - s)/(r32^p - s))
// evaluated in log form so that large p does not overflow.
func celikOrder(R, lr21, lr32, s float64) (p float64, iters int, ok bool) {
	const maxIter, tol = 500, 1e-13
	c := math.Log(math.Abs(1 / R))
	p = math.Abs(c) / lr21
	for iters = 1; iters <= maxIter; iters++ {
		var q float64
		if s > 0 {
			if p <= 0 {
				q = math.Log(lr21 / lr32) // the limit p -> 0
			} else {
				q = lnExpm1(p*lr21) - lnExpm1(p*lr32)
			}
		} else {
			q = softplus(p*lr21) - softplus(p*lr32)
		}
		next := math.Abs(c+q) / lr21
		if math.IsNaN(next) || math.IsInf(next, 0) {
			return 0, iters, false
		}
		if math.Abs(next-p) <= tol*(1+next) {
			return next, iters, true
		}
		p = next
	}
	return p, maxIter, false
}

// bisectMonotoneOrder solves R = (1 - r21^-p)/(r32^p - 1) for p > 0, which
// has exactly one root when 0 < R < ln r21/ln r32 (the right side falls
// strictly in p).
func bisectMonotoneOrder(R, lr21, lr32 float64) float64 {
	g := func(p float64) float64 { // ln R(p) - ln R, falling in p
		return math.Log(-math.Expm1(-p*lr21)) - lnExpm1(p*lr32) - math.Log(R)
	}
	lo, hi := 0.0, 1.0
	for g(hi) > 0 && hi < 1e300 {
		lo, hi = hi, 2*hi
	}
	if lo == 0 {
		lo = math.SmallestNonzeroFloat64
	}
	for i := 0; i < 200 && hi-lo > 1e-15*hi; i++ {
		mid := 0.5 * (lo + hi)
		if g(mid) > 0 {
			lo = mid
		} else {
			hi = mid
		}
	}
	return 0.5 * (lo + hi)
}

// lnExpm1 is ln(e^x - 1) for x > 0 without overflow.
func lnExpm1(x float64) float64 {
	if x > 30 {
		return x + math.Log1p(-math.Exp(-x))
	}
	return math.Log(math.Expm1(x))
}

// softplus is ln(1 + e^x) without overflow.
func softplus(x float64) float64 {
	if x > 30 {
		return x + math.Log1p(math.Exp(-x))
	}
	return math.Log1p(math.Exp(x))
}

func num(x float64) *float64 { return &x }

// relative is |d/ref|, nil when ref is 0; 0 when d is 0.
func relative(d, ref float64) *float64 {
	if d == 0 {
		return num(0)
	}
	if ref == 0 {
		return nil
	}
	return num(math.Abs(d / ref))
}

func ratioOrNil(a, b float64, ok bool) *float64 {
	if !ok {
		return nil
	}
	return num(a / b)
}

func (r *GCIRecord) note(s string) { r.Notes = append(r.Notes, s) }

// sanitise drops any quantity that came out non-finite (overflow of an
// extreme input) and says so.
func (r *GCIRecord) sanitise() {
	fields := []struct {
		name string
		p    **float64
	}{
		{"r32", &r.R32}, {"ratio", &r.Ratio}, {"order", &r.Order}, {"extrapolated", &r.Extrapolated},
		{"e_approx", &r.EApprox}, {"e_extrap", &r.EExtrap}, {"gci_fine", &r.GCIFine},
		{"gci_32", &r.GCI32}, {"asymptotic_ratio", &r.AsymptoticRatio},
	}
	for _, f := range fields {
		if *f.p != nil && (math.IsNaN(**f.p) || math.IsInf(**f.p, 0)) {
			*f.p = nil
			r.note(f.name + " overflows float64 and is omitted")
		}
	}
	if math.IsInf(r.R21, 0) {
		r.R21 = math.MaxFloat64
		r.note("r21 overflows float64")
	}
}

func fmtG(x float64) string { return strconv.FormatFloat(x, 'g', 4, 64) }

// leastSquaresOrder fits phi_i = phi_0 + alpha x_i^p, x_i = h_i/h_1, by
// unweighted least squares (powerFit) and states what the data leave
// undefined.
func leastSquaresOrder(h, phi []float64) *LeastSquaresOrder {
	ls := &LeastSquaresOrder{}
	f := powerFit(scaledSpacings(h), phi, nil)
	switch f.status {
	case fitAllEqual:
		ls.Extrapolated = num(phi[0])
		ls.Notes = []string{"all values are equal: no grid dependence is visible, the order is undefined"}
		return ls
	case fitOverflow:
		ls.Notes = []string{"the fit overflows float64 for every order in [0.05, 16]"}
		return ls
	case fitBelow, fitAbove:
		ls.Notes = []string{fmt.Sprintf("the residual has no minimum inside p in [%g, %g]: the order is undefined", powerOrderMin, powerOrderMax)}
		ls.ResidualRMS = math.Sqrt(f.s / float64(len(h)))
		return ls
	}
	ls.Order, ls.Extrapolated, ls.Alpha = num(f.p), num(f.phi0), num(f.alpha)
	ls.ResidualRMS = math.Sqrt(f.s / float64(len(h)))
	for _, f := range []**float64{&ls.Order, &ls.Extrapolated, &ls.Alpha} {
		if math.IsNaN(**f) || math.IsInf(**f, 0) {
			*f = nil
			ls.Notes = append(ls.Notes, "a fitted value overflows float64 and is omitted")
		}
	}
	if math.IsNaN(ls.ResidualRMS) || math.IsInf(ls.ResidualRMS, 0) {
		ls.ResidualRMS = math.MaxFloat64
	}
	return ls
}

// scaledSpacings returns x_i = h_i/h_0 for h sorted finest first.
func scaledSpacings(h []float64) []float64 {
	x := make([]float64, len(h))
	for i := range h {
		x[i] = h[i] / h[0]
	}
	return x
}

// Outcomes of powerFit.
const (
	fitOK       = iota
	fitAllEqual // every value is the same: nothing to fit
	fitOverflow // the residual overflows for every order
	fitBelow    // the residual is smallest at the lowest order scanned
	fitAbove    // the residual is smallest at the highest order scanned
)

// The orders powerFit scans.
const powerOrderMin, powerOrderMax = 0.05, 16.0

// powerResult is the least-squares fit phi ≈ phi0 + alpha x^p.
type powerResult struct {
	p, phi0, alpha float64
	s              float64 // (weighted) residual sum of squares
	status         int
}

// powerFit fits phi_i ≈ phi_0 + alpha x_i^p by minimising the residual sum
// of squares S(p) = sum w_i r_i^2 (w nil: all weights 1), phi_0 and alpha
// solved linearly for each p, over p in [powerOrderMin, powerOrderMax]: a
// geometric scan, then a golden-section refinement of the best bracket.
// When the smallest residual of the scan lies at either end, the status
// says which and p is that end.
func powerFit(x, phi, w []float64) powerResult {
	const step = 1.02
	allEqual := true
	for _, v := range phi[1:] {
		allEqual = allEqual && v == phi[0]
	}
	if allEqual {
		return powerResult{phi0: phi[0], status: fitAllEqual}
	}
	best, bestS := -1, math.Inf(1)
	var prevP, bestP, beforeBest float64
	k := 0
	for p := powerOrderMin; p <= powerOrderMax*1.0000001; p *= step {
		if s, _, _ := lsResidual(x, phi, w, p); s < bestS {
			best, bestS, bestP, beforeBest = k, s, p, prevP
		}
		prevP = p
		k++
	}
	n := k
	switch {
	case math.IsInf(bestS, 1):
		return powerResult{status: fitOverflow}
	case best == 0 || best == n-1:
		st := fitBelow
		if best == n-1 {
			st = fitAbove
		}
		_, phi0, alpha := lsResidual(x, phi, w, bestP)
		return powerResult{p: bestP, phi0: phi0, alpha: alpha, s: bestS, status: st}
	}
	// Golden-section search on the scan points either side of the best.
	a, b := beforeBest, bestP*step
	g := (math.Sqrt(5) - 1) / 2
	c, d := b-g*(b-a), a+g*(b-a)
	sc, _, _ := lsResidual(x, phi, w, c)
	sd, _, _ := lsResidual(x, phi, w, d)
	for i := 0; i < 100 && b-a > 1e-12*b; i++ {
		if sc < sd {
			b, d, sd = d, c, sc
			c = b - g*(b-a)
			sc, _, _ = lsResidual(x, phi, w, c)
		} else {
			a, c, sc = c, d, sd
			d = a + g*(b-a)
			sd, _, _ = lsResidual(x, phi, w, d)
		}
	}
	p := 0.5 * (a + b)
	s, phi0, alpha := lsResidual(x, phi, w, p)
	return powerResult{p: p, phi0: phi0, alpha: alpha, s: s, status: fitOK}
}

// lsResidual returns the residual sum of squares sum w_i r_i^2 of the
// weighted linear least-squares fit phi ≈ phi0 + alpha x^p (w nil: all
// weights 1), and phi0 and alpha; +Inf when it overflows.
func lsResidual(x, phi, w []float64, p float64) (s, phi0, alpha float64) {
	var buf [16]float64
	z := buf[:0]
	if len(x) > len(buf) {
		z = make([]float64, 0, len(x))
	}
	var sw, zbar, fbar float64
	for i := range x {
		wi := weight(w, i)
		z = append(z, math.Pow(x[i], p))
		sw += wi
		zbar += wi * z[i]
		fbar += wi * phi[i]
	}
	zbar /= sw
	fbar /= sw
	var szz, szf float64
	for i := range z {
		wi := weight(w, i)
		szz += wi * (z[i] - zbar) * (z[i] - zbar)
		szf += wi * (z[i] - zbar) * (phi[i] - fbar)
	}
	if !(szz > 0) || math.IsInf(szz, 0) {
		return math.Inf(1), 0, 0
	}
	alpha = szf / szz
	phi0 = fbar - alpha*zbar
	for i := range z {
		r := phi[i] - phi0 - alpha*z[i]
		s += weight(w, i) * r * r
	}
	if math.IsNaN(s) {
		return math.Inf(1), 0, 0
	}
	return s, phi0, alpha
}

// weight is w[i], or 1 when w is nil.
func weight(w []float64, i int) float64 {
	if w == nil {
		return 1
	}
	return w[i]
}
