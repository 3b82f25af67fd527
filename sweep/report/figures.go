package report

import (
	"fmt"
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

// CostAxis is what the x axis of a work-precision plot measures.
type CostAxis string

const (
	// CostCPU is the CPU seconds of the solving threads (the outcome's
	// cpu_s; wall x threads for an outcome stored without it).
	CostCPU CostAxis = "cpu"
	// CostWork is the cells updated, nx x ny x steps: the same on every
	// machine and under any load.
	CostWork CostAxis = "work"
)

// CostAxes are the choices of CostAxis, the default first.
var CostAxes = []CostAxis{CostCPU, CostWork}

// label is the axis label of a.
func (a CostAxis) label() string {
	if a == CostWork {
		return "work [cell updates]"
	}
	return "CPU time of the solving threads [s]"
}

// short names a in a title.
func (a CostAxis) short() string {
	if a == CostWork {
		return "cell updates"
	}
	return "CPU time"
}

// CostSeries returns one plots.Series per group of st: the cost on axis
// against the error, coarse grid first.
func CostSeries(st table.Study, axis CostAxis) []plots.Series {
	if axis == CostWork {
		return series(st, func(r table.GridRow) float64 { return r.Work }, false)
	}
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

// CostFigure prepares the work-precision plot of st: the error against
// the cost on axis. On the CPU axis, a note counts the grids whose outcome
// has no measured CPU time (stored before cpu_s), drawn at wall x threads.
func CostFigure(st table.Study, axis CostAxis) (*plots.Figure, error) {
	f, err := plots.Cost(CostSeries(st, axis), plots.Axes{Title: title(st) + ": work-precision (" + axis.short() + ")", XLabel: axis.label(), YLabel: table.NormLabel(st.Norm, st.Var)})
	if err != nil || axis == CostWork {
		return f, err
	}
	wall := 0
	for _, g := range st.Groups {
		for _, r := range g.Rows {
			if r.Status == string(job.StatusDone) && !math.IsNaN(r.Err) && r.CPUFromWall {
				wall++
			}
		}
	}
	if wall > 0 {
		f.Notes = append(f.Notes, fmt.Sprintf("%d grid(s) have no measured CPU time (outcomes stored before cpu_s): drawn at wall seconds x threads", wall))
	}
	return f, nil
}

func title(st table.Study) string {
	t := "study " + strconv.Itoa(st.Index) + ": " + st.Case
	if st.Label != "" {
		t += " (" + st.Label + ")"
	}
	return t
}
