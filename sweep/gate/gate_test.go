package gate

import (
	"bytes"
	"encoding/xml"
	"math"
	"strconv"
	"strings"
	"testing"

	"fvsweep/sweep/job"
	"fvsweep/sweep/spec"
	"fvsweep/sweep/table"
)

// The tables here are built from outcomes whose errors follow E = C h^p
// exactly, so that the observed order ln(E1/E2)/ln(h1/h2) is p (the
// definition of the observed order; law, docs/references.md §6).

// sweepOf parses src, expands it and gives each job a done outcome whose
// error of u is errOf(job, h) (NaN: a failed outcome, with a reason).
func sweepOf(t *testing.T, src string, errOf func(j job.Job, h float64) float64) table.Set {
	t.Helper()
	pl, err := spec.LoadSource("gate.toml", []byte(src), spec.DefaultLimits())
	if err != nil {
		t.Fatal(err)
	}
	jobs, err := pl.Expand()
	if err != nil {
		t.Fatal(err)
	}
	outs := map[string]job.Outcome{}
	for _, j := range jobs {
		nx, _ := strconv.Atoi(j.Params["nx"])
		e := errOf(j, 1/float64(nx)) // burgers-sine lives on the unit interval
		o := job.Outcome{JobID: j.ID, Sweep: pl.Name, Status: job.StatusDone, Attempts: 1, WallS: 0.5}
		if math.IsNaN(e) {
			o.Status, o.Error = job.StatusFailed, "step guard: 1000 steps reached"
		} else {
			o.Errors = map[string]job.Norms{"u": {L1: e, L2: e, Linf: e}}
		}
		outs[j.ID] = o
	}
	studies, fails, err := table.Build(pl.Settings(), jobs, outs, table.Options{})
	if err != nil {
		t.Fatal(err)
	}
	return table.Set{Sweep: pl.Name, Studies: studies, Failures: fails}
}

const twoSchemes = `name = "g"
[[study]]
label = "sine"
case = "burgers-sine"
axes = { scheme = ["godunov", "muscl"] }
refine = { nx = [32, 64, 128] }
`

// designErr is the error of a scheme at its design order (1 or 2).
func designErr(j job.Job, h float64) float64 {
	if j.Params["scheme"] == "godunov" {
		return 0.3 * h
	}
	return 2 * h * h
}

func TestJudgePass(t *testing.T) {
	r := Judge(sweepOf(t, twoSchemes, designErr), nil)
	if r.Code() != ExitPass || len(r.Cases) != 2 {
		t.Fatalf("code %d, %d cases:\n%s", r.Code(), len(r.Cases), text(r))
	}
	if p, f, s := r.Counts(); p != 2 || f != 0 || s != 0 {
		t.Errorf("counts %d %d %d", p, f, s)
	}
	if !strings.HasSuffix(r.Summary(), ": PASS") {
		t.Errorf("summary %q", r.Summary())
	}
}

// A study that claims design order 2 for the first-order scheme fails with
// the order-low code and names the group.
func TestJudgeOrderLow(t *testing.T) {
	src := strings.Replace(twoSchemes, `label = "sine"`, "label = \"sine\"\ndesign_order = 2", 1)
	r := Judge(sweepOf(t, src, designErr), nil)
	if r.Code() != ExitOrderLow {
		t.Fatalf("code %d, want %d:\n%s", r.Code(), ExitOrderLow, text(r))
	}
	c := r.Cases[0]
	if c.Group != "scheme=godunov" || c.Passed() || c.Failures[0].Kind != KindOrderLow || !r.Cases[1].Passed() {
		t.Errorf("cases:\n%s", text(r))
	}
	if !strings.Contains(text(r), "FAIL  sine / scheme=godunov  order-low") {
		t.Errorf("text does not name the group:\n%s", text(r))
	}
}

func TestJudgeFailedJobs(t *testing.T) {
	r := Judge(sweepOf(t, twoSchemes, func(j job.Job, h float64) float64 {
		if j.Params["scheme"] == "muscl" && h < 1.0/100 {
			return math.NaN()
		}
		return designErr(j, h)
	}), nil)
	if r.Code() != ExitFailedJobs {
		t.Fatalf("code %d, want %d:\n%s", r.Code(), ExitFailedJobs, text(r))
	}
	f := r.Cases[1].Failures[0]
	if f.Kind != KindFailedJobs || !strings.Contains(f.Msg, "1 of 3 grids failed: 128x128: step guard") {
		t.Errorf("finding %+v", f)
	}
}

// Orders 3 then 1 on the finest pair: the fit (about 2) disagrees with the
// finest pair, so the verdict is pre-asymptotic; it fails unless the study
// is informational.
func TestJudgeInformational(t *testing.T) {
	errs := map[int]float64{32: 8e-3, 64: 1e-3, 128: 5e-4} // orders 3, 1
	errOf := func(j job.Job, h float64) float64 { return errs[int(math.Round(1/h))] }
	src := strings.Replace(twoSchemes, `axes = { scheme = ["godunov", "muscl"] }`, "", 1)
	r := Judge(sweepOf(t, src, errOf), nil)
	if r.Code() != ExitNotJudged || r.Cases[0].Verdict.Status != "pre-asymptotic" {
		t.Fatalf("code %d, want %d:\n%s", r.Code(), ExitNotJudged, text(r))
	}
	r = Judge(sweepOf(t, src+"informational = true\n", errOf), nil)
	if r.Code() != ExitPass || !r.Cases[0].Skipped {
		t.Fatalf("informational: code %d:\n%s", r.Code(), text(r))
	}
	if _, _, s := r.Counts(); s != 1 {
		t.Errorf("skipped %d, want 1", s)
	}
	// A wrong order still fails an informational study.
	lowSrc := strings.Replace(src, `label = "sine"`, "label = \"sine\"\ndesign_order = 3\ninformational = true", 1)
	if r := Judge(sweepOf(t, lowSrc, designErr), nil); r.Code() != ExitOrderLow {
		t.Errorf("informational order-low: code %d:\n%s", r.Code(), text(r))
	}
}

func TestCodePrecedence(t *testing.T) {
	for _, tc := range []struct {
		kinds []string
		want  int
	}{
		{nil, ExitPass},
		{[]string{KindIncomplete}, ExitIncomplete},
		{[]string{KindIncomplete, KindBaseline}, ExitBaseline},
		{[]string{KindBaseline, KindOrderHigh, KindIncomplete}, ExitOrderHigh},
		{[]string{KindOrderHigh, KindOrderLow}, ExitOrderLow},
		{[]string{KindNotJudged, KindFailedJobs}, ExitFailedJobs},
	} {
		var fs []Finding
		for _, k := range tc.kinds {
			fs = append(fs, Finding{Kind: k})
		}
		if got := worst(fs); got != tc.want {
			t.Errorf("%v: code %d, want %d", tc.kinds, got, tc.want)
		}
	}
}

func TestBaseline(t *testing.T) {
	set := sweepOf(t, twoSchemes, designErr)
	base, err := NewBaseline(set)
	if err != nil {
		t.Fatal(err)
	}
	var buf bytes.Buffer
	if err := base.Write(&buf); err != nil {
		t.Fatal(err)
	}
	read, err := ReadBaseline(bytes.NewReader(buf.Bytes()), "base.json")
	if err != nil {
		t.Fatal(err)
	}
	// The numbers come back bit for bit, so tolerance 0 passes the same run.
	for i, g := range read.Groups {
		for k, gr := range g.Grids {
			if gr.Error != base.Groups[i].Grids[k].Error {
				t.Errorf("error %v read back as %v", base.Groups[i].Grids[k].Error, gr.Error)
			}
		}
	}
	zero := strings.Replace(twoSchemes, `label = "sine"`, "label = \"sine\"\nerror_growth_tol = 0\norder_drop_tol = 0", 1)
	if r := Judge(sweepOf(t, zero, designErr), read); r.Code() != ExitPass {
		t.Fatalf("same run against its baseline: code %d:\n%s", r.Code(), text(r))
	}

	// A baseline with a smaller error than the run fails with both numbers.
	smaller := *read
	smaller.Groups = append([]BaselineGroup(nil), read.Groups...)
	smaller.Groups[1].Grids = append([]BaselineGrid(nil), read.Groups[1].Grids...)
	runErr := smaller.Groups[1].Grids[2].Error
	smaller.Groups[1].Grids[2].Error = runErr * 0.9
	r := Judge(set, &smaller)
	if r.Code() != ExitBaseline {
		t.Fatalf("smaller baseline error: code %d:\n%s", r.Code(), text(r))
	}
	msg := r.Cases[1].Failures[0].Msg
	if !strings.Contains(msg, "grid 128x128: l1 error "+num(runErr)+" > baseline "+num(runErr*0.9)) {
		t.Errorf("message lacks both numbers: %s", msg)
	}
	// The other way round it is an improvement, and passes.
	smaller.Groups[1].Grids[2].Error = runErr * 1.25
	r = Judge(set, &smaller)
	if r.Code() != ExitPass || !strings.Contains(strings.Join(r.Cases[1].Notes, "\n"), "improved over the baseline: grid 128x128") {
		t.Errorf("larger baseline error: code %d:\n%s", r.Code(), text(r))
	}

	// An order that drops beyond the tolerance fails; a group of the
	// baseline missing from the run fails.
	drop := sweepOf(t, twoSchemes, func(j job.Job, h float64) float64 {
		if j.Params["scheme"] == "muscl" && h < 1.0/100 {
			return 2 * h * h * 1.2 // order 2 - log2(1.2) = 1.74 on the finest pair
		}
		return designErr(j, h)
	})
	drop.Studies[0].Groups = drop.Studies[0].Groups[1:]
	r = Judge(drop, read)
	if len(r.Cases) != 2 || r.Code() != ExitOrderLow {
		t.Fatalf("drop: code %d:\n%s", r.Code(), text(r))
	}
	all := text(r)
	for _, want := range []string{"grid 128x128: observed order 1.7369655941662063 < baseline 2", "in the baseline but not in this run"} {
		if !strings.Contains(all, want) {
			t.Errorf("report lacks %q:\n%s", want, all)
		}
	}
}

func TestReadBaselineRefuses(t *testing.T) {
	for name, src := range map[string]string{
		"unknown key": `{"format": "` + BaselineFormat + `", "sweep": "g", "groups": [], "extra": 1}`,
		"format":      `{"format": "other/1", "sweep": "g", "groups": []}`,
		"error":       `{"format": "` + BaselineFormat + `", "sweep": "g", "groups": [{"study": "s", "group": "a", "grids": [{"nx": 8, "ny": 8, "error": -1}]}]}`,
		"twice":       `{"format": "` + BaselineFormat + `", "sweep": "g", "groups": [{"study": "s", "group": "a"}, {"study": "s", "group": "a"}]}`,
		"trailing":    `{"format": "` + BaselineFormat + `", "sweep": "g", "groups": []} {}`,
	} {
		if _, err := ReadBaseline(strings.NewReader(src), "b.json"); err == nil {
			t.Errorf("%s: read without error", name)
		}
	}
}

// The JUnit XML, parsed back with types of the test's own that follow the
// element and attribute names of the JUnit XML format (common practice):
// testsuites > testsuite > testcase > failure | skipped.
type xSuites struct {
	XMLName  xml.Name `xml:"testsuites"`
	Tests    int      `xml:"tests,attr"`
	Failures int      `xml:"failures,attr"`
	Skipped  int      `xml:"skipped,attr"`
	Suites   []struct {
		Name     string `xml:"name,attr"`
		Tests    string `xml:"tests,attr"`
		Failures string `xml:"failures,attr"`
		Errors   string `xml:"errors,attr"`
		Time     string `xml:"time,attr"`
		Cases    []struct {
			Name      string `xml:"name,attr"`
			Classname string `xml:"classname,attr"`
			Time      string `xml:"time,attr"`
			Failure   []struct {
				Message string `xml:"message,attr"`
				Type    string `xml:"type,attr"`
				Text    string `xml:",chardata"`
			} `xml:"failure"`
			Skipped []struct{} `xml:"skipped"`
		} `xml:"testcase"`
	} `xml:"testsuite"`
}

func TestJUnitParsesBack(t *testing.T) {
	src := twoSchemes + `
[[study]]
label = "claims two"
case = "burgers-sine"
fixed = { scheme = "godunov", t_end = 0.2 }
design_order = 2
refine = { nx = [32, 64, 128] }
`
	r := Judge(sweepOf(t, src, designErr), nil)
	var buf bytes.Buffer
	if err := r.WriteJUnit(&buf); err != nil {
		t.Fatal(err)
	}
	if !strings.HasPrefix(buf.String(), `<?xml version="1.0" encoding="UTF-8"?>`) {
		t.Errorf("no XML declaration:\n%s", buf.String())
	}
	var doc xSuites
	if err := xml.Unmarshal(buf.Bytes(), &doc); err != nil {
		t.Fatalf("%v\n%s", err, buf.String())
	}
	if doc.Tests != 3 || doc.Failures != 1 || len(doc.Suites) != 2 {
		t.Fatalf("tests %d failures %d suites %d:\n%s", doc.Tests, doc.Failures, len(doc.Suites), buf.String())
	}
	for _, s := range doc.Suites {
		failures := 0
		for _, c := range s.Cases {
			failures += len(c.Failure)
			if c.Name == "" || c.Classname == "" || c.Time == "" {
				t.Errorf("suite %s: case without name, classname or time: %+v", s.Name, c)
			}
		}
		if s.Tests != strconv.Itoa(len(s.Cases)) || s.Failures != strconv.Itoa(failures) || s.Errors != "0" || s.Time == "" {
			t.Errorf("suite %s: tests=%s failures=%s errors=%s, has %d cases and %d failures", s.Name, s.Tests, s.Failures, s.Errors, len(s.Cases), failures)
		}
	}
	c := doc.Suites[1].Cases[0]
	if doc.Suites[1].Name != "g/claims two" || c.Classname != "g.claims_two" || len(c.Failure) != 1 ||
		c.Failure[0].Type != "order-low" || !strings.Contains(c.Failure[0].Message, "order-low: finest-pair order 1, fitted 1") ||
		!strings.Contains(c.Failure[0].Message, "design 2") {
		t.Errorf("failing case %+v", c)
	}
}

func TestMarkdown(t *testing.T) {
	src := strings.Replace(twoSchemes, `label = "sine"`, "label = \"sine\"\ndesign_order = 2", 1)
	r := Judge(sweepOf(t, src, designErr), nil)
	var buf bytes.Buffer
	if err := r.WriteMarkdown(&buf); err != nil {
		t.Fatal(err)
	}
	md := buf.String()
	for _, want := range []string{"### gate g: 2 groups, 1 passed, 1 failed: FAIL (exit 11, order-low)",
		"| study | group | result | why |", "| sine | scheme=godunov | **FAIL** order-low | order-low: finest-pair order 1"} {
		if !strings.Contains(md, want) {
			t.Errorf("markdown lacks %q:\n%s", want, md)
		}
	}
	if strings.Contains(md, "scheme=muscl") {
		t.Errorf("markdown lists a passing group:\n%s", md)
	}
}

// A group with two findings shows them on two lines of its cell (<br>,
// which GitHub's Markdown renders as a break inside a table cell), each
// finding's own text escaped: a pipe would end the cell, "<" start a tag.
func TestMarkdownFindingsOnLines(t *testing.T) {
	r := &Report{Cases: []Case{{Study: "s", Group: "g", Failures: []Finding{
		{KindFailedJobs, "1 of 3 grids failed: a|b"}, {KindBaseline, "L1 grew: 2 > 1"}}}}}
	var buf bytes.Buffer
	if err := r.WriteMarkdown(&buf); err != nil {
		t.Fatal(err)
	}
	want := `failed-jobs: 1 of 3 grids failed: a\|b<br>baseline: L1 grew: 2 &gt; 1 |`
	if md := buf.String(); !strings.Contains(md, want) {
		t.Errorf("markdown lacks %q:\n%s", want, md)
	}
}

func text(r *Report) string {
	var b strings.Builder
	r.WriteText(&b)
	return b.String()
}
