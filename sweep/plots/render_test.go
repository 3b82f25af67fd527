package plots

import (
	"bytes"
	"encoding/xml"
	"image/png"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func TestFormatOf(t *testing.T) {
	for _, tc := range []struct{ path, want, err string }{
		{"a/b.png", "png", ""},
		{"b.SVG", "svg", ""},
		{"b.jpg", "", `b.jpg: unknown image format ".jpg"; want .png or .svg`},
		{"plot", "", "plot: no file extension"},
	} {
		got, err := FormatOf(tc.path)
		if got != tc.want || (err == nil) != (tc.err == "") || (err != nil && !strings.Contains(err.Error(), tc.err)) {
			t.Errorf("FormatOf(%q) = %q, %v; want %q, %q", tc.path, got, err, tc.want, tc.err)
		}
	}
}

// wellFormed checks that an SVG document is well-formed XML with an <svg>
// root.
func wellFormed(t *testing.T, b []byte) {
	t.Helper()
	d := xml.NewDecoder(bytes.NewReader(b))
	root := ""
	for {
		tok, err := d.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatalf("SVG not well-formed: %v", err)
		}
		if s, ok := tok.(xml.StartElement); ok && root == "" {
			root = s.Name.Local
		}
	}
	if root != "svg" {
		t.Fatalf("root element %q, want svg", root)
	}
}

// Every figure kind draws to PNG and SVG; the PNG decodes at the size the
// figure asks for, the SVG parses.
func TestSaveAllKinds(t *testing.T) {
	dir := t.TempDir()
	conv, err := Convergence(sampleGroups(), Axes{Title: "vortex", XLabel: "h", YLabel: "L1(rho)"})
	if err != nil {
		t.Fatal(err)
	}
	cost, err := Cost(sampleGroups(), Axes{XLabel: "CPU time [s]", YLabel: "L1(rho)"})
	if err != nil {
		t.Fatal(err)
	}
	heat, err := HeatMap(ramp(16, 8), Axes{Title: "u"})
	if err != nil {
		t.Fatal(err)
	}
	cut, err := Cut(ramp(16, 8), CutOptions{Axis: "x", At: math.NaN(), Exact: func(x, y float64) float64 { return x + 10*y }})
	if err != nil {
		t.Fatal(err)
	}
	for name, d := range map[string]Drawer{"conv": conv, "cost": cost, "heat": heat, "cut": cut} {
		p := filepath.Join(dir, name+".png")
		if err := Save(p, d); err != nil {
			t.Fatal(err)
		}
		fh, err := os.Open(p)
		if err != nil {
			t.Fatal(err)
		}
		img, err := png.Decode(fh)
		fh.Close()
		if err != nil {
			t.Fatalf("%s: %v", p, err)
		}
		w, h := d.size()
		if dx := img.Bounds().Dx(); math.Abs(float64(dx)-w.Points()*pngDPI/72) > 1 {
			t.Errorf("%s: width %d px, want %.0f", name, dx, w.Points()*pngDPI/72)
		}
		if dy := img.Bounds().Dy(); math.Abs(float64(dy)-h.Points()*pngDPI/72) > 1 {
			t.Errorf("%s: height %d px, want %.0f", name, dy, h.Points()*pngDPI/72)
		}
		var svg bytes.Buffer
		if err := Write(&svg, "svg", d); err != nil {
			t.Fatal(err)
		}
		wellFormed(t, svg.Bytes())
	}
	// Legend and axis texts reach the SVG, escaped.
	var svg bytes.Buffer
	g := []Series{{Label: "a<b & c", X: []float64{1, 2}, Y: []float64{1, 4}}}
	f, _ := Convergence(g, Axes{XLabel: "h", YLabel: "L1(rho)"})
	if err := Write(&svg, "svg", f); err != nil {
		t.Fatal(err)
	}
	wellFormed(t, svg.Bytes())
	for _, s := range []string{"a&lt;b &amp; c", "L1(rho)", "order 1", "order 2"} {
		if !strings.Contains(svg.String(), s) {
			t.Errorf("SVG lacks %q", s)
		}
	}
}

// One point, or a flat line, still draws: the degenerate range is widened.
func TestDrawDegenerate(t *testing.T) {
	one, err := Convergence([]Series{{Label: "a", X: []float64{0.1}, Y: []float64{0.01}}}, Axes{})
	if err != nil {
		t.Fatal(err)
	}
	flat, err := Cut(Field{Name: "u", NX: 4, NY: 1, X0: 0, X1: 1, Y0: 0, Y1: 1, V: []float64{0, 0, 0, 0}}, CutOptions{Axis: "x", At: math.NaN()})
	if err != nil {
		t.Fatal(err)
	}
	for _, d := range []Drawer{one, flat} {
		var buf bytes.Buffer
		if err := Write(&buf, "svg", d); err != nil {
			t.Fatal(err)
		}
		wellFormed(t, buf.Bytes())
	}
}

func TestSaveBadFormat(t *testing.T) {
	f, _ := Cost(sampleGroups(), Axes{})
	p := filepath.Join(t.TempDir(), "x.gif")
	if err := Save(p, f); err == nil || !strings.Contains(err.Error(), `unknown image format ".gif"`) {
		t.Errorf("Save .gif: %v", err)
	}
	if _, err := os.Stat(p); !os.IsNotExist(err) {
		t.Errorf("a file was left behind: %v", err)
	}
	if err := Write(io.Discard, "pdf", f); err == nil {
		t.Error("Write pdf: no error")
	}
}

// Tick labels are short: at most three significant digits, whatever the
// rounding of the tick value (a label once read 4.9999999999999996e-6).
func TestTickLabels(t *testing.T) {
	for v, want := range map[float64]string{5 * 1e-6: "5e-6", 2.5e-4: "2.5e-4", 1e4: "1e4", 3 * 1e-7: "3e-7", 1.2345e-5: "1.23e-5"} {
		if got := tickLabel(v, true); got != want {
			t.Errorf("tickLabel(%v): %q, want %q", v, got, want)
		}
	}
}

func TestLogTicks(t *testing.T) {
	labels := func(min, max float64) []string {
		var out []string
		for _, tk := range (logTicks{}).Ticks(min, max) {
			if tk.Label != "" {
				out = append(out, tk.Label)
			}
		}
		return out
	}
	for _, tc := range []struct {
		min, max float64
		want     string
	}{
		{0.03, 0.35, "0.05 0.1 0.2"},                                // under three decades: 1-2-5
		{2e-5, 0.1, "1e-4 1e-3 1e-2 1e-1"},                          // more: decades, exponent form for all
		{3e-4, 0.2, "5e-4 1e-3 2e-3 5e-3 1e-2 2e-2 5e-2 1e-1 2e-1"}, // one label below 1e-3: all in exponent form
		{0.15, 0.65, "0.2 0.3 0.4 0.5 0.6"},                         // 1-2-5 gives two labels: every multiple
		{1, 1000, "1 10 100 1000"},                                  // three decades: powers of ten
		{3e-6, 4e-5, "5e-6 1e-5 2e-5"},                              // 5 x 1e-6 in floating point is 4.9999999999999996e-06
		{2.5e-7, 9e-6, "5e-7 1e-6 2e-6 5e-6"},
	} {
		if got := strings.Join(labels(tc.min, tc.max), " "); got != tc.want {
			t.Errorf("ticks [%g, %g]: %q, want %q", tc.min, tc.max, got, tc.want)
		}
	}
}

// A title line longer than the figure is wide is broken at spaces, each
// piece within the width; short lines, explicit line breaks and a word
// longer than the width are kept.
func TestWrapTitle(t *testing.T) {
	for _, c := range []struct {
		in   string
		w    int
		want string
	}{
		{"short", 8, "short"},
		{"aaa bbb ccc ddd", 8, "aaa bbb\nccc ddd"},
		{"aaa bbb\nccc", 8, "aaa bbb\nccc"},
		{"abcdefghijkl x", 8, "abcdefghijkl\nx"},
		{"aaaa bbbb cccc dddd eeee", 5, "aaaa\nbbbb\ncccc\ndddd\neeee"},
	} {
		if got := wrapTitle(c.in, c.w); got != c.want {
			t.Errorf("wrapTitle(%q, %d) = %q, want %q", c.in, c.w, got, c.want)
		}
	}
}
