package spec

import (
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"fvsweep/fv2d"
	"fvsweep/sweep/job"
)

// specTestCase is a test-only Euler case with a few parameters of its own,
// so that the spec tests do not depend on the real cases.
type specTestCase struct{}

func (specTestCase) Name() string            { return "spec-test-case" }
func (specTestCase) Summary() string         { return "test-only case for the spec parser" }
func (specTestCase) Equation() fv2d.Equation { return fv2d.Euler }
func (specTestCase) Params() []fv2d.Param    { return specTestParams }

var specTestParams = func() []fv2d.Param {
	ps := []fv2d.Param{
		{Name: "test", Kind: fv2d.Choice, Default: "1", Choices: []string{"1", "2", "3"}, Min: fv2d.Unbounded, Max: fv2d.Unbounded},
		{Name: "amp", Kind: fv2d.Float, Default: "0.1", Min: 0, Max: 1},
	}
	for i := 0; i < 10; i++ { // k0..k9, for job-count tests
		ps = append(ps, fv2d.Param{Name: fmt.Sprintf("k%d", i), Kind: fv2d.Int, Default: "0", Min: 0, Max: 1e6})
	}
	return ps
}()

func (specTestCase) Setup(v fv2d.Values) (*fv2d.Problem, error) {
	return &fv2d.Problem{Eq: fv2d.Euler, Gamma: v.Float("gamma"), X1: 1, Y1: 1,
		Initial:     func(x, y float64, w []float64) { w[0], w[1], w[2], w[3] = 1, 1, 0, 1 },
		Functionals: []fv2d.Functional{{Name: "probe", Eval: func(*fv2d.State) float64 { return 0 }}}}, nil
}

// Validate refuses one combination, to test errors that only a whole run shows.
func (specTestCase) Validate(v fv2d.Values) error {
	if v.Get("test") == "3" && v.Float("amp") > 0.5 {
		return errors.New("test 3 needs amp <= 0.5")
	}
	return nil
}

func init() { fv2d.Register(specTestCase{}) }

const goodSpec = `name = "good-one"
description = "a spec that parses"

[[study]]
label = "first"
case = "spec-test-case"
fixed = { t_end = 0.50, cfl = 0.8 }
axes = { limiter = ["minmod", "vanleer", "mc"], scheme = ["godunov", "muscl"] }
together = [ { flux = ["hll", "hllc"], amp = [0.2, 0.3] } ]
refine = { nx = [16, 32, 64] }
snapshot = true
order_tol = 0.2
informational = true
error_growth_tol = 0
order_drop_tol = 0.05

[[study]]
case = "spec-test-case"
design_order = 1
var = "E"
norm = "linf"
functional = "probe"
[study.fixed]
ny = 4
test = 2
[study.refine]
nx = [
  8,
  16,
]
`

// mustLoad parses and checks src against lim.
func mustLoad(t *testing.T, src string, lim Limits) *Plan {
	t.Helper()
	pl, err := LoadSource("test.toml", []byte(src), lim)
	if err != nil {
		t.Fatalf("LoadSource: %v", err)
	}
	return pl
}

func TestParseSpecGood(t *testing.T) {
	s, err := Parse("test.toml", []byte(goodSpec))
	if err != nil {
		t.Fatal(err)
	}
	if s.Name != "good-one" || s.Description != "a spec that parses" || len(s.Studies) != 2 || s.Source != goodSpec {
		t.Fatalf("spec = %+v", s)
	}
	a, b := s.Studies[0], s.Studies[1]
	if a.Index != 1 || a.Line != 4 || a.Label != "first" || !a.Snapshot || a.OrderTol != 0.2 || a.DesignOrder != 0 {
		t.Errorf("study 1 header = %+v", a)
	}
	if !a.Informational || a.ErrorGrowthTol != 0 || a.OrderDropTol != 0.05 {
		t.Errorf("study 1 gate settings = %v %v %v, want true 0 0.05", a.Informational, a.ErrorGrowthTol, a.OrderDropTol)
	}
	if b.Informational || b.ErrorGrowthTol != job.DefaultErrorGrowthTol || b.OrderDropTol != job.DefaultOrderDropTol {
		t.Errorf("study 2 gate settings = %v %v %v, want the defaults", b.Informational, b.ErrorGrowthTol, b.OrderDropTol)
	}
	if ss := s.Settings(); !ss[0].Informational || ss[0].OrderDropTol != 0.05 || ss[1].ErrorGrowthTol != job.DefaultErrorGrowthTol {
		t.Errorf("Settings() lost the gate settings: %+v", ss)
	}
	if a.Fixed["t_end"] != "0.5" || a.Fixed["cfl"] != "0.8" {
		t.Errorf("fixed not canonical: %v", a.Fixed)
	}
	if len(a.Axes) != 2 || a.Axes[0].Name != "limiter" || a.Axes[1].Name != "scheme" || a.Axes[0].Line != 8 {
		t.Errorf("axes = %+v (want file order limiter, scheme on line 8)", a.Axes)
	}
	if len(a.Together) != 1 || a.Together[0][0].Name != "flux" || a.Together[0][1].Values[1] != "0.3" {
		t.Errorf("together = %+v", a.Together)
	}
	if a.Refine != "nx" || len(a.Grid) != 2 || a.Grid[1].Name != "ny" || a.Grid[1].Values[2] != "64" || a.Grid[1].Follows != "nx" {
		t.Errorf("grid = %+v (ny should follow nx)", a.Grid)
	}
	if a.Var != "rho" || a.Norm != "l1" {
		t.Errorf("defaults var/norm = %s/%s, want rho/l1", a.Var, a.Norm)
	}
	if b.Label != "spec-test-case" || b.DesignOrder != 1 || b.OrderTol != DefaultOrderTol || b.Var != "E" ||
		b.Norm != "linf" || b.Functional != "probe" || b.Snapshot {
		t.Errorf("study 2 = %+v", b)
	}
	if len(b.Grid) != 1 || b.Fixed["ny"] != "4" || b.Fixed["test"] != "2" {
		t.Errorf("study 2 grid %+v fixed %v: ny is fixed, so it must not follow", b.Grid, b.Fixed)
	}
}

// study wraps body in a minimal spec with one study; the body starts on line 4.
func study(body string) string {
	return "name = \"t\"\n\n[[study]]\n" + body
}

func TestParseSpecErrors(t *testing.T) {
	tests := []struct {
		name string
		src  string
		line int
		key  string
		msg  string
	}{
		{"malformed", "name = \"t\"\n[[study]\ncase = 1\n", 2, "", "malformed TOML"},
		{"unterminated string", "name = \"t\n", 1, "", "malformed TOML"},
		{"duplicate toml key", study("case = \"spec-test-case\"\ncase = \"x\"\n"), 5, "", "malformed TOML"},
		{"missing name", "[[study]]\ncase = \"spec-test-case\"\n", 1, "name", "missing"},
		{"name type", "name = 3\n", 1, "name", "want a string"},
		{"name charset", "name = \"a.b\"\n", 1, "name", "letters, digits"},
		{"name space", "\nname = \"a b\"\n", 2, "name", "letters, digits"},
		{"unknown top key", "name = \"t\"\ncolour = 1\n", 2, "colour", "unknown key"},
		{"quoted odd key", "name = \"t\"\n\"a\\nb\" = 1\n", 2, `"a\nb"`, "unknown key"},
		{"no study", "name = \"t\"\n", 1, "study", "missing"},
		{"study as table", "name = \"t\"\n[study]\ncase = \"vortex\"\n", 2, "study", "[[study]]"},
		{"unknown study key", study("case = \"spec-test-case\"\naxis = { nx = [8] }\n"), 5, "axis", "unknown key"},
		{"missing case", study("fixed = { cfl = 0.5 }\n"), 3, "case", "missing"},
		{"unknown case", study("case = \"no-such\"\n"), 4, "case", `unknown case "no-such"`},
		{"unknown param fixed", study("case = \"spec-test-case\"\nfixed = { cfll = 0.5 }\n"), 5, "fixed.cfll", `no parameter "cfll"`},
		{"unknown param axes", study("case = \"spec-test-case\"\n\naxes = { foo = [1] }\n"), 6, "axes.foo", `no parameter "foo"`},
		{"table for list", study("case = \"spec-test-case\"\naxes = { limiter = { a = 1 } }\n"), 5, "axes.limiter", "want a list"},
		{"scalar for list", study("case = \"spec-test-case\"\naxes = { limiter = \"mc\" }\n"), 5, "axes.limiter", "want a list"},
		{"string for nx", study("case = \"spec-test-case\"\naxes = { nx = [\"64\"] }\n"), 5, "axes.nx", `want an integer, got the string "64"`},
		{"float for nx", study("case = \"spec-test-case\"\nfixed = { nx = 64.0 }\n"), 5, "fixed.nx", "want an integer"},
		{"string for cfl", study("case = \"spec-test-case\"\nfixed = { cfl = \"0.5\" }\n"), 5, "fixed.cfl", "want a number"},
		{"int for bool", study("case = \"spec-test-case\"\nfixed = { alternate = 1 }\n"), 5, "fixed.alternate", "want true or false"},
		{"list in fixed", study("case = \"spec-test-case\"\nfixed = { cfl = [0.5] }\n"), 5, "fixed.cfl", "lists go under cross"},
		{"unknown param cross", study("case = \"spec-test-case\"\ncross = { foo = [1] }\n"), 5, "cross.foo", `no parameter "foo"`},
		{"cross and axes", study("case = \"spec-test-case\"\ncross = { nx = [8] }\naxes = { ny = [8] }\n"), 6, "axes", "under cross only"},
		{"fixed not table", study("case = \"spec-test-case\"\nfixed = 3\n"), 5, "fixed", "want a table"},
		{"date value", study("case = \"spec-test-case\"\nfixed = { t_end = 1979-05-27 }\n"), 5, "fixed.t_end", "date"},
		{"empty axis", study("case = \"spec-test-case\"\naxes = { limiter = [] }\n"), 5, "axes.limiter", "empty list"},
		{"choice", study("case = \"spec-test-case\"\naxes = { limiter = [\"mc\", \"foo\"] }\n"), 5, "axes.limiter",
			`"foo" is not one of minmod, vanleer, mc, superbee`},
		{"element line", study("case = \"spec-test-case\"\naxes.limiter = [\n  \"mc\",\n  \"foo\",\n]\n"), 7, "axes.limiter", `"foo"`},
		{"cfl range", study("case = \"spec-test-case\"\nfixed = { cfl = 1.5 }\n"), 5, "fixed.cfl", "out of range"},
		{"cfl zero", study("case = \"spec-test-case\"\naxes = { cfl = [0.5, 0.0] }\n"), 5, "axes.cfl", "out of range (must be > 0)"},
		{"negative nx", study("case = \"spec-test-case\"\nrefine = { nx = [-8, 16] }\n"), 5, "refine.nx", "out of range"},
		{"negative ny", study("case = \"spec-test-case\"\nfixed = { ny = -1 }\n"), 5, "fixed.ny", "out of range"},
		{"nan", study("case = \"spec-test-case\"\nfixed = { cfl = nan }\n"), 5, "fixed.cfl", "not a finite number"},
		{"inf", study("case = \"spec-test-case\"\naxes = { t_end = [1.0, inf] }\n"), 5, "axes.t_end", "not a finite number"},
		{"negative inf", study("case = \"spec-test-case\"\nfixed = { amp = -inf }\n"), 5, "fixed.amp", "not a finite number"},
		{"listed twice", study("case = \"spec-test-case\"\naxes = { cfl = [0.5, 0.50] }\n"), 5, "axes.cfl", "listed twice"},
		{"fixed and axes", study("case = \"spec-test-case\"\nfixed = { cfl = 0.5 }\naxes = { cfl = [0.4, 0.6] }\n"), 6, "axes.cfl",
			"also set by fixed.cfl (line 5)"},
		{"axes and refine", study("case = \"spec-test-case\"\naxes = { nx = [8, 16] }\nrefine = { nx = [8, 16] }\n"), 6, "refine.nx",
			"also set by axes.nx"},
		{"together and axes", study("case = \"spec-test-case\"\naxes = { flux = [\"hll\"] }\ntogether = [{ flux = [\"hllc\"] }]\n"), 6,
			"together[1].flux", "also set by axes.flux"},
		{"together lengths", study("case = \"spec-test-case\"\n[[study.together]]\nflux = [\"hll\", \"hllc\"]\ncfl = [0.5]\n"), 7,
			"together[1].cfl", "1 values, but flux has 2"},
		{"together tuples", study("case = \"spec-test-case\"\ntogether = [{ flux = [\"hll\", \"hll\"], cfl = [0.5, 0.5] }]\n"), 5,
			"together[1]", "entries 1 and 2 are the same"},
		{"together table", study("case = \"spec-test-case\"\ntogether = { flux = [\"hll\"] }\n"), 5, "together", "want a list of tables"},
		{"together empty group", study("case = \"spec-test-case\"\ntogether = [{}]\n"), 5, "together[1]", "want a table"},
		{"refine key", study("case = \"spec-test-case\"\nrefine = { cfl = [0.2, 0.4] }\n"), 5, "refine.cfl", "nx or ny"},
		{"refine empty", study("case = \"spec-test-case\"\nrefine = {}\n"), 5, "refine", "empty"},
		{"refine one grid", study("case = \"spec-test-case\"\nrefine = { nx = [32] }\n"), 5, "refine.nx", "at least 2 grids"},
		{"refine order", study("case = \"spec-test-case\"\nrefine = { nx = [32,\n 16] }\n"), 6, "refine.nx", "coarse to fine"},
		{"refine lengths", study("case = \"spec-test-case\"\nrefine = { nx = [8, 16], ny = [8, 16, 32] }\n"), 5, "refine.ny", "refine together"},
		{"follower range", study("case = \"spec-test-case\"\nrefine = { ny = [2, 4] }\n"), 5, "refine.ny", "nx follows ny"},
		{"snapshot type", study("case = \"spec-test-case\"\nsnapshot = \"yes\"\n"), 5, "snapshot", "want true or false"},
		{"design order", study("case = \"spec-test-case\"\ndesign_order = -2\n"), 5, "design_order", "out of range"},
		{"design order zero", study("case = \"spec-test-case\"\ndesign_order = 0\n"), 5, "design_order", "> 0"},
		{"informational type", study("case = \"spec-test-case\"\ninformational = 1\n"), 5, "informational", "want true or false"},
		{"error growth tol", study("case = \"spec-test-case\"\nerror_growth_tol = -0.1\n"), 5, "error_growth_tol", "out of range"},
		{"order drop tol", study("case = \"spec-test-case\"\norder_drop_tol = \"x\"\n"), 5, "order_drop_tol", "want a number"},
		{"order tol nan", study("case = \"spec-test-case\"\norder_tol = nan\n"), 5, "order_tol", "out of range"},
		{"norm", study("case = \"spec-test-case\"\nnorm = \"l3\"\n"), 5, "norm", "not one of l1, l2, linf"},
		{"uncertainty", study("case = \"spec-test-case\"\nuncertainty = \"gci\"\n"), 5, "uncertainty", "not one of celik, lsq, auto"},
		{"var", study("case = \"spec-test-case\"\nvar = \"u\"\n"), 5, "var", "not a conserved variable"},
		{"label newline", study("case = \"spec-test-case\"\nlabel = \"a\\nb\"\n"), 5, "label", "one-line string"},
		{"functional", study("case = \"spec-test-case\"\nfunctional = \"nope\"\n"), 5, "functional", `no functional "nope" (it has: probe)`},
		{"combination", study("case = \"spec-test-case\"\nfixed = { test = 3 }\naxes = { amp = [0.1, 0.9] }\n"), 3, "",
			"test 3 needs amp <= 0.5 (at amp=0.9)"},
		{"sub-table header", study("case = \"spec-test-case\"\n[study.axes]\nlimiter = [\"mc\"]\nflux = [\"abc\"]\n"), 7, "axes.flux", `"abc"`},
		{"second study", study("case = \"spec-test-case\"\n[[study]]\ncase = \"spec-test-case\"\nfixed = { nx = 2 }\n"), 7, "fixed.nx",
			"out of range"},
		{"dotted key", study("case = \"spec-test-case\"\nfixed.cfl = 2.0\n"), 5, "fixed.cfl", "out of range"},
	}
	// Parse refuses all but these, which only resolving the runs finds.
	byCheck := map[string]bool{"functional": true, "combination": true}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			s, err := Parse("test.toml", []byte(tc.src))
			if byCheck[tc.name] {
				if err != nil {
					t.Fatalf("Parse = %v, want it left to Check", err)
				}
				_, err = Check(s, DefaultLimits())
			}
			t.Log(err)
			var se *Error
			if !errors.As(err, &se) {
				t.Fatalf("err = %v, want a *Error", err)
			}
			if se.Line != tc.line || se.Key != tc.key || !strings.Contains(se.Msg, tc.msg) {
				t.Errorf("got line %d key %q msg %q\nwant line %d key %q msg containing %q", se.Line, se.Key, se.Msg, tc.line, tc.key, tc.msg)
			}
			want := fmt.Sprintf("spec test.toml:%d: ", tc.line)
			if msg := err.Error(); !strings.HasPrefix(msg, want) || strings.Contains(msg, "\n") ||
				(tc.key != "" && !strings.Contains(msg, tc.key+": ")) {
				t.Errorf("message %q: want one line starting %q naming the key", msg, want)
			}
		})
	}
}

func TestErrorNamesStudy(t *testing.T) {
	src := study("case = \"spec-test-case\"\n[[study]]\ncase = \"spec-test-case\"\naxes = { limiter = [\"x\"] }\n")
	_, err := Parse("configs/x.toml", []byte(src))
	want := `spec configs/x.toml:7: study 2: axes.limiter: "x" is not one of minmod, vanleer, mc, superbee`
	if err == nil || err.Error() != want {
		t.Errorf("err = %v\nwant  %s", err, want)
	}
}

func TestJobLimit(t *testing.T) {
	// 100 x 100 x 100 runs = 1,000,000 > the default 200,000.
	vals := make([]string, 100)
	for i := range vals {
		vals[i] = fmt.Sprint(i)
	}
	list := "[" + strings.Join(vals, ", ") + "]"
	src := study("case = \"spec-test-case\"\naxes = { k0 = " + list + ", k1 = " + list + ", k2 = " + list + " }\n")
	s, err := Parse("big.toml", []byte(src))
	if err != nil {
		t.Fatalf("Parse = %v: the count is Check's", err)
	}
	_, err = Check(s, DefaultLimits())
	var se *Error
	if !errors.As(err, &se) || se.Line != 3 || se.Study != 1 || !strings.Contains(se.Msg, "1000000 jobs") ||
		!strings.Contains(se.Msg, "limit of 200000") {
		t.Fatalf("err = %v, want a refusal at line 3 naming 1000000 jobs and the limit", err)
	}
	// Ten axes of 100 values: 1e20 runs overflow int; still refused, at once.
	var axes []string
	for i := 0; i < 10; i++ {
		axes = append(axes, fmt.Sprintf("k%d = %s", i, list))
	}
	src = study("case = \"spec-test-case\"\naxes = { " + strings.Join(axes, ", ") + " }\n")
	if _, err := LoadSource("huge.toml", []byte(src), DefaultLimits()); err == nil || !strings.Contains(err.Error(), "more than 9.2e18") {
		t.Errorf("err = %v, want a refusal of an overflowing count", err)
	}
	// A configured limit: the good spec has 3*2*2*3 + 2 = 38 runs.
	if _, err := LoadSource("good.toml", []byte(goodSpec), Limits{MaxJobs: 37}); err == nil ||
		!strings.Contains(err.Error(), "expands to 38 jobs (this study 36), over the job limit of 37") {
		t.Errorf("err = %v, want a refusal with the count 38", err)
	}
	if s := mustLoad(t, goodSpec, Limits{MaxJobs: 38}); s.Count() != 38 {
		t.Errorf("Count = %d, want 38", s.Count())
	}
}

func TestMemoryLimit(t *testing.T) {
	// 100000^2 cells hold 4 conserved variables of 8 bytes: at least 320 GB
	// for the state alone, over 8 GiB by any estimate.
	src := study("case = \"spec-test-case\"\naxes = { limiter = [\"mc\"] }\nrefine = { nx = [64, 100000] }\n")
	_, err := LoadSource("mem.toml", []byte(src), DefaultLimits())
	var se *Error
	if !errors.As(err, &se) || se.Line != 6 || se.Key != "refine.nx" ||
		!strings.Contains(se.Msg, "grid 100000x100000 (at limiter=mc nx=100000 ny=100000)") || !strings.Contains(se.Msg, "per-job limit of 8 GiB") {
		t.Fatalf("err = %v, want a memory refusal at refine.nx naming the grid", err)
	}
	// A configured limit just below the estimate of one 64x64 run.
	v, err := fv2d.Resolve("spec-test-case", map[string]string{"nx": "64", "ny": "64"})
	if err != nil {
		t.Fatal(err)
	}
	b := fv2d.Estimate(v).Bytes
	src = study("case = \"spec-test-case\"\nfixed = { nx = 64 }\n")
	if _, err := LoadSource("mem.toml", []byte(src), Limits{MaxBytes: b - 1}); err == nil || !strings.Contains(err.Error(), "mem.toml:5: study 1: fixed.nx:") {
		t.Errorf("err = %v, want a refusal at fixed.nx with MaxBytes = estimate - 1", err)
	}
	mustLoad(t, src, Limits{MaxBytes: b})
}

func TestParseBytes(t *testing.T) {
	for _, tc := range []struct {
		in   string
		want int64
	}{{"4096", 4096}, {"8GiB", 8 << 30}, {"512M", 512 << 20}, {"1.5k", 1536}, {"2 TB", 2 << 40}, {"100B", 100}} {
		if got, err := ParseBytes(tc.in); err != nil || got != tc.want {
			t.Errorf("ParseBytes(%q) = %d, %v; want %d", tc.in, got, err, tc.want)
		}
	}
	for _, bad := range []string{"", "x", "-1G", "0", "NaN", "1e300T"} {
		if _, err := ParseBytes(bad); err == nil {
			t.Errorf("ParseBytes(%q) accepted", bad)
		}
	}
}

func TestLoadSpec(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "s.toml")
	if err := os.WriteFile(path, []byte(goodSpec), 0o644); err != nil {
		t.Fatal(err)
	}
	s, err := Load(path, Limits{})
	if err != nil || s.File != path || s.Name != "good-one" {
		t.Fatalf("Load = %+v, %v", s, err)
	}
	if _, err := Load(filepath.Join(dir, "none.toml"), Limits{}); err == nil || !strings.Contains(err.Error(), "none.toml") {
		t.Errorf("missing file: err = %v", err)
	}
	big := filepath.Join(dir, "big.toml")
	if err := os.WriteFile(big, []byte(strings.Repeat("#\n", MaxSpecBytes)), 0o644); err != nil {
		t.Fatal(err)
	}
	if _, err := Load(big, Limits{}); err == nil || !strings.Contains(err.Error(), "larger than") {
		t.Errorf("oversized file: err = %v", err)
	}
}

// TestConfigs parses every example spec in configs/ against the real cases:
// an invalid config, or one naming a case that is not registered, fails here.
func TestConfigs(t *testing.T) {
	files, err := filepath.Glob("../../configs/*.toml")
	if err != nil || len(files) == 0 {
		t.Fatalf("no configs found: %v", err)
	}
	// A config may name the example solvers (their programs need not be
	// built to check a spec).
	progs := exampleManifests(t)
	for _, f := range files {
		s, err := Load(f, DefaultLimits(), progs...)
		if err != nil {
			t.Errorf("%v", err)
			continue
		}
		jobs, err := s.Expand()
		if err != nil || len(jobs) == 0 {
			t.Errorf("%s: Expand = %d jobs, %v", f, len(jobs), err)
		}
		for _, j := range jobs {
			if math.IsNaN(j.Cost) || j.Cost <= 0 {
				t.Errorf("%s: job %s has cost %v", f, j.ID, j.Cost)
			}
		}
	}
}

// TestReadmeExample parses the example spec of the manual's "Sweep specs"
// page (docs/spec.md), so that the documentation stays true.
func TestReadmeExample(t *testing.T) {
	readme, err := os.ReadFile("../../docs/spec.md")
	if err != nil {
		t.Fatal(err)
	}
	_, section, ok := strings.Cut(string(readme), "# Sweep specs")
	_, block, ok2 := strings.Cut(section, "```toml\n")
	block, _, ok3 := strings.Cut(block, "```")
	if !ok || !ok2 || !ok3 {
		t.Fatal("docs/spec.md has no toml example under \"# Sweep specs\"")
	}
	s, err := LoadSource("docs/spec.md", []byte(block), DefaultLimits())
	if err != nil {
		t.Fatal(err)
	}
	if n := s.Count(); n != 3*2*2*3 {
		t.Errorf("docs/spec.md example expands to %d runs, want 36", n)
	}
}

// TestFirstErrorInOrder checks that Check reports the first bad run in
// expansion order.
func TestFirstErrorInOrder(t *testing.T) {
	vals := make([]string, 300)
	for i := range vals {
		vals[i] = fmt.Sprint(i)
	}
	k0 := "k0 = [" + strings.Join(vals, ", ") + "]"
	_, err := LoadSource("o.toml", []byte(study("case = \"spec-test-case\"\nfixed = { test = 3 }\naxes = { amp = [0.1, 0.9], "+k0+" }\n")), DefaultLimits())
	if err == nil || !strings.HasSuffix(err.Error(), "(at amp=0.9 k0=0)") {
		t.Fatalf("err = %v, want the run amp=0.9 k0=0", err)
	}
	_, err = LoadSource("o.toml", []byte(study("case = \"spec-test-case\"\naxes = { "+k0+" }\nrefine = { nx = [64, 70000, 80000] }\n")), DefaultLimits())
	if err == nil || !strings.Contains(err.Error(), "grid 70000x70000 (at k0=0 nx=70000 ny=70000)") {
		t.Fatalf("err = %v, want the run k0=0 nx=70000", err)
	}
}

// The uncertainty key chooses the tables' estimate of a functional's
// error; auto (or no key) leaves it to the number of grids.
func TestParseUncertainty(t *testing.T) {
	for _, tc := range []struct{ line, want string }{
		{"", ""}, {"uncertainty = \"auto\"\n", ""},
		{"uncertainty = \"celik\"\n", job.UncertaintyCelik}, {"uncertainty = \"lsq\"\n", job.UncertaintyLSQ},
	} {
		s, err := Parse("test.toml", []byte("name = \"u\"\n[[study]]\ncase = \"spec-test-case\"\n"+tc.line))
		if err != nil {
			t.Fatalf("%q: %v", tc.line, err)
		}
		if got := s.Settings()[0].Uncertainty; s.Studies[0].Uncertainty != tc.want || got != tc.want {
			t.Errorf("%q: study %q, settings %q, want %q", tc.line, s.Studies[0].Uncertainty, got, tc.want)
		}
	}
}
