package plots

import (
	"bytes"
	"fmt"
	"image"
	"image/color"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"unicode/utf8"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/palette"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"
)

// Drawer is a prepared figure that can be drawn: *Figure or *Heat.
type Drawer interface {
	size() (w, h vg.Length)
	draw(c draw.Canvas) error
}

// Formats are the output formats Write accepts, by file extension.
var Formats = []string{"png", "svg"}

// FormatOf returns the output format named by the extension of path, or an
// error naming the path when the extension is missing or unknown.
func FormatOf(path string) (string, error) {
	ext := strings.ToLower(strings.TrimPrefix(filepath.Ext(path), "."))
	for _, f := range Formats {
		if ext == f {
			return f, nil
		}
	}
	if ext == "" {
		return "", fmt.Errorf("%s: no file extension; want .png or .svg", path)
	}
	return "", fmt.Errorf("%s: unknown image format %q; want .png or .svg", path, "."+ext)
}

// Save draws d into the file at path in the format its extension names.
// On error no partial file is left behind.
func Save(path string, d Drawer) error {
	format, err := FormatOf(path)
	if err != nil {
		return err
	}
	var buf bytes.Buffer
	if err := Write(&buf, format, d); err != nil {
		return fmt.Errorf("%s: %w", path, err)
	}
	if err := os.WriteFile(path, buf.Bytes(), 0o644); err != nil {
		return err
	}
	return nil
}

// pngDPI is the resolution of PNG output.
const pngDPI = 144

// Write draws d to w as "png" or "svg".
func Write(w io.Writer, format string, d Drawer) error {
	width, height := d.size()
	var c vg.CanvasWriterTo
	switch format {
	case "png":
		c = vgimg.PngCanvas{Canvas: vgimg.NewWith(vgimg.UseWH(width, height), vgimg.UseDPI(pngDPI))}
	case "svg":
		c = vgsvg.New(width, height)
	default:
		return fmt.Errorf("unknown image format %q; want png or svg", format)
	}
	dc := draw.New(c)
	dc.SetColor(hex("#ffffff"))
	dc.Fill(dc.Rectangle.Path())
	if err := d.draw(dc); err != nil {
		return err
	}
	_, err := c.WriteTo(w)
	return err
}

// Sizes of a line figure: the plot area and the legend font.
var (
	figWidth   = vg.Points(400)
	figHeight  = vg.Points(300)
	legendFont = vg.Points(9)
	labelFont  = vg.Points(9)
	legendGap  = vg.Points(10)
)

func (f *Figure) legend() plot.Legend {
	l := plot.NewLegend()
	l.TextStyle.Font.Size = legendFont
	l.Top, l.Left = true, true
	l.ThumbnailWidth = vg.Points(28)
	l.Padding = vg.Points(2)
	for _, ln := range f.Lines {
		thumbs := []plot.Thumbnailer{}
		if ln.Plain {
			thumbs = append(thumbs, &plotter.Line{LineStyle: exactStyle})
		} else {
			thumbs = append(thumbs, &plotter.Line{LineStyle: ln.Style.lineStyle()})
			if !ln.NoMarkers {
				thumbs = append(thumbs, &plotter.Scatter{GlyphStyle: ln.Style.glyphStyle()})
			}
		}
		l.Add(ln.Label, thumbs...)
	}
	return l
}

func (f *Figure) legendWidth() vg.Length {
	l := f.legend()
	var w vg.Length
	for _, ln := range f.Lines {
		w = max(w, l.TextStyle.Rectangle(" "+ln.Label).Max.X)
	}
	return w + l.ThumbnailWidth + 2*legendGap
}

// LegendWidth is the width of f's legend, drawn beside the plot area.
func (f *Figure) LegendWidth() vg.Length { return f.legendWidth() }

// PlotWidth is the width of the plot area of every line figure.
func PlotWidth() vg.Length { return figWidth }

func (f *Figure) size() (vg.Length, vg.Length) {
	return figWidth + f.legendWidth(), figHeight
}

// draw draws the plot on the left and the legend beside it on the right,
// so that the legend never hides data.
func (f *Figure) draw(c draw.Canvas) error {
	p, err := f.plot()
	if err != nil {
		return err
	}
	lw := f.legendWidth()
	p.Draw(draw.Crop(c, 0, -lw, 0, 0))
	l := f.legend()
	l.XOffs = legendGap
	l.YOffs = -vg.Points(24) // level with the top of the plot area, under the title
	l.Draw(draw.Crop(c, c.Max.X-c.Min.X-lw, 0, 0, 0))
	return nil
}

// plot builds the gonum plot of f without a legend.
func (f *Figure) plot() (*plot.Plot, error) {
	p := plot.New()
	p.Title.Text = wrapTitle(f.Title, titleChars)
	p.Title.TextStyle.Font.Size = vg.Points(11)
	p.X.Label.Text, p.Y.Label.Text = f.XLabel, f.YLabel
	if f.LogX {
		p.X.Scale, p.X.Tick.Marker = plot.LogScale{}, logTicks{}
	}
	if f.LogY {
		p.Y.Scale, p.Y.Tick.Marker = plot.LogScale{}, logTicks{}
	}
	p.Add(plotter.NewGrid())
	setRanges(f, p)
	for _, r := range f.Refs {
		l, err := plotter.NewLine(plotter.XYs{{X: r.From.X, Y: r.From.Y}, {X: r.To.X, Y: r.To.Y}})
		if err != nil {
			return nil, fmt.Errorf("reference line %s: %w", r.Label, err)
		}
		l.LineStyle = refStyle
		p.Add(l, refLabel{r})
	}
	for _, ln := range f.Lines {
		xys := make(plotter.XYs, len(ln.Points))
		for i, q := range ln.Points {
			xys[i] = plotter.XY{X: q.X, Y: q.Y}
		}
		if ln.Plain {
			l, err := plotter.NewLine(xys)
			if err != nil {
				return nil, fmt.Errorf("line %q: %w", ln.Label, err)
			}
			l.LineStyle = exactStyle
			p.Add(l)
			continue
		}
		l, s, err := plotter.NewLinePoints(xys)
		if err != nil {
			return nil, fmt.Errorf("line %q: %w", ln.Label, err)
		}
		l.LineStyle = ln.Style.lineStyle()
		if ln.Width > 0 {
			l.LineStyle.Width = vg.Points(ln.Width)
		}
		s.GlyphStyle = ln.Style.glyphStyle()
		if ln.NoMarkers {
			p.Add(l)
			continue
		}
		p.Add(l, s)
	}
	return p, nil
}

// logMargin is the factor by which a log axis extends past its data, so
// that markers do not sit on the frame.
const logMargin = 1.15

// setRanges fixes the axis ranges from the data and reference lines: on a
// log axis a margin of logMargin either side; an axis whose data all share
// one value gets a range around it (a factor 2 either way on a log axis,
// ±1 % or ±1 otherwise), since gonum cannot scale an empty range.
func setRanges(f *Figure, p *plot.Plot) {
	xmin, xmax, ymin, ymax := math.Inf(1), math.Inf(-1), math.Inf(1), math.Inf(-1)
	add := func(q XY) {
		xmin, xmax = math.Min(xmin, q.X), math.Max(xmax, q.X)
		ymin, ymax = math.Min(ymin, q.Y), math.Max(ymax, q.Y)
	}
	for _, l := range f.Lines {
		for _, q := range l.Points {
			add(q)
		}
	}
	for _, r := range f.Refs {
		add(r.From)
		add(r.To)
	}
	set := func(a *plot.Axis, lo, hi float64, log bool) {
		switch {
		case log && lo == hi:
			a.Min, a.Max = lo/2, hi*2
		case log:
			a.Min, a.Max = lo/logMargin, hi*logMargin
		case lo != hi:
			// gonum's own range, padded for the markers
		case lo == 0:
			a.Min, a.Max = -1, 1
		default:
			d := 0.01 * math.Abs(lo)
			a.Min, a.Max = lo-d, hi+d
		}
	}
	set(&p.X, xmin, xmax, f.LogX)
	set(&p.Y, ymin, ymax, f.LogY)
}

// refLabel draws a reference line's label along the line, just below it,
// at the end the prepared figure chose. The angle on screen is known only
// at drawing time, so it is a plotter of its own.
type refLabel struct{ r Ref }

func (l refLabel) Plot(c draw.Canvas, plt *plot.Plot) {
	trX, trY := plt.Transforms(&c)
	a := vg.Point{X: trX(l.r.From.X), Y: trY(l.r.From.Y)}
	b := vg.Point{X: trX(l.r.To.X), Y: trY(l.r.To.Y)}
	sty := text.Style{Color: refStyle.Color, Font: font.From(plot.DefaultFont, labelFont), Handler: plot.DefaultTextHandler}
	sty.Rotation = math.Atan2(float64(b.Y-a.Y), float64(b.X-a.X))
	sty.YAlign = draw.YTop
	inset := vg.Points(4)
	cos, sin := vg.Length(math.Cos(sty.Rotation)), vg.Length(math.Sin(sty.Rotation))
	at := vg.Point{X: a.X + inset*cos, Y: a.Y + inset*sin}
	sty.XAlign = draw.XLeft
	if l.r.LabelRight {
		at = vg.Point{X: b.X - inset*cos, Y: b.Y - inset*sin}
		sty.XAlign = draw.XRight
	}
	// Move off the line by a small gap, perpendicular to it, downwards.
	gap := vg.Points(2)
	at.X, at.Y = at.X+gap*sin, at.Y-gap*cos
	c.FillText(sty, at, l.r.Label)
}

// logTicks labels a log axis at 1, 2 and 5 times the powers of ten when
// the range spans fewer than three decades (at every integer multiple when
// that gives fewer than three labels) and at the powers of ten otherwise,
// with minor ticks at every integer multiple. Labels are plain decimals,
// or all in exponent form ("2e-4") when one of them would be smaller than
// 1e-3 or at least 1e4.
type logTicks struct{}

func (logTicks) Ticks(min, max float64) []plot.Tick {
	if !(min > 0) || !(max > min) {
		return nil
	}
	levels := []int{1}
	if math.Log10(max/min) < 3 {
		levels = []int{1, 2, 5}
	}
	ticks := logTickSet(min, max, levels)
	if len(levels) > 1 && labelled(ticks) < 3 {
		ticks = logTickSet(min, max, []int{1, 2, 3, 4, 5, 6, 7, 8, 9})
	}
	return ticks
}

// logTickSet returns a tick at every integer multiple of the powers of ten
// in [min, max], labelled where the multiple is one of levels.
func logTickSet(min, max float64, levels []int) []plot.Tick {
	var ticks []plot.Tick
	exp := false
	for e := math.Floor(math.Log10(min)); e <= math.Ceil(math.Log10(max)); e++ {
		for m := 1; m < 10; m++ {
			// The nearest double to m x 10^e (5 * 1e-6 is not: it prints as
			// 4.9999999999999996e-06).
			v, _ := strconv.ParseFloat(strconv.Itoa(m)+"e"+strconv.Itoa(int(e)), 64)
			if v < min*(1-1e-9) || v > max*(1+1e-9) {
				continue
			}
			t := plot.Tick{Value: v}
			if slices.Contains(levels, m) {
				t.Label = "label"
				exp = exp || v < 1e-3*(1-1e-9) || v >= 1e4
			}
			ticks = append(ticks, t)
		}
	}
	for i := range ticks {
		if ticks[i].Label != "" {
			ticks[i].Label = tickLabel(ticks[i].Value, exp)
		}
	}
	return ticks
}

func labelled(ticks []plot.Tick) int {
	n := 0
	for _, t := range ticks {
		if t.Label != "" {
			n++
		}
	}
	return n
}

// tickLabel prints v with at most three significant digits, in exponent
// form ("1e-4", "2.5e6") when exp is set.
func tickLabel(v float64, exp bool) string {
	if !exp {
		s := strconv.FormatFloat(v, 'g', 3, 64)
		if strings.Contains(s, "e") { // 'g' writes 1000 as 1e+03
			r, _ := strconv.ParseFloat(s, 64)
			s = strconv.FormatFloat(r, 'f', -1, 64)
		}
		return s
	}
	s := strconv.FormatFloat(v, 'e', 2, 64) // "2.50e-04"
	mant, e, _ := strings.Cut(s, "e")
	if strings.Contains(mant, ".") {
		mant = strings.TrimSuffix(strings.TrimRight(mant, "0"), ".")
	}
	n, _ := strconv.Atoi(e)
	return mant + "e" + strconv.Itoa(n)
}

// Sizes of a heat map: the plot's longer side and the colour bar.
var (
	heatSide = vg.Points(360)
	barWidth = vg.Points(80) // room right of the map for the bar, its ticks and label
	barStrip = vg.Points(14) // width of the coloured strip
	barRight = vg.Points(14) // space right of the strip
)

func (h *Heat) size() (vg.Length, vg.Length) {
	// The plot area keeps the aspect ratio of the domain; the margins
	// for title, labels and ticks are about 50 pt on each axis.
	ax := (h.Field.X1 - h.Field.X0) / (h.Field.Y1 - h.Field.Y0)
	ax = math.Min(4, math.Max(0.25, ax))
	w, hh := heatSide, heatSide
	if ax >= 1 {
		hh = vg.Length(float64(heatSide) / ax)
	} else {
		w = vg.Length(float64(heatSide) * ax)
	}
	const margin = 50
	return w + vg.Points(margin) + barWidth, hh + vg.Points(margin)
}

// heatColours is a colour map of a heat map.
type heatColours interface {
	palette.ColorMap
	colourAt(t float64) color.NRGBA
}

func (h *Heat) draw(c draw.Canvas) error {
	var cm heatColours = NewSequential(h.Min, h.Max)
	if h.Diverging {
		cm = NewDiverging(h.Min, h.Max)
	}
	p := plot.New()
	p.Title.Text = wrapTitle(h.Title, titleChars)
	p.Title.TextStyle.Font.Size = vg.Points(11)
	p.X.Label.Text, p.Y.Label.Text = h.XLabel, h.YLabel
	p.Add(plotter.NewImage(h.raster(cm), h.Field.X0, h.Field.Y0, h.Field.X1, h.Field.Y1))
	p.X.Padding, p.Y.Padding = 0, 0
	p.X.Min, p.X.Max = h.Field.X0, h.Field.X1
	p.Y.Min, p.Y.Max = h.Field.Y0, h.Field.Y1

	bar := plot.New()
	bar.HideX()
	bar.Y.Label.Text = h.BarLabel
	bar.Y.Padding = vg.Points(2)
	bar.Add(&plotter.ColorBar{ColorMap: cm, Vertical: true, Colors: 256})

	mainC := draw.Crop(c, 0, -barWidth, 0, 0)
	p.Draw(mainC)
	// Place the bar so that its data area (the coloured strip) spans the
	// heat map's height and is barStrip wide, barRight from the edge. The
	// bar plot's margins do not depend on where it is drawn, so one
	// measurement gives the canvas that puts the strip where it belongs.
	da := p.DataCanvas(mainC)
	want := vg.Rectangle{
		Min: vg.Point{X: c.Max.X - barRight - barStrip, Y: da.Min.Y},
		Max: vg.Point{X: c.Max.X - barRight, Y: da.Max.Y},
	}
	trial := draw.Canvas{Canvas: c.Canvas, Rectangle: vg.Rectangle{Min: vg.Point{X: c.Max.X - barWidth, Y: da.Min.Y}, Max: want.Max}}
	got := bar.DataCanvas(trial).Rectangle
	trial.Min.X += want.Min.X - got.Min.X
	trial.Min.Y += want.Min.Y - got.Min.Y
	trial.Max.X += want.Max.X - got.Max.X
	trial.Max.Y += want.Max.Y - got.Max.Y
	bar.Draw(trial)
	return nil
}

// rasterMin is the fewest pixels the longer side of a heat-map raster
// has. Cells are replicated to whole pixel blocks, so that the smoothing a
// viewer applies when scaling the image blurs no more than a fraction of a
// cell and cell boundaries stay sharp.
const rasterMin = 512

// maskInk and maskPaper are the hatching of masked cells of a diverging
// heat map: thin grey diagonal lines on white, a texture no colour of the
// map has, in colour or in grey scale.
var (
	maskInk   = hex("#8c8c8c")
	maskPaper = hex("#ffffff")
)

// maskPeriod is the spacing in pixels of the hatching's diagonals.
const maskPeriod = 4

// raster paints the field with the colour map, one block of k x k pixels
// per cell, row 0 of the image at the top (y = Y1).
func (h *Heat) raster(cm heatColours) *image.NRGBA {
	f := &h.Field
	k := max(1, (rasterMin+max(f.NX, f.NY)-1)/max(f.NX, f.NY))
	img := image.NewNRGBA(image.Rect(0, 0, k*f.NX, k*f.NY))
	for j := range f.NY {
		for i := range f.NX {
			v := f.at(i, j)
			finite := !math.IsNaN(v) && !math.IsInf(v, 0)
			c := nanColour
			if finite {
				c = cm.colourAt((v - h.Min) / (h.Max - h.Min))
			}
			for y := (f.NY - 1 - j) * k; y < (f.NY-j)*k; y++ {
				for x := i * k; x < (i+1)*k; x++ {
					if !finite && h.Diverging {
						// Hatched by image coordinates, so that the lines run
						// on across neighbouring masked cells.
						c = maskPaper
						if (x+y)%maskPeriod == 0 {
							c = maskInk
						}
					}
					img.SetNRGBA(x, y, c)
				}
			}
		}
	}
	return img
}

// titleChars is the longest title line, in characters, that fits across a
// figure at the title's 11 points; longer lines are wrapped.
const titleChars = 90

// wrapTitle breaks each line of title that is longer than width characters
// at the last space that keeps it within width (a word longer than width
// stays whole), so that a long group label is not cut at the figure's edges.
func wrapTitle(title string, width int) string {
	var out []string
	for _, line := range strings.Split(title, "\n") {
		cur := ""
		for _, w := range strings.Fields(line) {
			switch {
			case cur == "":
				cur = w
			case utf8.RuneCountInString(cur)+1+utf8.RuneCountInString(w) <= width:
				cur += " " + w
			default:
				out = append(out, cur)
				cur = w
			}
		}
		out = append(out, cur)
	}
	return strings.Join(out, "\n")
}
