package report

import (
	"math"
	"strconv"
	"strings"

	"fvsweep/sweep/job"
	"fvsweep/sweep/plots"
)

// NormLabel is the axis symbol of a norm of a variable: "L1(rho)".
func NormLabel(norm, v string) string {
	n := map[string]string{"l1": "L1", "l2": "L2", "linf": "Linf"}[norm]
	if n == "" {
		n = strings.ToUpper(norm)
	}
	return n + "(" + v + ")"
}

// ConvergenceSeries returns one plots.Series per group of st: h against
// the error, with the group's fitted order.
func ConvergenceSeries(st Study) []plots.Series {
	return series(st, func(r GridRow) float64 { return r.H }, true)
}

// CostSeries returns one plots.Series per group of st: CPU seconds against
// the error, coarse grid first.
func CostSeries(st Study) []plots.Series {
	return series(st, func(r GridRow) float64 { return r.CPUS }, false)
}

func series(st Study, x func(GridRow) float64, fitted bool) []plots.Series {
	out := make([]plots.Series, 0, len(st.Groups))
	for _, g := range st.Groups {
		s := plots.Series{Label: g.Label, OrderSE: math.NaN()}
		for _, r := range g.Rows {
			if r.Status != string(job.StatusDone) || math.IsNaN(r.Err) {
				continue
			}
			s.X, s.Y = append(s.X, x(r)), append(s.Y, r.Err)
		}
		if fitted && g.Fitted {
			s.Fitted, s.Order = true, g.Fit.Order
			if g.Fit.DOF > 0 {
				s.OrderSE = g.Fit.OrderSE
			}
		}
		out = append(out, s)
	}
	return out
}

// HasErrors reports whether any grid of st has an error to plot.
func (st *Study) HasErrors() bool {
	for _, g := range st.Groups {
		for _, r := range g.Rows {
			if !math.IsNaN(r.Err) {
				return true
			}
		}
	}
	return false
}

// ConvergenceFigure prepares the error-against-h plot of st.
func ConvergenceFigure(st Study) (*plots.Figure, error) {
	return plots.Convergence(ConvergenceSeries(st), plots.Axes{Title: st.title(), XLabel: "h", YLabel: NormLabel(st.Norm, st.Var)})
}

// CostFigure prepares the error-against-CPU-time plot of st.
func CostFigure(st Study) (*plots.Figure, error) {
	return plots.Cost(CostSeries(st), plots.Axes{Title: st.title() + ": work-precision", XLabel: "CPU time [s] (wall x threads)", YLabel: NormLabel(st.Norm, st.Var)})
}

func (st *Study) title() string {
	t := "study " + strconv.Itoa(st.Index) + ": " + st.Case
	if st.Label != "" {
		t += " (" + st.Label + ")"
	}
	return t
}
