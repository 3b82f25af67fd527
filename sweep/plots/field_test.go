package plots

import (
	"bytes"
	"image/color"
	"math"
	"strings"
	"testing"
)

// ramp is the field v = x + 10 y sampled at cell centres of an nx x ny
// grid on [0,2]x[0,1].
func ramp(nx, ny int) Field {
	f := Field{Name: "u", NX: nx, NY: ny, X0: 0, X1: 2, Y0: 0, Y1: 1, V: make([]float64, nx*ny)}
	for j := range ny {
		for i := range nx {
			f.V[j*nx+i] = f.xc(i) + 10*f.yc(j)
		}
	}
	return f
}

func TestCutAlongX(t *testing.T) {
	f := ramp(8, 4) // dy = 0.25: y = 0.6 lies in row 2 (centre 0.625)
	fig, err := Cut(f, CutOptions{Axis: "x", At: 0.6, Exact: func(x, y float64) float64 { return x + 10*y }, ExactSamples: 16})
	if err != nil {
		t.Fatal(err)
	}
	if fig.Title != "u along x at y = 0.625" || fig.XLabel != "x" || fig.YLabel != "u" {
		t.Errorf("title %q labels %q %q", fig.Title, fig.XLabel, fig.YLabel)
	}
	if got := fig.Legend(); len(got) != 2 || got[0] != "numerical" || got[1] != "exact" {
		t.Fatalf("legend %q", got)
	}
	num, ex := fig.Lines[0], fig.Lines[1]
	if len(num.Points) != 8 || num.NoMarkers {
		t.Fatalf("numerical: %d points, markers off %v", len(num.Points), num.NoMarkers)
	}
	for i, p := range num.Points {
		x := 0.125 + 0.25*float64(i)
		if math.Abs(p.X-x) > 1e-15 || math.Abs(p.Y-(x+6.25)) > 1e-12 {
			t.Errorf("cell %d: %v, want (%g, %g)", i, p, x, x+6.25)
		}
	}
	if len(ex.Points) != 17 || !ex.Plain || ex.Points[0].X != 0 || ex.Points[16].X != 2 {
		t.Errorf("exact: %d points from %v to %v", len(ex.Points), ex.Points[0], ex.Points[len(ex.Points)-1])
	}
	// The exact curve is sampled on the cut's line.
	if p := ex.Points[8]; math.Abs(p.Y-(1+6.25)) > 1e-12 {
		t.Errorf("exact at x=1: %v", p)
	}
}

func TestCutAlongYMiddle(t *testing.T) {
	f := ramp(4, 100) // more cells than are marked individually
	fig, err := Cut(f, CutOptions{Axis: "y", At: math.NaN(), Label: "nx=4"})
	if err != nil {
		t.Fatal(err)
	}
	num := fig.Lines[0]
	if len(fig.Lines) != 1 || num.Label != "nx=4" || !num.NoMarkers || len(num.Points) != 100 {
		t.Fatalf("lines %d, label %q, markers off %v, %d points", len(fig.Lines), num.Label, num.NoMarkers, len(num.Points))
	}
	// x = 1 is the edge between columns 1 and 2; the middle picks column 2 (centre 1.25).
	if !strings.HasSuffix(fig.Title, "x = 1.25") {
		t.Errorf("title %q", fig.Title)
	}
	if p := num.Points[0]; math.Abs(p.X-0.005) > 1e-15 || math.Abs(p.Y-(1.25+0.05)) > 1e-12 {
		t.Errorf("first point %v", p)
	}
}

func TestCutErrors(t *testing.T) {
	f := ramp(4, 4)
	if _, err := Cut(f, CutOptions{Axis: "z"}); err == nil || !strings.Contains(err.Error(), `axis "z"`) {
		t.Errorf("axis z: %v", err)
	}
	bad := f
	bad.V = bad.V[:3]
	if _, err := Cut(bad, CutOptions{Axis: "x"}); err == nil || !strings.Contains(err.Error(), "3 values for a 4x4 grid") {
		t.Errorf("short field: %v", err)
	}
	nan := ramp(4, 1)
	for i := range nan.V {
		nan.V[i] = math.NaN()
	}
	if _, err := Cut(nan, CutOptions{Axis: "x", At: math.NaN()}); err == nil {
		t.Error("all-NaN cut: no error")
	}
}

func TestHeatMapRange(t *testing.T) {
	f := ramp(4, 2)
	f.V[3] = math.NaN()
	h, err := HeatMap(f, Axes{Title: "u"})
	if err != nil {
		t.Fatal(err)
	}
	// Finite values: x + 10 y at x = 0.25..1.75, y = 0.25, 0.75; V[3] (1.75 + 2.5) is NaN.
	if h.Min != 0.25+2.5 || h.Max != 1.75+7.5 || h.NonFinite != 1 || len(h.Notes) != 1 {
		t.Errorf("min %g max %g non-finite %d notes %q", h.Min, h.Max, h.NonFinite, h.Notes)
	}
	if h.XLabel != "x" || h.YLabel != "y" || h.BarLabel != "u" {
		t.Errorf("labels %q %q %q", h.XLabel, h.YLabel, h.BarLabel)
	}
	// The raster puts row 0 at the bottom, in k x k blocks, NaN in magenta.
	img := h.raster(NewSequential(h.Min, h.Max))
	k := img.Bounds().Dx() / 4
	if img.Bounds().Dx() < rasterMin || img.Bounds().Dy() != 2*k {
		t.Fatalf("raster %v", img.Bounds())
	}
	if got := img.NRGBAAt(0, 2*k-1); got != NewSequential(0, 1).colourAt(0) {
		t.Errorf("bottom-left pixel %v, want the dark end", got)
	}
	if got := img.NRGBAAt(4*k-1, 0); got != NewSequential(0, 1).colourAt(1) {
		t.Errorf("top-right pixel %v, want the light end", got)
	}
	if got := img.NRGBAAt(4*k-1, 2*k-1); got != nanColour {
		t.Errorf("NaN cell pixel %v, want %v", got, nanColour)
	}
}

func TestHeatMapConstantAndEmpty(t *testing.T) {
	f := Field{Name: "rho", NX: 2, NY: 2, X0: 0, X1: 1, Y0: 0, Y1: 1, V: []float64{2, 2, 2, 2}}
	h, err := HeatMap(f, Axes{})
	if err != nil || h.Min != 1.98 || h.Max != 2.02 {
		t.Errorf("constant field: range [%v, %v], %v", h.Min, h.Max, err)
	}
	f.V = []float64{math.Inf(1), math.NaN(), math.NaN(), math.NaN()}
	if _, err := HeatMap(f, Axes{}); err == nil || !strings.Contains(err.Error(), "no finite value") {
		t.Errorf("all non-finite: %v", err)
	}
}

func TestFromFloat32(t *testing.T) {
	f := FromFloat32("rho", 2, 1, 0, 1, 0, 0.5, []float32{0.5, 0.25})
	if f.V[0] != 0.5 || f.V[1] != 0.25 || f.NX != 2 || f.Y1 != 0.5 {
		t.Errorf("%+v", f)
	}
}

// A diverging heat map spans centre ± span whatever the data, notes the
// cells beyond it and hatches the cells without a value.
func TestDivergingHeatMap(t *testing.T) {
	f := Field{Name: "order", NX: 4, NY: 1, X0: 0, X1: 4, Y0: 0, Y1: 1, V: []float64{2, -1, math.NaN(), 7}}
	h, err := DivergingHeatMap(f, 2, 2, Axes{Title: "p"})
	if err != nil {
		t.Fatal(err)
	}
	if !h.Diverging || h.Min != 0 || h.Max != 4 || len(h.Notes) != 1 || !strings.Contains(h.Notes[0], "2 cells beyond") {
		t.Fatalf("range [%g, %g], notes %q", h.Min, h.Max, h.Notes)
	}
	cm := NewDiverging(h.Min, h.Max)
	img := h.raster(cm)
	k := img.Bounds().Dx() / 4
	for _, tc := range []struct {
		cell int
		want color.NRGBA
	}{{0, cm.colourAt(0.5)}, {1, cm.colourAt(0)}, {3, cm.colourAt(1)}} {
		if got := img.NRGBAAt(tc.cell*k+k/2, k/2); got != tc.want {
			t.Errorf("cell %d: %v, want %v", tc.cell, got, tc.want)
		}
	}
	// The masked cell: white with grey diagonals, never magenta.
	ink, paper := 0, 0
	for y := range k {
		for x := 2 * k; x < 3*k; x++ {
			switch img.NRGBAAt(x, y) {
			case maskInk:
				ink++
			case maskPaper:
				paper++
			default:
				t.Fatalf("masked cell pixel (%d,%d) %v", x, y, img.NRGBAAt(x, y))
			}
		}
	}
	if ink == 0 || paper < 2*ink {
		t.Errorf("hatching: %d ink, %d paper pixels", ink, paper)
	}
	var buf bytes.Buffer
	if err := Write(&buf, "png", h); err != nil || buf.Len() == 0 {
		t.Errorf("png: %d bytes, %v", buf.Len(), err)
	}
	for _, span := range []float64{0, -1, math.Inf(1), math.NaN()} {
		if _, err := DivergingHeatMap(f, 2, span, Axes{}); err == nil {
			t.Errorf("span %v: no error", span)
		}
	}
}
