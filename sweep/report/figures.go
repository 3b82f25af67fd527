package report

import (
	"math"
	"strconv"

	"fvsweep/sweep/job"
	"fvsweep/sweep/plots"
	"fvsweep/sweep/table"
)

// ConvergenceSeries returns one plots.Series per group of st: h against
// the error, with the group's fitted order.
func ConvergenceSeries(st table.Study) []plots.Series {
	return series(st, func(r table.GridRow) float64 { return r.H }, true)
}

// CostSeries returns one plots.Series per group of st: CPU seconds against
// the error, coarse grid first.
func CostSeries(st table.Study) []plots.Series {
	return series(st, func(r table.GridRow) float64 { return r.CPUS }, false)
}

func series(st table.Study, x func(table.GridRow) float64, fitted bool) []plots.Series {
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

// ConvergenceFigure prepares the error-against-h plot of st.
func ConvergenceFigure(st table.Study) (*plots.Figure, error) {
	return plots.Convergence(ConvergenceSeries(st), plots.Axes{Title: title(st), XLabel: "h", YLabel: table.NormLabel(st.Norm, st.Var)})
}

// CostFigure prepares the error-against-CPU-time plot of st.
func CostFigure(st table.Study) (*plots.Figure, error) {
	return plots.Cost(CostSeries(st), plots.Axes{Title: title(st) + ": work-precision", XLabel: "CPU time [s] (wall x threads)", YLabel: table.NormLabel(st.Norm, st.Var)})
}

func title(st table.Study) string {
	t := "study " + strconv.Itoa(st.Index) + ": " + st.Case
	if st.Label != "" {
		t += " (" + st.Label + ")"
	}
	return t
}
