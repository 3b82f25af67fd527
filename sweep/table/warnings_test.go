package table

import (
	"encoding/csv"
	"encoding/json"
	"math"
	"slices"
	"strings"
	"testing"

	"fvsweep/sweep/job"
	"fvsweep/sweep/verify"
)

// closeGridsSpec refines by 1 % per grid: far below the ratio of 1.3 that
// Celik et al. 2008 recommend (recalled from memory, docs/references.md §5).
// Study 1 is the quadrants example of the issue that asked for warnings,
// study 2 a vortex whose errors follow a second-order law.
const closeGridsSpec = `name = "close-grids"
[[study]]
case = "quadrants"
fixed = { config = 3 }
refine = { nx = [100, 101, 102] }
functional = "entropy"

[[study]]
case = "vortex"
fixed = { t_end = 0.5 }
design_order = 2
refine = { nx = [40, 41, 42] }
`

// closeGridsEntropy are the entropy integrals fv2d reported for study 1
// (fvsweep run with this build's defaults: muscl, vanleer, hllc); on grids
// this close their differences are noise, and the GCI of the triple shows
// an apparent order of 35.22.
var closeGridsEntropy = map[string]float64{"100": -0.18955643415276324, "101": -0.189866499400291, "102": -0.18942870992531552}

func closeGrids(t *testing.T) Set {
	t.Helper()
	sp, jobs, outs := functionalSweep(t, closeGridsSpec, func(j job.Job) map[string]float64 {
		if j.Case == "vortex" {
			return nil
		}
		return map[string]float64{"entropy": closeGridsEntropy[j.Params["nx"]]}
	})
	for id, o := range outs {
		if j := jobOf(jobs, id); j.Case == "vortex" {
			h := 10 / float64(atoi(j.Params["nx"])) // the vortex box is 10 wide
			e := 0.3 * h * h                        // second-order error law
			o.Errors = map[string]job.Norms{"rho": {L1: e, L2: e, Linf: e}}
			outs[id] = o
		}
	}
	studies, fails, err := Build(sp.Settings(), jobs, outs, Options{})
	if err != nil {
		t.Fatal(err)
	}
	return Set{Sweep: "close-grids", Studies: studies, Failures: fails}
}

// Every writer says out loud what the tables used to print silently: the
// close grids, and the apparent order of 35 that no scheme delivers.
func TestWritersShowWarnings(t *testing.T) {
	s := closeGrids(t)
	f := s.Studies[0].Groups[0].GCI[0]
	if len(f.Records) != 1 || f.Records[0].Order == nil || math.Abs(*f.Records[0].Order-35.22) > 0.005 {
		t.Fatalf("GCI of the close grids: %+v", f.Records)
	}
	gciRatio := "entropy, grids 102/101/100: refinement ratio h2/h1 = 1.01 is below 1.3"
	gciOrder := "entropy, grids 102/101/100: observed order 35.22 is above 6"
	verdictRatio := "order verdict: refinement ratio h2/h1 = 1.024 is below 1.3"
	for _, tc := range []struct {
		format string
		want   []string
	}{
		{"text", []string{"      warning: " + gciRatio, "      warning: " + gciOrder, "      warning: " + verdictRatio}},
		{"markdown", []string{"- warning: " + gciRatio, "- warning: " + gciOrder, "- warning: " + verdictRatio}},
	} {
		var b strings.Builder
		if err := Write(&b, tc.format, s); err != nil {
			t.Fatal(err)
		}
		for _, w := range tc.want {
			if !strings.Contains(b.String(), w) {
				t.Errorf("%s lacks %q:\n%s", tc.format, w, b.String())
			}
		}
	}

	var b strings.Builder
	if err := WriteHTML(&b, s.Studies); err != nil {
		t.Fatal(err)
	}
	for _, w := range []string{`<ul class="warnings">`, "<li>warning: " + gciRatio, "<li>warning: " + verdictRatio} {
		if !strings.Contains(b.String(), w) {
			t.Errorf("HTML lacks %q:\n%s", w, b.String())
		}
	}
	if !s.Studies[0].HasWarnings() || !s.Studies[1].HasWarnings() {
		t.Error("HasWarnings is false for a study with warnings")
	}

	// CSV: a warnings column, the record's own warnings joined by "; ".
	b.Reset()
	if err := Write(&b, "csv", s); err != nil {
		t.Fatal(err)
	}
	recs, err := csv.NewReader(strings.NewReader(b.String())).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	col := slices.Index(recs[0], "warnings")
	if col < 0 {
		t.Fatalf("csv header lacks warnings: %v", recs[0])
	}
	var gciSeen, gridSeen bool
	for _, r := range recs[1:] {
		switch {
		case r[0] == "gci":
			gciSeen = true
			if r[col] != strings.Join(f.Records[0].Warnings, "; ") || !strings.Contains(r[col], "refinement ratio h2/h1 = 1.01") {
				t.Errorf("csv gci warnings %q", r[col])
			}
		case r[0] == "grid" && r[1] == "2":
			gridSeen = true
			if !strings.Contains(r[col], "refinement ratio h2/h1 = 1.024") {
				t.Errorf("csv grid warnings %q", r[col])
			}
		}
	}
	if !gciSeen || !gridSeen {
		t.Errorf("csv lacks a gci or grid record:\n%s", b.String())
	}

	// JSON: the records' and the verdict's warnings lists.
	b.Reset()
	if err := Write(&b, "json", s); err != nil {
		t.Fatal(err)
	}
	var doc struct {
		Studies []struct {
			Groups []struct {
				Verdict struct{ Warnings []string }
				GCI     []struct {
					Records []struct{ Warnings []string }
				}
			}
		}
	}
	if err := json.Unmarshal([]byte(b.String()), &doc); err != nil {
		t.Fatal(err)
	}
	if w := doc.Studies[0].Groups[0].GCI[0].Records[0].Warnings; len(w) < 3 {
		t.Errorf("json GCI warnings %q", w)
	}
	if w := doc.Studies[1].Groups[0].Verdict.Warnings; len(w) != 2 {
		t.Errorf("json verdict warnings %q, want the two close ratios", w)
	}
}

// A group still waiting for grids keeps its provisional verdict's
// warnings out of the writers (the JSON still has them).
func TestWaitingGroupHidesVerdictWarnings(t *testing.T) {
	sp, jobs, outs := functionalSweep(t, closeGridsSpec, func(job.Job) map[string]float64 { return nil })
	for id := range outs {
		if j := jobOf(jobs, id); j.Case == "vortex" && j.Params["nx"] != "40" {
			delete(outs, id)
		} else if j.Case == "vortex" {
			o := outs[id]
			o.Errors = map[string]job.Norms{"rho": {L1: 1, L2: 1, Linf: 1}}
			outs[id] = o
		}
	}
	studies, _, err := Build(sp.Settings(), jobs, outs, Options{})
	if err != nil {
		t.Fatal(err)
	}
	g := studies[1].Groups[0]
	if !g.Waiting() || len(g.Verdict.Warnings) == 0 || g.VerdictWarnings() != nil {
		t.Errorf("waiting %v, verdict warnings %q, shown %q", g.Waiting(), g.Verdict.Warnings, g.VerdictWarnings())
	}
}

// fourGridSpec is a functional study on four grids; uncertainty is set by
// the caller's line.
func fourGridSpec(line string) string {
	return `name = "four"
[[study]]
case = "quadrants"
refine = { nx = [40, 60, 90, 150] }
functional = "rho_max"
` + line
}

// scatter is a fixed relative noise per grid, so that the fits have a
// standard deviation.
var scatter = map[string]float64{"40": 0.02, "60": -0.03, "90": 0.01, "150": -0.01}

func fourGridPhi(nx string) float64 {
	h := 1 / float64(atoi(nx))
	return 1 + 0.3*math.Pow(h, 1.5)*(1+scatter[nx])
}

// With four grids the tables report the least-squares uncertainty of
// Eça & Hoekstra 2014, the same numbers as verify.LeastSquaresUncertainty
// on the same values and spacings; uncertainty = "celik" keeps it out, and
// uncertainty = "lsq" asks for it on three grids.
func TestBuildLSQFourGrids(t *testing.T) {
	sp, jobs, outs := functionalSweep(t, fourGridSpec(""), func(j job.Job) map[string]float64 {
		return map[string]float64{"rho_max": fourGridPhi(j.Params["nx"])}
	})
	studies, _, err := Build(sp.Settings(), jobs, outs, Options{})
	if err != nil {
		t.Fatal(err)
	}
	f := studies[0].Groups[0].GCI[0]
	if f.LSQ == nil {
		t.Fatalf("four grids: no least-squares uncertainty: %+v", f)
	}
	nx := []string{"150", "90", "60", "40"}
	phi, h := make([]float64, 4), make([]float64, 4)
	for i, n := range nx {
		phi[i], h[i] = fourGridPhi(n), 1/float64(atoi(n))
	}
	// muscl is the quadrants' default scheme: design order 2.
	ref, err := verify.LeastSquaresUncertainty(phi, h, verify.UncertaintyOptions{DesignOrder: 2})
	if err != nil {
		t.Fatal(err)
	}
	u := f.LSQ
	close := func(a, b float64) bool { return math.Abs(a-b) <= 1e-9*math.Max(math.Abs(b), 1e-300) }
	if u.Fit != ref.Fit || u.Weighted != ref.Weighted || !close(u.UncertaintyAbs, ref.UncertaintyAbs) ||
		!close(*u.Uncertainty, *ref.Uncertainty) || !close(*u.Extrapolated, *ref.Extrapolated) ||
		!close(*u.Order, *ref.Order) || !close(u.Sigma, ref.Sigma) || u.Sigma == 0 {
		t.Errorf("table: fit %s weighted %v U %g (%g) ext %g order %g sigma %g\nverify: fit %s weighted %v U %g (%g) ext %g order %g sigma %g",
			u.Fit, u.Weighted, u.UncertaintyAbs, *u.Uncertainty, *u.Extrapolated, *u.Order, u.Sigma,
			ref.Fit, ref.Weighted, ref.UncertaintyAbs, *ref.Uncertainty, *ref.Extrapolated, *ref.Order, ref.Sigma)
	}
	// The writers show it, and the finest value is reported with U.
	res := fmtG(phi[0], 7) + " ± " + fmtG(ref.UncertaintyAbs, 3) + " (least-squares U"
	set := Set{Sweep: "four", Studies: studies}
	for _, format := range []string{"text", "markdown"} {
		var b strings.Builder
		if err := Write(&b, format, set); err != nil {
			t.Fatal(err)
		}
		if !strings.Contains(b.String(), LSQCaption) || !strings.Contains(b.String(), res) {
			t.Errorf("%s lacks the least-squares table or %q:\n%s", format, res, b.String())
		}
	}
	var b strings.Builder
	if err := WriteHTML(&b, studies); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(b.String(), "<th>U/|phi_1|</th>") || !strings.Contains(b.String(), res) {
		t.Errorf("HTML lacks the least-squares table or %q:\n%s", res, b.String())
	}
	b.Reset()
	if err := Write(&b, "csv", set); err != nil {
		t.Fatal(err)
	}
	recs, err := csv.NewReader(strings.NewReader(b.String())).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	ucol, found := slices.Index(recs[0], "uncertainty_abs"), false
	for _, r := range recs[1:] {
		if r[0] == "gci-lsq" {
			found = ucol >= 0 && r[ucol] == Num(ref.UncertaintyAbs).csv()
		}
	}
	if !found {
		t.Errorf("csv lacks the gci-lsq record with U = %g:\n%s", ref.UncertaintyAbs, b.String())
	}
	b.Reset()
	if err := Write(&b, "json", set); err != nil {
		t.Fatal(err)
	}
	for _, key := range []string{`"lsq": {`, `"uncertainty_abs": `, `"sigma": `, `"fit": "` + ref.Fit + `"`} {
		if !strings.Contains(b.String(), key) {
			t.Errorf("json lacks %s", key)
		}
	}

	for _, tc := range []struct {
		line  string
		grids []string
		want  bool
	}{
		{`uncertainty = "celik"` + "\n", nil, false},
		{`uncertainty = "auto"` + "\n", []string{"40", "60", "90"}, false},
		{`uncertainty = "lsq"` + "\n", []string{"40", "60", "90"}, true},
	} {
		sp, jobs, outs := functionalSweep(t, fourGridSpec(tc.line), func(j job.Job) map[string]float64 {
			return map[string]float64{"rho_max": fourGridPhi(j.Params["nx"])}
		})
		if tc.grids != nil {
			for id := range outs {
				if j := jobOf(jobs, id); !slices.Contains(tc.grids, j.Params["nx"]) {
					delete(outs, id)
				}
			}
		}
		studies, _, err := Build(sp.Settings(), jobs, outs, Options{})
		if err != nil {
			t.Fatal(err)
		}
		if got := studies[0].Groups[0].GCI[0].LSQ != nil; got != tc.want {
			t.Errorf("%s on %v grids: least squares %v, want %v", strings.TrimSpace(tc.line), tc.grids, got, tc.want)
		}
	}
}
