package report

import (
	"bytes"
	"encoding/xml"
	"io"
	"math"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"testing"
	"time"

	"fvsweep/sweep/job"
	"fvsweep/sweep/spec"
	"fvsweep/sweep/table"
	"fvsweep/sweep/verify"
)

const testSpec = `name = "rep"
[[study]]
label = "order"
case = "vortex"
fixed = { t_end = 0.5 }
axes = { limiter = ["minmod", "mc"] }
refine = { nx = [16, 32, 64] }
design_order = 2
order_tol = 0.2

[[study]]
case = "vortex"
fixed = { t_end = 0.5, scheme = "godunov" }
refine = { nx = [16, 32] }
`

// fakeOutcomes gives every job of the spec an outcome whose L1(rho) error
// follows e = C h^p exactly (p = 2 for mc, 1.5 for minmod, 1 for godunov),
// except one failed job and one left pending.
func fakeOutcomes(t *testing.T) (*spec.Spec, []job.Job, map[string]job.Outcome) {
	t.Helper()
	sp, err := spec.LoadSource("rep.toml", []byte(testSpec), spec.Limits{})
	var jobs []job.Job
	if err == nil {
		jobs, err = sp.Expand()
	}
	if err != nil {
		t.Fatal(err)
	}
	outs := map[string]job.Outcome{}
	for _, j := range jobs {
		h := 10 / float64(nxOf(j))
		p := map[string]float64{"minmod": 1.5, "mc": 2}[j.Params["limiter"]]
		if j.Params["scheme"] == "godunov" {
			p = 1
		}
		o := job.Outcome{JobID: j.ID, Sweep: "rep", Status: job.StatusDone, Attempts: 1, Worker: "w1",
			WallS:  0.001 * math.Pow(10/h, 3),
			Errors: map[string]job.Norms{"rho": {L1: 0.01 * math.Pow(h, p), L2: 0.02 * math.Pow(h, p), Linf: 0.1 * math.Pow(h, p)}}}
		switch {
		case j.Study == 2 && j.Params["nx"] == "32":
			o = job.Outcome{JobID: j.ID, Sweep: "rep", Status: job.StatusFailed, Attempts: 3, Worker: "w2",
				Error: `diverged at t=0.1 (step 7): negative pressure <p>&"x"`}
		case j.Study == 1 && j.Params["limiter"] == "minmod" && j.Params["nx"] == "64":
			continue // pending
		}
		outs[j.ID] = o
	}
	return sp.Spec, jobs, outs
}

func TestBuildTables(t *testing.T) {
	sp, jobs, outs := fakeOutcomes(t)
	studies, fails, err := table.Build(sp.Settings(), jobs, outs, table.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if len(studies) != 2 || len(fails) != 1 {
		t.Fatalf("%d studies, %d failures", len(studies), len(fails))
	}
	s1 := studies[0]
	if s1.Label != "order" || s1.Var != "rho" || s1.Norm != "l1" || s1.Design != 2 || s1.Tol != 0.2 {
		t.Errorf("study 1 settings %+v", s1)
	}
	if s1.Done != 5 || s1.Pending != 1 || s1.Failed != 0 || len(s1.Groups) != 2 {
		t.Fatalf("study 1: done %d pending %d failed %d groups %d", s1.Done, s1.Pending, s1.Failed, len(s1.Groups))
	}
	for _, g := range s1.Groups {
		if !strings.HasPrefix(g.Label, "limiter=") {
			t.Errorf("group label %q: want only the varying parameter", g.Label)
		}
		// h = 10/nx on the vortex domain [0,10], coarse first.
		for i, nx := range []int{16, 32, 64} {
			if r := g.Rows[i]; r.NX != nx || math.Abs(r.H-10/float64(nx)) > 1e-15 {
				t.Errorf("%s row %d: nx %d h %g", g.Label, i, r.NX, r.H)
			}
		}
	}
	// mc: exact second order, every observed order 2 (law: ln(C h1^2 / C h2^2) / ln(h1/h2) = 2).
	mc := s1.Groups[0]
	if mc.Label != "limiter=mc" {
		mc = s1.Groups[1]
	}
	for i, r := range mc.Rows[1:] {
		if math.Abs(r.Order-2) > 1e-12 {
			t.Errorf("mc row %d: observed order %.15g, want 2", i+1, r.Order)
		}
	}
	if !math.IsNaN(mc.Rows[0].Order) || !mc.Fitted || math.Abs(mc.Fit.Order-2) > 1e-12 || mc.Verdict.Status != verify.StatusPass {
		t.Errorf("mc: first order %v fit %+v verdict %+v", mc.Rows[0].Order, mc.Fit, mc.Verdict)
	}
	// minmod: order 1.5 on two finished grids, design 2 ± 0.2: low.
	mm := s1.Groups[1]
	if mm.Label != "limiter=minmod" {
		mm = s1.Groups[0]
	}
	if mm.Rows[2].Status != "pending" || !math.IsNaN(mm.Rows[2].Err) || mm.Fit.N != 2 || mm.Verdict.Status != verify.StatusLow {
		t.Errorf("minmod: last row %+v, fit %+v, verdict %+v", mm.Rows[2], mm.Fit, mm.Verdict)
	}
	// Study 2: godunov with its failed fine grid: one usable grid, no fit.
	s2 := studies[1]
	if s2.Groups[0].Label != "vortex" || s2.Failed != 1 || s2.Groups[0].Fitted || s2.Groups[0].Verdict.Status != verify.StatusInsufficient {
		t.Errorf("study 2: %+v", s2.Groups[0])
	}
	if f := fails[0]; f.Study != 2 || f.Attempts != 3 || !strings.Contains(f.Reason, "negative pressure") || !strings.Contains(f.Params, "nx=32") {
		t.Errorf("failure %+v", f)
	}
}

func TestBuildOptions(t *testing.T) {
	sp, jobs, outs := fakeOutcomes(t)
	studies, _, err := table.Build(sp.Settings(), jobs, outs, table.Options{Norm: "linf"})
	if err != nil {
		t.Fatal(err)
	}
	if r := studies[0].Groups[0].Rows[0]; r.Err != outs[r.JobID].Errors["rho"].Linf {
		t.Errorf("linf: err %g", r.Err)
	}
	if _, _, err := table.Build(sp.Settings(), jobs, outs, table.Options{Norm: "l3"}); err == nil || !strings.Contains(err.Error(), `norm "l3"`) {
		t.Errorf("norm l3: %v", err)
	}
	if _, _, err := table.Build(sp.Settings(), jobs, outs, table.Options{Var: "E2"}); err == nil || !strings.Contains(err.Error(), `"E2"`) {
		t.Errorf("var E2: %v", err)
	}
	// Without a spec: design order from the scheme, default tolerance.
	studies, _, err = table.Build(nil, jobs, outs, table.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if s := studies[0]; s.Tol != spec.DefaultOrderTol || s.Label != "" || s.Groups[0].Verdict.Design != 2 {
		t.Errorf("no spec: %+v", s)
	}
}

func TestSeries(t *testing.T) {
	sp, jobs, outs := fakeOutcomes(t)
	studies, _, _ := table.Build(sp.Settings(), jobs, outs, table.Options{})
	conv := ConvergenceSeries(studies[0])
	cost := CostSeries(studies[0], CostCPU)
	if len(conv) != 2 || len(cost) != 2 {
		t.Fatalf("%d and %d series", len(conv), len(cost))
	}
	for i, s := range conv {
		g := studies[0].Groups[i]
		if s.Label != g.Label || !s.Fitted || s.Order != g.Fit.Order {
			t.Errorf("series %d: %+v", i, s)
		}
		if len(s.X) != g.Fit.N {
			t.Errorf("series %d: %d points, fit over %d", i, len(s.X), g.Fit.N)
		}
	}
	if x := cost[0].X[0]; x != outs[studies[0].Groups[0].Rows[0].JobID].WallS {
		t.Errorf("cost x %g", x)
	}
	f, err := CostFigure(studies[0], CostCPU)
	if err != nil || len(f.Notes) == 0 || !strings.Contains(f.Notes[0], "no measured CPU time") {
		t.Errorf("cost figure of outcomes without cpu_s: notes %v, %v", f.Notes, err)
	}

	// With cpu_s stored, the CPU axis is that (not wall x threads); the
	// work axis is nx x ny x steps whatever the times.
	for id, o := range outs {
		o.CPUS, o.Steps = o.WallS/4, 10
		outs[id] = o
	}
	studies, _, _ = table.Build(sp.Settings(), jobs, outs, table.Options{})
	r0 := studies[0].Groups[0].Rows[0]
	cost = CostSeries(studies[0], CostCPU)
	work := CostSeries(studies[0], CostWork)
	if x := cost[0].X[0]; x != outs[r0.JobID].WallS/4 {
		t.Errorf("cost x %g with cpu_s %g", x, outs[r0.JobID].CPUS)
	}
	if x, want := work[0].X[0], float64(r0.NX*max(1, r0.NY)*10); x != want {
		t.Errorf("work x %g, want nx*ny*steps = %g", x, want)
	}
	if f, err := CostFigure(studies[0], CostWork); err != nil || len(f.Notes) != 0 || !strings.Contains(f.XLabel, "cell updates") {
		t.Errorf("work figure: %+v, %v", f, err)
	}
}

func sampleReport(t *testing.T) *Report {
	sp, jobs, outs := fakeOutcomes(t)
	studies, fails, err := table.Build(sp.Settings(), jobs, outs, table.Options{})
	if err != nil {
		t.Fatal(err)
	}
	r := &Report{Sweep: "rep", SpecFile: "rep.toml", Spec: testSpec, Failures: fails,
		Machine: ThisMachine("test"), Generated: time.Date(2025, 3, 1, 12, 0, 0, 0, time.UTC)}
	for _, s := range studies {
		r.Studies = append(r.Studies, StudyReport{Study: s})
	}
	r.AddFigures()
	return r
}

var svgRE = regexp.MustCompile(`(?s)<svg.*?</svg>`)

// The report is one HTML document with the tables, an inline SVG per plot
// (each well-formed XML), the spec, the failures escaped, the machine, and
// no reference to anything outside the file.
func TestWriteReport(t *testing.T) {
	r := sampleReport(t)
	var buf bytes.Buffer
	if err := Write(&buf, r); err != nil {
		t.Fatal(err)
	}
	html := buf.String()
	svgs := svgRE.FindAllString(html, -1)
	// Study 1: convergence and cost; study 2: one finished grid still plots.
	if len(svgs) != 4 {
		t.Errorf("%d inline SVGs, want 4", len(svgs))
	}
	for i, s := range svgs {
		if err := checkXML(s); err != nil {
			t.Errorf("svg %d: %v", i, err)
		}
	}
	for _, want := range []string{
		"<!DOCTYPE html>", "<title>fvsweep report: rep</title>",
		"Study 1: vortex (order)", "<h3>limiter=mc</h3>", "L1(rho)", "observed order",
		`<span class="pass">pass</span>`, `<span class="fail">order-low</span>`, "insufficient-data",
		"2.00", // observed orders of mc
		"negative pressure &lt;p&gt;&amp;&#34;x&#34;", // the failure reason, escaped
		"refine = { nx = [16, 32, 64] }",              // the spec
		ThisMachine("").GOOS, "test", "2025-03-01 12:00:00 UTC",
		"1 done, 1 failed, 0 pending",
		// Study 2 has one usable grid: its verdict warns, styled.
		".warnings {", `<ul class="warnings">`, "<li>warning: order verdict: fewer than the two usable grids an order needs</li>",
	} {
		if !strings.Contains(html, want) {
			t.Errorf("report lacks %q", want)
		}
	}
	// Self-contained: outside the SVG namespace declarations no URL, no
	// external stylesheet, script or image.
	clean := regexp.MustCompile(`xmlns(:\w+)?="http://www\.w3\.org/[^"]*"`).ReplaceAllString(html, "")
	for _, bad := range []string{"http://", "https://", "<script", "<link", "src=\"", "url(http"} {
		if strings.Contains(clean, bad) {
			t.Errorf("report contains %q", bad)
		}
	}
	// Outside the SVGs the HTML is well-formed XML too (html/template
	// output of this template is; a cheap check of the structure).
	outside := svgRE.ReplaceAllString(html, "<svg/>")
	outside = strings.Replace(outside, "<!DOCTYPE html>", "", 1)
	outside = strings.ReplaceAll(outside, "<meta charset=\"utf-8\">", "")
	d := xml.NewDecoder(strings.NewReader(outside))
	d.Strict = true
	d.Entity = xml.HTMLEntity
	for {
		if _, err := d.Token(); err == io.EOF {
			break
		} else if err != nil {
			t.Fatalf("report structure: %v", err)
		}
	}
}

// A report whose tables carry no warning has neither the warning lists
// nor their style: it is what it was before tables warned.
func TestWriteReportWithoutWarnings(t *testing.T) {
	r := sampleReport(t)
	st := r.Studies[0]
	st.Groups = slices.DeleteFunc(st.Groups, func(g table.Group) bool { return g.Params["limiter"] != "mc" })
	r.Studies, r.Failures = []StudyReport{st}, nil
	if len(st.Groups) != 1 || st.HasWarnings() {
		t.Fatalf("the mc group (three grids, ratio 2, order 2 exactly) should have no warning: %+v", st.Groups)
	}
	var buf bytes.Buffer
	if err := Write(&buf, r); err != nil {
		t.Fatal(err)
	}
	if strings.Contains(buf.String(), "warning") {
		t.Errorf("report without warnings mentions them:\n%s", buf.String())
	}
}

func TestWriteTablesFragment(t *testing.T) {
	r := sampleReport(t)
	var buf bytes.Buffer
	studies := []table.Study{r.Studies[0].Study}
	if err := table.WriteHTML(&buf, studies); err != nil {
		t.Fatal(err)
	}
	s := buf.String()
	if strings.Contains(s, "<html") || !strings.Contains(s, "<h3>limiter=minmod</h3>") || !strings.Contains(s, "pending") {
		t.Errorf("fragment:\n%s", s)
	}
}

func TestInlineSVGRejectsBroken(t *testing.T) {
	if err := checkXML("<svg><g></svg>"); err == nil {
		t.Error("mismatched tags accepted")
	}
	if err := checkXML("<svg/><svg/>"); err == nil {
		t.Error("two roots accepted")
	}
}

func nxOf(j job.Job) int { n, _ := strconv.Atoi(j.Params["nx"]); return n }
