package plots

import (
	"fmt"
	"image/color"
	"math"

	"gonum.org/v1/plot/palette"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// The line palette: six colours on a lightness ladder (CIE L* about 10, 26,
// 35, 50, 62, 74) so that a grey-scale print still separates them, with hues
// chosen to stay apart under simulated protanopia and deuteranopia (see
// style_test.go). Markers and dash patterns cycle with periods 6, 7 and 4, so
// each of the first 84 groups has its own colour-marker-dash triple and no
// group is told apart by colour alone.
var lineColours = []color.NRGBA{
	hex("#1b1b1b"), // near black
	hex("#1d3590"), // deep blue
	hex("#8e2a6a"), // wine
	hex("#c8501e"), // burnt orange
	hex("#36a686"), // sea green
	hex("#e0ad2a"), // ochre
}

var lineDashes = [][]vg.Length{
	nil,                              // solid
	{vg.Points(6), vg.Points(3)},     // dashed
	{vg.Points(1.5), vg.Points(2.5)}, // dotted
	{vg.Points(7), vg.Points(2.5), vg.Points(1.5), vg.Points(2.5)}, // dash-dot
}

// glyph is a marker shape and whether it is drawn filled.
type glyph struct {
	shape draw.GlyphDrawer
	name  string
}

var lineGlyphs = []glyph{
	{draw.CircleGlyph{}, "filled circle"},
	{draw.SquareGlyph{}, "filled square"},
	{draw.TriangleGlyph{}, "filled triangle"},
	{draw.RingGlyph{}, "open circle"},
	{draw.BoxGlyph{}, "open square"},
	{draw.PyramidGlyph{}, "open triangle"},
	{draw.CrossGlyph{}, "cross"},
}

// Style is the look of the data line with index i: its colour, dash
// pattern and marker. It is part of the prepared figure data so that tests
// can check that no two groups look alike.
type Style struct {
	Colour color.NRGBA
	Dash   int // index into the dash patterns: 0 solid, 1 dashed, 2 dotted, 3 dash-dot
	Marker int // index into the marker shapes
}

// Colours is the number of line colours: a plot of more lines repeats one.
func Colours() int { return len(lineColours) }

// StyleOf returns the style of data line i (i >= 0).
func StyleOf(i int) Style {
	return Style{Colour: lineColours[i%len(lineColours)], Dash: i % len(lineDashes), Marker: i % len(lineGlyphs)}
}

// String names the style in words ("deep blue, dashed, open circle"), for
// tests and for the accessible description of a plot.
func (s Style) String() string {
	dash := [...]string{"solid", "dashed", "dotted", "dash-dot"}[s.Dash]
	return fmt.Sprintf("#%02x%02x%02x %s %s", s.Colour.R, s.Colour.G, s.Colour.B, dash, lineGlyphs[s.Marker].name)
}

func (s Style) lineStyle() draw.LineStyle {
	return draw.LineStyle{Color: s.Colour, Width: vg.Points(1.4), Dashes: lineDashes[s.Dash]}
}

func (s Style) glyphStyle() draw.GlyphStyle {
	return draw.GlyphStyle{Color: s.Colour, Radius: vg.Points(3.2), Shape: lineGlyphs[s.Marker].shape}
}

// refStyle is the look of the reference-slope lines: mid grey, long dashes,
// thinner than data, no markers.
var refStyle = draw.LineStyle{Color: hex("#808080"), Width: vg.Points(1), Dashes: []vg.Length{vg.Points(2), vg.Points(2)}}

// exactStyle is the look of an exact solution in a cut: a thin solid black
// line under the numerical markers.
var exactStyle = draw.LineStyle{Color: hex("#000000"), Width: vg.Points(0.9)}

// The sequential colour map of the heat maps, our own control points: navy,
// steel blue, teal, leaf green, ochre, pale sand. The points are converted
// to CIE L*a*b* and interpolated there, each placed at the parameter given
// by its lightness, so that L* rises linearly from the first to the last.
var seqControl = []color.NRGBA{
	hex("#13203f"),
	hex("#1f4e79"),
	hex("#2a7f83"),
	hex("#6aa84f"),
	hex("#c9b33a"),
	hex("#f6e8a6"),
}

// Sequential is the heat-map colour map over [min, max]: dark for low
// values, light for high ones, lightness increasing monotonically. It
// implements palette.ColorMap.
type Sequential struct {
	colourRamp
	pts []lab
	at  []float64 // parameter of each control point in [0, 1]
}

// NewSequential returns the colour map over [min, max].
func NewSequential(min, max float64) *Sequential {
	s := &Sequential{colourRamp: colourRamp{min: min, max: max, alpha: 1}}
	s.lab = s.labAt
	for _, c := range seqControl {
		s.pts = append(s.pts, srgbToLab(c))
	}
	l0, l1 := s.pts[0].L, s.pts[len(s.pts)-1].L
	for _, p := range s.pts {
		s.at = append(s.at, (p.L-l0)/(l1-l0))
	}
	return s
}

// labAt returns the interpolated L*a*b* colour at parameter t in [0, 1]
// (clamped).
func (s *Sequential) labAt(t float64) lab {
	t = math.Min(1, math.Max(0, t))
	k := 1
	for k < len(s.at)-1 && t > s.at[k] {
		k++
	}
	w := (t - s.at[k-1]) / (s.at[k] - s.at[k-1])
	a, b := s.pts[k-1], s.pts[k]
	return lab{L: a.L + w*(b.L-a.L), A: a.A + w*(b.A-a.A), B: a.B + w*(b.B-a.B)}
}

// colourRamp is what the colour maps share: the value range, the alpha and the
// colour at a parameter t in [0, 1], low values at 0.
type colourRamp struct {
	min, max float64
	alpha    float64
	lab      func(t float64) lab
}

// colourAt returns the 8-bit colour at parameter t in [0, 1] (clamped).
func (s *colourRamp) colourAt(t float64) color.NRGBA {
	c := labToSRGB(s.lab(t))
	c.A = uint8(math.Round(255 * s.alpha))
	return c
}

// At returns the colour of value v; values outside [min, max] are an error
// as palette.ColorMap requires.
func (s *colourRamp) At(v float64) (color.Color, error) {
	switch {
	case math.IsNaN(v):
		return nil, fmt.Errorf("plots: colour map: NaN value")
	case v < s.min:
		return nil, palette.ErrUnderflow
	case v > s.max:
		return nil, palette.ErrOverflow
	}
	if s.max == s.min {
		return s.colourAt(0.5), nil
	}
	return s.colourAt((v - s.min) / (s.max - s.min)), nil
}

func (s *colourRamp) Max() float64           { return s.max }
func (s *colourRamp) Min() float64           { return s.min }
func (s *colourRamp) SetMax(v float64)       { s.max = v }
func (s *colourRamp) SetMin(v float64)       { s.min = v }
func (s *colourRamp) Alpha() float64         { return s.alpha }
func (s *colourRamp) SetAlpha(alpha float64) { s.alpha = alpha }

// Palette returns n colours evenly spaced from the low end to the high
// end (for the sequential map, dark to light).
func (s *colourRamp) Palette(n int) palette.Palette {
	cs := make([]color.Color, n)
	for i := range cs {
		t := 0.0
		if n > 1 {
			t = float64(i) / float64(n-1)
		}
		cs[i] = s.colourAt(t)
	}
	return colours(cs)
}

type colours []color.Color

func (c colours) Colors() []color.Color { return c }

// The diverging colour map of maps around a reference value (an order
// map's design order), our own control points: a blue arm below the
// centre and a brick-red arm above it, both ending at CIE L* about 39,
// meeting at a light neutral grey in the middle. Each arm is interpolated
// in L*a*b*, so lightness falls linearly and equally on both sides of the
// centre: the distance from the centre reads the same in grey scale.
var (
	divLow    = hex("#2e5aa8")
	divCentre = hex("#f7f7f7")
	divHigh   = hex("#a13b2a")
)

// Diverging is the colour map over [min, max] with its light neutral
// middle at (min + max) / 2: blue below, brick red above, darker with the
// distance from the middle. It implements palette.ColorMap.
type Diverging struct {
	colourRamp
	low, mid, high lab
}

// NewDiverging returns the diverging colour map over [min, max].
func NewDiverging(min, max float64) *Diverging {
	d := &Diverging{colourRamp: colourRamp{min: min, max: max, alpha: 1},
		low: srgbToLab(divLow), mid: srgbToLab(divCentre), high: srgbToLab(divHigh)}
	d.lab = d.labAt
	return d
}

// labAt returns the colour at parameter t in [0, 1] (clamped), the middle
// at t = 1/2.
func (d *Diverging) labAt(t float64) lab {
	t = math.Min(1, math.Max(0, t))
	end, w := d.high, 2*t-1
	if t < 0.5 {
		end, w = d.low, 1-2*t
	}
	a := d.mid
	return lab{L: a.L + w*(end.L-a.L), A: a.A + w*(end.A-a.A), B: a.B + w*(end.B-a.B)}
}
