// Package plots prepares and draws the pictures people judge a scheme by:
// error against grid spacing on log-log axes with reference slopes, error
// against cost, a heat map of a field and a line cut against the exact
// solution.
//
// Each picture is made in two steps. A preparation function (Convergence,
// Cost, HeatMap, Cut) turns plain numbers into a figure value holding
// everything that will be drawn: points, reference lines, labels, legend
// text, styles, ranges. Tests check that data. Drawing (Save, Write) turns
// a figure into PNG or SVG with gonum.org/v1/plot and adds no data of its
// own. The package knows nothing of sweeps, stores or NATS.
package plots

import (
	"fmt"
	"math"
	"sort"
	"strings"
)

// XY is a point in data coordinates.
type XY struct{ X, Y float64 }

// Line is one data line of a figure, drawn with its points joined and,
// unless NoMarkers, marked.
type Line struct {
	Label     string // legend text
	Points    []XY
	Style     Style
	Plain     bool    // a reference curve: thin solid black, no markers (exact solutions)
	NoMarkers bool    // join the points without marking them
	Width     float64 // line width in points; 0 means the default 1.4
}

// Ref is a reference line of slope Order on log-log axes: the straight
// line y = C x^Order from From to To, labelled with Label at LabelAt. The
// label's text ends at LabelAt when LabelRight is set and starts there
// otherwise; it is drawn below the line.
type Ref struct {
	Order      float64
	From, To   XY
	Label      string
	LabelAt    XY
	LabelRight bool
}

// Figure is a prepared x-y plot.
type Figure struct {
	Title, XLabel, YLabel string
	LogX, LogY            bool
	Lines                 []Line
	Refs                  []Ref
	// Notes say what the data could not show: points left out because a
	// log axis cannot draw them, groups with no drawable point. Renderers
	// do not draw them; callers print them.
	Notes []string
}

// Legend returns the legend entries of f, in drawing order.
func (f *Figure) Legend() []string {
	out := make([]string, 0, len(f.Lines))
	for _, l := range f.Lines {
		out = append(out, l.Label)
	}
	return out
}

// Series is one group of results: a label ("limiter=minmod flux=hllc"),
// abscissae X (grid spacing h, or CPU seconds) and errors Y, of equal
// length. When Fitted is set, Order is the least-squares order of the group
// and OrderSE its standard error (NaN when unknown, e.g. from two grids).
type Series struct {
	Label   string
	X, Y    []float64
	Fitted  bool
	Order   float64
	OrderSE float64
}

// Axes names a figure and its axes. XLabel and YLabel carry the symbol or
// unit ("h", "L1(rho)", "CPU time [s]").
type Axes struct {
	Title, XLabel, YLabel string
}

// ReferenceOrders are the slopes drawn on every convergence plot.
var ReferenceOrders = []float64{1, 2}

// Convergence prepares an error-against-h plot on log-log axes: one line
// per group, points sorted by h, the fitted order in each legend entry and
// reference lines of orders 1 and 2 anchored below the data. Points that a
// log axis cannot show (x or y not finite and positive) are left out and
// noted. It is an error when no group has a drawable point or when a group's
// X and Y differ in length.
func Convergence(groups []Series, ax Axes) (*Figure, error) {
	f, err := logLog(groups, ax, true)
	if err != nil {
		return nil, fmt.Errorf("convergence plot: %w", err)
	}
	f.Refs = referenceLines(f.Lines, ReferenceOrders)
	return f, nil
}

// Cost prepares an error-against-cost plot (work-precision) on log-log
// axes: one line per group with its points in the order given (coarse to
// fine grid), so that a cheaper-but-less-accurate scheme can be set against a
// costly one. The same rules for undrawable points apply as in Convergence.
func Cost(groups []Series, ax Axes) (*Figure, error) {
	f, err := logLog(groups, ax, false)
	if err != nil {
		return nil, fmt.Errorf("cost plot: %w", err)
	}
	return f, nil
}

func logLog(groups []Series, ax Axes, sortX bool) (*Figure, error) {
	if len(groups) == 0 {
		return nil, fmt.Errorf("no groups to plot")
	}
	f := &Figure{Title: ax.Title, XLabel: ax.XLabel, YLabel: ax.YLabel, LogX: true, LogY: true}
	for _, g := range groups {
		if len(g.X) != len(g.Y) {
			return nil, fmt.Errorf("group %q: %d x values but %d y values", g.Label, len(g.X), len(g.Y))
		}
		var pts []XY
		dropped := 0
		for i := range g.X {
			if !positive(g.X[i]) || !positive(g.Y[i]) {
				dropped++
				continue
			}
			pts = append(pts, XY{g.X[i], g.Y[i]})
		}
		if dropped > 0 {
			f.Notes = append(f.Notes, fmt.Sprintf("group %q: %d of %d points not drawable on log axes (zero, negative or not finite)", g.Label, dropped, len(g.X)))
		}
		if len(pts) == 0 {
			continue
		}
		if sortX {
			sort.SliceStable(pts, func(i, j int) bool { return pts[i].X < pts[j].X })
		}
		f.Lines = append(f.Lines, Line{Label: legendText(g), Points: pts, Style: StyleOf(len(f.Lines))})
	}
	if len(f.Lines) == 0 {
		return nil, fmt.Errorf("no drawable points (%s)", strings.Join(f.Notes, "; "))
	}
	return f, nil
}

func positive(v float64) bool { return v > 0 && !math.IsInf(v, 1) }

// legendText is the group label with its fitted order: "mc hllc  p = 2.01 ± 0.04".
func legendText(g Series) string {
	if !g.Fitted || math.IsNaN(g.Order) || math.IsInf(g.Order, 0) {
		return g.Label
	}
	s := fmt.Sprintf("p = %.2f", g.Order)
	if !math.IsNaN(g.OrderSE) && !math.IsInf(g.OrderSE, 0) {
		s += fmt.Sprintf(" ± %.2f", g.OrderSE)
	}
	if g.Label == "" {
		return s
	}
	return g.Label + "  " + s
}

// refBelow is how far below the nearest data point a reference line passes
// (factor on y).
const refBelow = 0.5

// referenceLines builds y = C x^p for each order p over the x range of the
// data, with C = refBelow * min_i y_i / x_i^p: the line passes refBelow
// times below the data point it comes closest to and under every other one,
// so it sits next to the data without crossing it. Each label goes at the
// end of its line farther from the other reference lines, so that labels of
// lines that meet at one end do not overlap.
func referenceLines(lines []Line, orders []float64) []Ref {
	xmin, xmax := math.Inf(1), math.Inf(-1)
	for _, l := range lines {
		for _, p := range l.Points {
			xmin, xmax = math.Min(xmin, p.X), math.Max(xmax, p.X)
		}
	}
	if !(xmax > xmin) {
		return nil // a single abscissa: no slope to show
	}
	refs := make([]Ref, 0, len(orders))
	for _, p := range orders {
		c := math.Inf(1)
		for _, l := range lines {
			for _, q := range l.Points {
				c = math.Min(c, q.Y/math.Pow(q.X, p))
			}
		}
		c *= refBelow
		refs = append(refs, Ref{
			Order: p,
			From:  XY{xmin, c * math.Pow(xmin, p)},
			To:    XY{xmax, c * math.Pow(xmax, p)},
			Label: fmt.Sprintf("order %g", p),
		})
	}
	for i := range refs {
		// Log distance to the nearest other reference line at each end.
		left, right := math.Inf(1), math.Inf(1)
		for j := range refs {
			if j == i {
				continue
			}
			left = math.Min(left, math.Abs(math.Log(refs[i].From.Y/refs[j].From.Y)))
			right = math.Min(right, math.Abs(math.Log(refs[i].To.Y/refs[j].To.Y)))
		}
		if right >= left {
			refs[i].LabelAt, refs[i].LabelRight = refs[i].To, true
		} else {
			refs[i].LabelAt = refs[i].From
		}
	}
	return refs
}
