package verify

import (
	"fmt"
	"math"
)

// Thresholds of the plausibility warnings that GCI, LeastSquaresUncertainty
// and Verdict attach to their results (docs/references.md §14). A warning
// never changes a number; it says why the number may not mean what it seems.
const (
	// MinRefinementRatio is the smallest ratio h_coarse/h_fine between
	// successive grids that Celik et al. 2008 recommend (1.3, recalled from
	// memory): on closer grids the differences are small next to round-off
	// and iteration error.
	MinRefinementRatio = 1.3
	// OrderCeiling is the largest plausible observed order whatever the
	// scheme (common practice: schemes in use are at most about fifth order;
	// a larger value means the data do not show the leading error term).
	OrderCeiling = 6.0
	// RoundOffRelative is the relative difference |phi_i - phi_j|/max|phi|
	// below which two successive values cannot be told apart from round-off
	// and iteration error (common practice: a solver's functional carries
	// about 1e-12 relative error, so a difference ten times that is noise).
	RoundOffRelative = 1e-11
	// AsymptoticBand bounds the asymptotic ratio GCI_32/(r21^p GCI_21):
	// outside [1/AsymptoticBand, AsymptoticBand] it is far from 1 (Roache
	// 1998: about 1 in the asymptotic range; the band is common practice).
	AsymptoticBand = 1.25
)

// ratioWarnings warns for each successive pair of spacings h (sorted finest
// first) whose ratio is below MinRefinementRatio; first is the number of
// h[0] in the caller's grid numbering.
func ratioWarnings(h []float64, first int) []string {
	var w []string
	for i := 1; i < len(h); i++ {
		if r := h[i] / h[i-1]; r < MinRefinementRatio {
			w = append(w, fmt.Sprintf("refinement ratio h%d/h%d = %.4g is below %g (Celik et al. 2008): the grids are too close for their differences to stand out from other errors",
				first+i, first+i-1, r, MinRefinementRatio))
		}
	}
	return w
}

// roundOffWarnings warns for each successive pair of values v whose relative
// difference is below RoundOffRelative (but not exactly equal, which the
// procedures state themselves); first numbers v[0] as above.
func roundOffWarnings(v []float64, first int) []string {
	var w []string
	for i := 1; i < len(v); i++ {
		d := math.Abs(v[i] - v[i-1])
		scale := math.Max(math.Abs(v[i]), math.Abs(v[i-1]))
		if d > 0 && d <= RoundOffRelative*scale {
			w = append(w, fmt.Sprintf("values %d and %d differ by a relative %.2g, below what round-off can resolve (%g): their difference is noise",
				first+i-1, first+i, d/scale, RoundOffRelative))
		}
	}
	return w
}

// orderWarnings warns when the observed order p is negative, above twice the
// design order (when design > 0) or above OrderCeiling. A nil p gives none.
func orderWarnings(p *float64, design float64) []string {
	if p == nil {
		return nil
	}
	switch {
	case *p < 0:
		return []string{fmt.Sprintf("observed order %.4g is negative: the error grows under refinement", *p)}
	case *p > OrderCeiling:
		return []string{fmt.Sprintf("observed order %.4g is above %g, more than any scheme in use delivers: the data do not show the leading error term", *p, OrderCeiling)}
	case design > 0 && *p > 2*design:
		return []string{fmt.Sprintf("observed order %.4g is above twice the design order %g", *p, design)}
	}
	return nil
}

// asymptoticWarnings warns when the asymptotic ratio is far from 1.
func asymptoticWarnings(ar *float64) []string {
	if ar == nil || (*ar >= 1/AsymptoticBand && *ar <= AsymptoticBand) {
		return nil
	}
	return []string{fmt.Sprintf("asymptotic ratio %.4g is far from 1 (outside [%g, %g]): the grids are not in the asymptotic range",
		*ar, 1/AsymptoticBand, AsymptoticBand)}
}
