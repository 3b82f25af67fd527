package plots

import (
	"bytes"
	"encoding/json"
	"flag"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

var update = flag.Bool("update", false, "rewrite the golden files in testdata/")

// powerLaw returns e = c h^p on the grids h.
func powerLaw(c, p float64, h []float64) []float64 {
	e := make([]float64, len(h))
	for i, x := range h {
		e[i] = c * math.Pow(x, p)
	}
	return e
}

var vortexH = []float64{10.0 / 32, 10.0 / 64, 10.0 / 128, 10.0 / 256}

func sampleGroups() []Series {
	return []Series{
		{Label: "scheme=godunov", X: vortexH, Y: powerLaw(0.3, 1, vortexH), Fitted: true, Order: 1, OrderSE: math.NaN()},
		{Label: "scheme=muscl limiter=minmod", X: vortexH, Y: powerLaw(0.08, 2, vortexH), Fitted: true, Order: 2.034, OrderSE: 0.0123},
		{Label: "scheme=muscl limiter=mc", X: vortexH, Y: powerLaw(0.02, 2, vortexH)},
	}
}

// Reference lines are straight lines of slope exactly 1 and 2 in log-log
// coordinates (law: log y = log C + p log h), they span the data's h range,
// pass under every data point and touch the factor refBelow below one.
func TestConvergenceReferenceSlopes(t *testing.T) {
	f, err := Convergence(sampleGroups(), Axes{XLabel: "h", YLabel: "L1(rho)"})
	if err != nil {
		t.Fatal(err)
	}
	if len(f.Refs) != 2 {
		t.Fatalf("%d reference lines, want 2", len(f.Refs))
	}
	hmin, hmax := vortexH[3], vortexH[0]
	for k, r := range f.Refs {
		slope := math.Log(r.To.Y/r.From.Y) / math.Log(r.To.X/r.From.X)
		if want := ReferenceOrders[k]; math.Abs(slope-want) > 1e-12 {
			t.Errorf("reference %q: log-log slope %.15g, want %g", r.Label, slope, want)
		}
		if r.From.X != hmin || r.To.X != hmax {
			t.Errorf("reference %q spans [%g, %g], want the data range [%g, %g]", r.Label, r.From.X, r.To.X, hmin, hmax)
		}
		c := r.From.Y / math.Pow(r.From.X, r.Order)
		closest := math.Inf(1)
		for _, l := range f.Lines {
			for _, q := range l.Points {
				ratio := c * math.Pow(q.X, r.Order) / q.Y
				closest = math.Min(closest, 1/ratio)
			}
		}
		if math.Abs(closest-1/refBelow) > 1e-9 {
			t.Errorf("reference %q: nearest data point %.6g times above the line, want %g", r.Label, closest, 1/refBelow)
		}
	}
}

// Legend entries carry the fitted order, with its standard error where one
// is known, and nothing for an unfitted group; styles differ by group.
func TestConvergenceLegend(t *testing.T) {
	f, err := Convergence(sampleGroups(), Axes{XLabel: "h", YLabel: "L1(rho)"})
	if err != nil {
		t.Fatal(err)
	}
	want := []string{
		"scheme=godunov  p = 1.00",
		"scheme=muscl limiter=minmod  p = 2.03 ± 0.01",
		"scheme=muscl limiter=mc",
	}
	got := f.Legend()
	if strings.Join(got, "\n") != strings.Join(want, "\n") {
		t.Errorf("legend\n%q\nwant\n%q", got, want)
	}
	for i, l := range f.Lines {
		if l.Style != StyleOf(i) {
			t.Errorf("line %d has style %v, want %v", i, l.Style, StyleOf(i))
		}
		for k := 1; k < len(l.Points); k++ {
			if l.Points[k].X <= l.Points[k-1].X {
				t.Errorf("line %d: points not sorted by h", i)
			}
		}
	}
}

func TestConvergenceDropsUndrawable(t *testing.T) {
	g := Series{Label: "g", X: []float64{0.1, 0.05, 0.025, 0.0125}, Y: []float64{1e-2, 0, math.NaN(), 1e-4}}
	f, err := Convergence([]Series{g, {Label: "empty", X: []float64{0.1}, Y: []float64{-1}}}, Axes{})
	if err != nil {
		t.Fatal(err)
	}
	if len(f.Lines) != 1 || len(f.Lines[0].Points) != 2 {
		t.Fatalf("lines %+v; want one line with 2 points", f.Lines)
	}
	if len(f.Notes) != 2 || !strings.Contains(f.Notes[0], `"g": 2 of 4 points`) {
		t.Errorf("notes %q", f.Notes)
	}
}

func TestConvergenceErrors(t *testing.T) {
	for _, tc := range []struct {
		name string
		in   []Series
		want string
	}{
		{"none", nil, "no groups"},
		{"lengths", []Series{{Label: "a", X: []float64{1, 2}, Y: []float64{1}}}, `group "a": 2 x values but 1 y values`},
		{"nothing drawable", []Series{{Label: "a", X: []float64{1}, Y: []float64{0}}}, "no drawable points"},
	} {
		_, err := Convergence(tc.in, Axes{})
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: error %v, want one containing %q", tc.name, err, tc.want)
		}
	}
}

// A single grid has no slope: no reference lines, no error.
func TestConvergenceSingleGrid(t *testing.T) {
	f, err := Convergence([]Series{{Label: "a", X: []float64{0.1}, Y: []float64{0.01}}}, Axes{})
	if err != nil || len(f.Refs) != 0 {
		t.Fatalf("refs %v, err %v", f.Refs, err)
	}
}

// Reference labels go to the end where the two lines are farther apart:
// for second-order data both lines touch the data at the finest grid, so
// both labels go to the coarse (right) end; for first-order data they meet
// at the coarse end and the labels go left.
func TestReferenceLabelEnds(t *testing.T) {
	for _, tc := range []struct {
		p     float64
		right bool
	}{{2, true}, {1, false}} {
		f, err := Convergence([]Series{{Label: "a", X: vortexH, Y: powerLaw(1, tc.p, vortexH)}}, Axes{})
		if err != nil {
			t.Fatal(err)
		}
		for _, r := range f.Refs {
			if r.Order == tc.p {
				continue // the line parallel to the data: both ends are equally apart from it
			}
			if r.LabelRight != tc.right {
				t.Errorf("data order %g: label of %q right=%v, want %v", tc.p, r.Label, r.LabelRight, tc.right)
			}
			end := r.From
			if r.LabelRight {
				end = r.To
			}
			if r.LabelAt != end {
				t.Errorf("label at %v, want line end %v", r.LabelAt, end)
			}
		}
	}
}

// The cost plot keeps the points in the order given (coarse to fine) and
// draws no reference slopes.
func TestCost(t *testing.T) {
	g := Series{Label: "a", X: []float64{0.01, 0.08, 0.7}, Y: []float64{1e-2, 2.6e-3, 6e-4}}
	f, err := Cost([]Series{g}, Axes{XLabel: "CPU time [s]", YLabel: "L1(rho)"})
	if err != nil {
		t.Fatal(err)
	}
	if len(f.Refs) != 0 || !f.LogX || !f.LogY {
		t.Errorf("refs %v logx %v logy %v", f.Refs, f.LogX, f.LogY)
	}
	for i, p := range f.Lines[0].Points {
		if p.X != g.X[i] || p.Y != g.Y[i] {
			t.Errorf("point %d = %v, want (%g, %g)", i, p, g.X[i], g.Y[i])
		}
	}
}

// golden compares v, as indented JSON with numbers rounded to 12
// significant digits (so that the last bits of math.Pow on another
// architecture do not matter), with testdata/name; -update rewrites the file.
func golden(t *testing.T, name string, v any) {
	t.Helper()
	raw, err := json.Marshal(v)
	if err != nil {
		t.Fatal(err)
	}
	var tree any
	if err := json.Unmarshal(raw, &tree); err != nil {
		t.Fatal(err)
	}
	got, err := json.MarshalIndent(round12(tree), "", "  ")
	if err != nil {
		t.Fatal(err)
	}
	got = append(got, '\n')
	path := filepath.Join("testdata", name)
	if *update {
		if err := os.WriteFile(path, got, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run go test -update once to create it)", err)
	}
	if !bytes.Equal(got, want) {
		t.Errorf("%s differs from the prepared figure:\n%s", path, got)
	}
}

func round12(v any) any {
	switch v := v.(type) {
	case float64:
		r, _ := strconv.ParseFloat(strconv.FormatFloat(v, 'g', 12, 64), 64)
		return r
	case []any:
		for i := range v {
			v[i] = round12(v[i])
		}
	case map[string]any:
		for k := range v {
			v[k] = round12(v[k])
		}
	}
	return v
}

// Golden plot data: the points, reference lines and legend of a
// convergence plot of exact power laws. The reference lines' slopes are
// checked by TestConvergenceReferenceSlopes; the golden file pins the rest.
func TestConvergenceGolden(t *testing.T) {
	f, err := Convergence(sampleGroups(), Axes{Title: "vortex", XLabel: "h", YLabel: "L1(rho)"})
	if err != nil {
		t.Fatal(err)
	}
	golden(t, "convergence.json", f)
}
