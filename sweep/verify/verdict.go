package verify

import (
	"fmt"
	"math"
)

// DefaultOrderTol is the |observed - design order| a verdict accepts when
// a study sets no tolerance (common practice; docs/references.md §6).
const DefaultOrderTol = 0.15

// Statuses of an OrderVerdict.
const (
	StatusPass          = "pass"              // finest-pair order within tol of the design order
	StatusLow           = "order-low"         // below design - tol, and the fit agrees
	StatusHigh          = "order-high"        // above design + tol, and the fit agrees
	StatusPreAsymptotic = "pre-asymptotic"    // off design, and finest pair and fit disagree: refine further
	StatusInsufficient  = "insufficient-data" // fewer than two usable grids
)

// DesignOrder returns the formal order of accuracy of a scheme of fv2d on
// smooth solutions (common practice: first-order Godunov 1, MUSCL-type
// second-order 2) and false for an unknown scheme. Solutions with shocks
// converge at about 1, contacts at p/(p+1), 1/2 or 2/3 (Banks, Aslam &
// Rider 2008; docs/references.md §6): the caller passes those to Verdict
// itself.
func DesignOrder(scheme string) (float64, bool) {
	switch scheme {
	case "godunov":
		return 1, true
	case "muscl":
		return 2, true
	}
	return 0, false
}

// OrderVerdict judges the observed order of a grid-convergence study against
// the design order.
type OrderVerdict struct {
	Status string  `json:"status"`
	Design float64 `json:"design"`
	Tol    float64 `json:"tol"`      // accepted distance below the design order
	TolHi  float64 `json:"tol_high"` // accepted distance above it (= Tol unless a band is asymmetric)
	// Finest is the observed order of the two finest grids; Fitted the
	// least-squares order over all usable grids (Fit.Order), equal to Finest
	// for two grids. Both are 0 when Status is StatusInsufficient.
	Finest  float64 `json:"finest"`
	Fitted  float64 `json:"fitted"`
	FitSE   float64 `json:"fit_se"`
	Grids   int     `json:"grids"` // usable grids
	Summary string  `json:"summary"`
	// PreAsymptotic is set when |Finest - Fitted| > Tol: the coarser grids
	// are not yet in the asymptotic range (the status may still be pass).
	PreAsymptotic bool `json:"pre_asymptotic"`
	// Warnings says where the study is implausible: close grids, an order
	// out of range, errors equal to round-off, too few grids.
	Warnings []string `json:"warnings,omitempty"`
}

// Verdict compares the observed order of the study (h_i, e_i) with the design
// order, with tolerance tol (> 0). Grids whose error or spacing is not
// positive and finite are dropped first; the rest are sorted by h. The
// finest-pair order decides: within design ± tol is StatusPass. Outside that
// band the status is StatusPreAsymptotic when the fitted order differs from
// the finest-pair order by more than tol (the sequence has not settled), and
// otherwise StatusLow or StatusHigh. PreAsymptotic flags a disagreement in
// every case. Fewer than two usable grids, or a tol that is not positive,
// give StatusInsufficient.
func Verdict(h, e []float64, design, tol float64) OrderVerdict {
	return VerdictBand(h, e, design, tol, tol)
}

// VerdictBand is Verdict with an asymmetric band: the finest-pair order
// passes within [design - tol, design + tolHi]. Limited second-order schemes
// overshoot 2 on coarse grids and come down towards it, so a band such as
// [1.85, 2.6] for design order 2 is common practice (docs/references.md §4).
func VerdictBand(h, e []float64, design, tol, tolHi float64) OrderVerdict {
	v := OrderVerdict{Status: StatusInsufficient, Design: design, Tol: tol, TolHi: tolHi}
	if len(h) != len(e) {
		v.Summary = fmt.Sprintf("%d spacings but %d errors", len(h), len(e))
		return v
	}
	if !positive(tol) || !positive(tolHi) || math.IsNaN(design) || math.IsInf(design, 0) {
		v.Summary = fmt.Sprintf("tolerance %g or design order %g unusable", tol, design)
		return v
	}
	var hs, es []float64
	for i := range h {
		if positive(h[i]) && positive(e[i]) {
			hs, es = append(hs, h[i]), append(es, e[i])
		}
	}
	hs, es = sortedByH(hs, es)
	// Equal spacings: keep the first of each.
	k := 0
	for i := range hs {
		if i == 0 || hs[i] != hs[k-1] {
			hs[k], es[k] = hs[i], es[i]
			k++
		}
	}
	hs, es = hs[:k], es[:k]
	v.Grids = len(hs)
	if len(hs) < 2 {
		v.Summary = fmt.Sprintf("%d usable grid(s) (positive finite h and error); need 2", len(hs))
		v.Warnings = []string{"fewer than the two usable grids an order needs"}
		return v
	}
	if len(hs) == 2 {
		v.Warnings = []string{"two grids: fewer than the three needed to see whether the order has settled"}
	}
	v.Warnings = append(v.Warnings, ratioWarnings(hs, 1)...)
	v.Warnings = append(v.Warnings, roundOffWarnings(es, 1)...)
	fit, err := FitOrder(hs, es)
	if err != nil {
		v.Summary = err.Error()
		return v
	}
	v.Finest = pairOrder(hs[0], hs[1], es[0], es[1])
	v.Warnings = append(v.Warnings, orderWarnings(&v.Finest, design)...)
	v.Fitted, v.FitSE = fit.Order, fit.OrderSE
	v.PreAsymptotic = math.Abs(v.Finest-v.Fitted) > tol
	off := v.Finest - design
	switch {
	case off >= -tol && off <= tolHi:
		v.Status = StatusPass
	case v.PreAsymptotic:
		v.Status = StatusPreAsymptotic
	case off < 0:
		v.Status = StatusLow
	default:
		v.Status = StatusHigh
	}
	band := fmt.Sprintf("%g ± %g", design, tol)
	if tolHi != tol {
		band = fmt.Sprintf("%g in [%g, %g]", design, design-tol, design+tolHi)
	}
	v.Summary = fmt.Sprintf("%s: finest-pair order %.3g, fitted %.3g ± %.2g over %d grids, design %s",
		v.Status, v.Finest, v.Fitted, v.FitSE, v.Grids, band)
	if v.PreAsymptotic {
		v.Summary += "; finest pair and fit disagree (not yet asymptotic)"
	}
	return v
}
