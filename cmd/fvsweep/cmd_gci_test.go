package main

import (
	"bytes"
	"encoding/json"
	"math"
	"strconv"
	"strings"
	"testing"
)

func gciRun(args ...string) (code int, stdout, stderr string) {
	var o, e bytes.Buffer
	code = runGCI(args, &o, &e)
	return code, o.String(), e.String()
}

// gciJSON runs the command, which must succeed, and decodes its output into v.
func gciJSON(t *testing.T, v any, args ...string) {
	t.Helper()
	code, out, errs := gciRun(args...)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	if err := json.Unmarshal([]byte(out), v); err != nil {
		t.Fatalf("not JSON: %v\n%s", err, out)
	}
}

// TestGCICommandCelikExample: the worked example of Celik et al. 2008
// (J. Fluids Eng. 130(7) 078001, Table 1, recalled from memory;
// docs/references.md §5) through the command line, as JSON.
func TestGCICommandCelikExample(t *testing.T) {
	var m map[string]any
	gciJSON(t, &m, "--values", "6.063,5.972,5.863", "--cells", "18000,8000,4500", "--dim", "2", "--json")
	want := map[string]struct {
		v     float64
		scale float64
		dig   int
	}{
		"order": {1.53, 1, 2}, "extrapolated": {6.1685, 1, 4},
		"e_approx": {1.5, 100, 1}, "e_extrap": {1.7, 100, 1}, "gci_fine": {2.2, 100, 1},
	}
	for k, w := range want {
		x, ok := m[k].(float64)
		s := math.Pow(10, float64(w.dig))
		if !ok || math.Round(x*w.scale*s)/s != w.v {
			t.Errorf("%s = %v, printed %g", k, m[k], w.v)
		}
	}
	if m["convergence"] != "monotone" {
		t.Errorf("convergence %v", m["convergence"])
	}
	if _, ok := m["asymptotic_ratio"].(float64); !ok {
		t.Errorf("asymptotic_ratio missing: %v", m["asymptotic_ratio"])
	}
}

func TestGCICommandSpacingsAnyOrder(t *testing.T) {
	// Coarse to fine by --h: the same estimate, grids reported finest first.
	code, out, errs := gciRun("--values", "5.863,5.972,6.063", "--h", "0.04,0.03,0.02")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	for _, s := range []string{"grids, sorted finest first", "monotone", "GCI_fine21 (Fs = 1.25)", "asymptotic ratio"} {
		if !strings.Contains(out, s) {
			t.Errorf("text output lacks %q:\n%s", s, out)
		}
	}
	if !strings.Contains(out, "  1     0.02  6.063") {
		t.Errorf("finest grid not first:\n%s", out)
	}
}

func TestGCICommandManyGrids(t *testing.T) {
	var raw map[string]any
	gciJSON(t, &raw, "--values", "1.0003,1.0012,1.0048,1.019,1.07", "--h", "0.025,0.05,0.1,0.2,0.4", "--json")
	var st struct {
		Records []map[string]any
		LS      map[string]any
	}
	recs, _ := raw["records"].([]any)
	for _, r := range recs {
		m, _ := r.(map[string]any)
		st.Records = append(st.Records, m)
	}
	st.LS, _ = raw["least_squares"].(map[string]any)
	if len(st.Records) != 3 || st.LS == nil {
		t.Fatalf("records %d least squares %v", len(st.Records), st.LS)
	}
	for i, r := range st.Records {
		for _, k := range []string{"order", "extrapolated", "e_approx", "e_extrap", "gci_fine", "convergence", "asymptotic_ratio"} {
			if _, ok := r[k]; !ok {
				t.Errorf("record %d lacks %s", i, k)
			}
		}
	}
	if _, ok := st.LS["order"].(float64); !ok {
		t.Errorf("least-squares order missing: %v", st.LS)
	}
}

func TestGCICommandTwoGrids(t *testing.T) {
	var m map[string]any
	gciJSON(t, &m, "--values", "6.063,5.972", "--h", "1,1.5", "--order", "2", "--json")
	if m["safety_factor"] != 3.0 || m["order_assumed"] != true {
		t.Errorf("two grids: %v", m)
	}
}

func TestGCICommandDegenerateText(t *testing.T) {
	code, out, _ := gciRun("--values", "1,1.2,1.3", "--h", "1,2,4")
	if code != 0 || !strings.Contains(out, "divergent") || !strings.Contains(out, "undefined (see note)") {
		t.Errorf("exit %d:\n%s", code, out)
	}
}

func TestGCICommandBadFlags(t *testing.T) {
	cases := []struct {
		args []string
		want string // the flag the message names
	}{
		{[]string{"--cells", "1,2,3", "--dim", "2"}, "--values"},
		{[]string{"--values", "1,2,3"}, "--cells"},
		{[]string{"--values", "1,x,3", "--h", "1,2,3"}, "-values"},
		{[]string{"--values", "1,2,3", "--h", "1,2"}, "--h"},
		{[]string{"--values", "1,2,3", "--h", "1,2,-3"}, "--h"},
		{[]string{"--values", "1,2,3", "--h", "1,2,2"}, "--h"},
		{[]string{"--values", "1,2,3", "--cells", "10,20,40"}, "--dim"},
		{[]string{"--values", "1,2,3", "--cells", "10,20,40", "--dim", "5"}, "--dim"},
		{[]string{"--values", "1,2,3", "--cells", "10,20,40", "--dim", "2", "--h", "1,2,3"}, "--cells"},
		{[]string{"--values", "1,2", "--h", "1,2"}, "--order"},
		{[]string{"--values", "1,2,3", "--h", "1,2,4", "--order", "2"}, "--order"},
		{[]string{"--values", "1,2,3", "--h", "1,2,4", "--fs", "-1"}, "--fs"},
		{[]string{"--values", "1,2,3", "--h", "1,2,4", "--bogus"}, "-bogus"},
		{[]string{"--values", "1,2,3", "--h", "1,2,4", "extra"}, "extra"},
		{[]string{"--values", "1,2,3", "--h", "1,2,4", "--method", "roache"}, "--method"},
		{[]string{"--values", "1,2", "--h", "1,2", "--method", "lsq"}, "--method lsq"},
		{[]string{"--values", "1,2,3", "--h", "1,2,4", "--method", "lsq", "--fs", "2"}, "--fs"},
		{[]string{"--values", "1,2,3", "--h", "1,2,4", "--method", "lsq", "--order", "2"}, "--order"},
		{[]string{"--values", "1,2,3", "--h", "1,2,4", "--design", "-1"}, "--design"},
	}
	for _, c := range cases {
		code, out, errs := gciRun(c.args...)
		if code != 2 || out != "" || !strings.Contains(errs, c.want) || strings.Count(strings.TrimSpace(errs), "\n") != 0 {
			t.Errorf("%v: exit %d stderr %q, want exit 2 and one line naming %s", c.args, code, errs, c.want)
		}
	}
	for _, a := range []string{"-h", "--help"} {
		if code, out, _ := gciRun(a); code != 0 || !strings.Contains(out, "usage: fvsweep gci") {
			t.Errorf("%s: exit %d", a, code)
		}
	}
}

// TestGCICommandWarns: the case of issue 12, an apparent order of 34.22 from
// values that differ by 1e-10, is no longer printed silently.
func TestGCICommandWarns(t *testing.T) {
	args := []string{"--values", "1,1.0000000001,3", "--h", "0.1,0.2,0.4"}
	code, out, errs := gciRun(args...)
	if code != 0 || !strings.Contains(out, "  warning: observed order 34.22 is above 6") {
		t.Errorf("exit %d %s:\n%s", code, errs, out)
	}
	var m struct{ Warnings []string }
	gciJSON(t, &m, append(args, "--json")...)
	if len(m.Warnings) == 0 {
		t.Errorf("JSON has no warnings")
	}
	// Close grids (ratio 1.01, Celik et al. 2008 recommend 1.3) warn too.
	_, out, _ = gciRun("--values", "0.5012,0.50125,0.5013", "--cells", "102,101,100", "--dim", "1")
	if !strings.Contains(out, "below 1.3") {
		t.Errorf("ratio 1.01 without a warning:\n%s", out)
	}
	// A clean study carries none.
	m.Warnings = nil
	gciJSON(t, &m, "--values", "6.063,5.972,5.863", "--cells", "18000,8000,4500", "--dim", "2", "--json")
	if len(m.Warnings) != 0 {
		t.Errorf("Celik et al. 2008 example warns: %q", m.Warnings)
	}
}

// TestGCICommandLSQ: --method lsq gives the keys of issue 12, and for an
// exact power law of order 1.5 its U equals the GCI of Celik et al. 2008
// with Fs = 1.25 (Eça & Hoekstra 2014, recalled from memory,
// docs/references.md §14).
func TestGCICommandLSQ(t *testing.T) {
	h := []float64{0.025, 0.05, 0.1, 0.2}
	var vals []string
	for _, x := range h {
		vals = append(vals, strconv.FormatFloat(1+0.3*math.Pow(x, 1.5), 'g', -1, 64))
	}
	args := []string{"--values", strings.Join(vals, ","), "--h", "0.025,0.05,0.1,0.2"}
	var u map[string]any
	gciJSON(t, &u, append(args, "--method", "lsq", "--json")...)
	for _, k := range []string{"uncertainty", "uncertainty_abs", "extrapolated", "order", "fit", "sigma"} {
		if _, ok := u[k]; !ok {
			t.Errorf("lsq JSON lacks %q: %v", k, u)
		}
	}
	var c struct {
		Records []struct {
			GCIFine float64 `json:"gci_fine"`
		}
	}
	gciJSON(t, &c, append(args, "--json")...)
	if got, want := u["uncertainty"].(float64), c.Records[0].GCIFine; u["fit"] != "power" || math.Abs(got-want) > 1e-6*want {
		t.Errorf("lsq uncertainty %v (fit %v), Celik GCI_fine %v", got, u["fit"], want)
	}
	code, out, _ := gciRun(append(args, "--method", "lsq")...)
	for _, s := range []string{"least-squares uncertainty over 4 grids", "fit", "observed order p", "U of grid 1"} {
		if code != 0 || !strings.Contains(out, s) {
			t.Errorf("lsq text lacks %q:\n%s", s, out)
		}
	}
	// Three grids work, with a warning that four are needed to see scatter.
	code, out, _ = gciRun("--values", "1.01,1.04,1.16", "--h", "1,2,4", "--method", "lsq")
	if code != 0 || !strings.Contains(out, "warning: three grids") {
		t.Errorf("three grids: exit %d\n%s", code, out)
	}
}
