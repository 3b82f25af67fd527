package plots

import (
	"fmt"
	"math"
)

// Field is one variable of a 2-D solution on a uniform grid of NX x NY
// cells covering [X0,X1] x [Y0,Y1]: V[j*NX+i] is the value of cell (i, j),
// x running fastest (the interior of fv2d.State without ghost layers).
type Field struct {
	Name           string // variable, "rho"
	NX, NY         int
	X0, X1, Y0, Y1 float64
	V              []float64
}

// FromFloat32 converts a snapshot stored as float32 to a Field.
func FromFloat32(name string, nx, ny int, x0, x1, y0, y1 float64, v []float32) Field {
	f := Field{Name: name, NX: nx, NY: ny, X0: x0, X1: x1, Y0: y0, Y1: y1, V: make([]float64, len(v))}
	for i, x := range v {
		f.V[i] = float64(x)
	}
	return f
}

func (f *Field) check() error {
	switch {
	case f.NX < 1 || f.NY < 1:
		return fmt.Errorf("field %s: grid %dx%d is empty", f.Name, f.NX, f.NY)
	case len(f.V) != f.NX*f.NY:
		return fmt.Errorf("field %s: %d values for a %dx%d grid", f.Name, len(f.V), f.NX, f.NY)
	case !(f.X1 > f.X0) || !(f.Y1 > f.Y0):
		return fmt.Errorf("field %s: empty extent [%g,%g]x[%g,%g]", f.Name, f.X0, f.X1, f.Y0, f.Y1)
	}
	return nil
}

// dx and dy are the cell sizes; xc and yc the cell centres.
func (f *Field) dx() float64         { return (f.X1 - f.X0) / float64(f.NX) }
func (f *Field) dy() float64         { return (f.Y1 - f.Y0) / float64(f.NY) }
func (f *Field) xc(i int) float64    { return f.X0 + (float64(i)+0.5)*f.dx() }
func (f *Field) yc(j int) float64    { return f.Y0 + (float64(j)+0.5)*f.dy() }
func (f *Field) at(i, j int) float64 { return f.V[j*f.NX+i] }

// Heat is a prepared heat map: the field, the value range the colour map
// spans, and the labels.
type Heat struct {
	Title, XLabel, YLabel string
	BarLabel              string // colour-bar label, the variable
	Field                 Field
	Min, Max              float64 // colour range: the finite minimum and maximum of the field
	NonFinite             int     // cells that are NaN or infinite, drawn in nanColour
	Notes                 []string
	// Diverging draws with the diverging colour map, its neutral middle at
	// (Min + Max) / 2, values beyond the range at its ends, and cells
	// without a finite value hatched grey on white (masked) rather than
	// magenta. DivergingHeatMap sets it.
	Diverging bool
}

// nanColour marks cells without a finite value: magenta, which the
// sequential map never produces.
var nanColour = hex("#ff00ff")

// HeatMap prepares a heat map of f with a colour bar spanning the finite
// range of its values. A constant field gets a range of ±1 % around its
// value (or ±1 when it is zero) so that the colour bar can be drawn. It is
// an error when f is malformed or has no finite value.
func HeatMap(f Field, ax Axes) (*Heat, error) {
	if err := f.check(); err != nil {
		return nil, fmt.Errorf("heat map: %w", err)
	}
	h := &Heat{Title: ax.Title, XLabel: ax.XLabel, YLabel: ax.YLabel, BarLabel: f.Name, Field: f,
		Min: math.Inf(1), Max: math.Inf(-1)}
	if h.XLabel == "" {
		h.XLabel = "x"
	}
	if h.YLabel == "" {
		h.YLabel = "y"
	}
	for _, v := range f.V {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			h.NonFinite++
			continue
		}
		h.Min, h.Max = math.Min(h.Min, v), math.Max(h.Max, v)
	}
	if h.NonFinite == len(f.V) {
		return nil, fmt.Errorf("heat map: field %s has no finite value", f.Name)
	}
	if h.NonFinite > 0 {
		h.Notes = append(h.Notes, fmt.Sprintf("%d cells not finite (drawn magenta)", h.NonFinite))
	}
	if h.Min == h.Max {
		d := 0.01 * math.Abs(h.Min)
		if d == 0 {
			d = 1
		}
		h.Min, h.Max = h.Min-d, h.Max+d
	}
	return h, nil
}

// DivergingHeatMap prepares a heat map of f on the diverging colour map
// over [centre - span, centre + span], its neutral middle at centre (an
// order map's design order). Values beyond the range are drawn in the
// colour of its nearer end and counted in a note; cells without a finite
// value are masked (hatched grey on white). It is an error when f is
// malformed, has no finite value, or span is not positive and finite.
func DivergingHeatMap(f Field, centre, span float64, ax Axes) (*Heat, error) {
	if err := f.check(); err != nil {
		return nil, fmt.Errorf("heat map: %w", err)
	}
	if !(span > 0) || math.IsInf(span, 0) || math.IsNaN(centre) || math.IsInf(centre, 0) {
		return nil, fmt.Errorf("heat map: colour range %g ± %g", centre, span)
	}
	h, err := HeatMap(f, ax)
	if err != nil {
		return nil, err
	}
	h.Diverging, h.Min, h.Max, h.Notes = true, centre-span, centre+span, nil
	beyond := 0
	for _, v := range f.V {
		if v < h.Min || v > h.Max {
			beyond++
		}
	}
	if beyond > 0 {
		h.Notes = append(h.Notes, fmt.Sprintf("%d cells beyond the colour range [%.3g, %.3g], drawn at its ends", beyond, h.Min, h.Max))
	}
	return h, nil
}

// CutOptions choose a line cut. Along "x" the cut runs in x through the row
// of cells whose centre is nearest to y = At; along "y" likewise in y. At
// NaN means the middle of the domain. Exact, when not nil, is the exact
// solution of the cut variable at a point; it is drawn as a curve sampled
// ExactSamples times across the domain (default 8 per cell).
type CutOptions struct {
	Axis         string
	At           float64
	Exact        func(x, y float64) float64
	ExactSamples int
	Label        string // legend text of the numerical values ("MUSCL, nx=128")
	ExactLabel   string // legend text of the exact solution ("exact")
	Title        string
}

// Cut prepares a line cut of f: cell values against the coordinate along
// the cut, and the exact solution when one is given. Non-finite values of
// either are left out and noted.
func Cut(f Field, o CutOptions) (*Figure, error) {
	if err := f.check(); err != nil {
		return nil, fmt.Errorf("cut: %w", err)
	}
	var n int
	var cell func(k int) (i, j int) // cell k along the cut
	var lo, hi, fixed float64
	switch o.Axis {
	case "x":
		at := o.At
		if math.IsNaN(at) {
			at = 0.5 * (f.Y0 + f.Y1)
		}
		j := nearest(at, f.Y0, f.dy(), f.NY)
		fixed, n, lo, hi = f.yc(j), f.NX, f.X0, f.X1
		cell = func(k int) (int, int) { return k, j }
	case "y":
		at := o.At
		if math.IsNaN(at) {
			at = 0.5 * (f.X0 + f.X1)
		}
		i := nearest(at, f.X0, f.dx(), f.NX)
		fixed, n, lo, hi = f.xc(i), f.NY, f.Y0, f.Y1
		cell = func(k int) (int, int) { return i, k }
	default:
		return nil, fmt.Errorf("cut: axis %q: want x or y", o.Axis)
	}
	other := map[string]string{"x": "y", "y": "x"}[o.Axis]
	fig := &Figure{Title: o.Title, XLabel: o.Axis, YLabel: f.Name}
	if fig.Title == "" {
		fig.Title = fmt.Sprintf("%s along %s at %s = %.4g", f.Name, o.Axis, other, fixed)
	}
	label := o.Label
	if label == "" {
		label = "numerical"
	}
	// Orange, solid, open circles: apart from the black exact curve in
	// colour and in grey. Markers only where they do not merge.
	num := Line{Label: label, Style: Style{Colour: lineColours[3], Marker: 3}, NoMarkers: n > maxCutMarkers, Width: 2.6}
	bad := 0
	for k := range n {
		i, j := cell(k)
		v := f.at(i, j)
		if math.IsNaN(v) || math.IsInf(v, 0) {
			bad++
			continue
		}
		s := f.xc(i)
		if o.Axis == "y" {
			s = f.yc(j)
		}
		num.Points = append(num.Points, XY{s, v})
	}
	if len(num.Points) == 0 {
		return nil, fmt.Errorf("cut: no finite value of %s along the cut", f.Name)
	}
	fig.Lines = append(fig.Lines, num)
	if bad > 0 {
		fig.Notes = append(fig.Notes, fmt.Sprintf("%d of %d cells along the cut not finite", bad, n))
	}
	if o.Exact != nil {
		m := o.ExactSamples
		if m <= 0 {
			m = 8 * n
		}
		el := o.ExactLabel
		if el == "" {
			el = "exact"
		}
		ex := Line{Label: el, Plain: true}
		for k := 0; k <= m; k++ {
			s := lo + (hi-lo)*float64(k)/float64(m)
			x, y := s, fixed
			if o.Axis == "y" {
				x, y = fixed, s
			}
			if v := o.Exact(x, y); !math.IsNaN(v) && !math.IsInf(v, 0) {
				ex.Points = append(ex.Points, XY{s, v})
			}
		}
		// Drawn after the numerical values, thin over thick, so that both
		// stay visible where they agree.
		fig.Lines = append(fig.Lines, ex)
	}
	return fig, nil
}

// maxCutMarkers is the most cells a cut marks individually.
const maxCutMarkers = 64

// nearest returns the index of the cell of width d, starting at x0, whose
// centre is nearest to x, clamped to [0, n).
func nearest(x, x0, d float64, n int) int {
	k := int(math.Floor((x - x0) / d))
	return min(n-1, max(0, k))
}
