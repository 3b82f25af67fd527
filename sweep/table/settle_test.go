package table

import (
	"bytes"
	"regexp"
	"strings"
	"testing"

	"fvsweep/sweep/job"
	"fvsweep/sweep/spec"
)

// A study that adds grids: the errors follow e = 1/n + 20/n^2, whose pair
// orders are 1.64, 1.47 and 1.31 on 8, 16, 32, 64 (computed by hand from
// the formula, docs/references.md §16). The coordinator added 64 because
// 1.47 after 1.64 differ by more than 0.15; with 1.31 after 1.47 still
// apart and 128 beyond extend_to, it is not settled by 64.
const settleSpec = `name = "settle"
[[study]]
case = "vortex"
fixed = { scheme = "godunov" }
refine = { nx = [8, 16, 32], extend_to = 64 }
`

func settleSet(t *testing.T, settings []job.StudySettings, jobs []job.Job, outs map[string]job.Outcome, format string) string {
	t.Helper()
	studies, fails, err := Build(settings, jobs, outs, Options{})
	if err != nil {
		t.Fatal(err)
	}
	var b bytes.Buffer
	if err := Write(&b, format, Set{Sweep: "settle", Studies: studies, Failures: fails}); err != nil {
		t.Fatal(err)
	}
	return b.String()
}

func TestSettleInTables(t *testing.T) {
	pl, err := spec.LoadSource("settle.toml", []byte(settleSpec), spec.Limits{})
	if err != nil {
		t.Fatal(err)
	}
	jobs, err := pl.Expand()
	if err != nil {
		t.Fatal(err)
	}
	byN := map[string]job.Job{}
	for _, j := range jobs {
		byN[j.Params["nx"]] = j
	}
	extra, _, err := spec.ExtraJob(byN["16"], byN["32"], 64)
	if err != nil {
		t.Fatal(err)
	}
	jobs = append(jobs, extra)
	outs := map[string]job.Outcome{}
	for _, j := range jobs {
		n := float64(atoi(j.Params["nx"]))
		e := 1/n + 20/(n*n)
		outs[j.ID] = job.Outcome{JobID: j.ID, Status: job.StatusDone, Attempts: 1, Errors: map[string]job.Norms{"rho": {L1: e, L2: e, Linf: e}}}
	}
	settings := pl.Settings()
	text := settleSet(t, settings, jobs, outs, "text")
	for _, want := range []string{
		"; not settled by nx = 64 (order 1.31 after 1.47: they differ by 0.16, more than 0.15)\n",
		"\n    added nx = 64: order 1.47 after 1.64: they differ by 0.17, more than 0.15\n",
	} {
		if !strings.Contains(text, want) {
			t.Errorf("text lacks %q:\n%s", want, text)
		}
	}
	md := settleSet(t, settings, jobs, outs, "markdown")
	if !strings.Contains(md, "- added nx = 64: order 1.47") || !strings.Contains(md, "; not settled by nx = 64") {
		t.Errorf("markdown:\n%s", md)
	}
	js := settleSet(t, settings, jobs, outs, "json")
	if !strings.Contains(js, `"settle": {`) || !strings.Contains(js, `"state": "not-settled"`) ||
		!strings.Contains(js, `"added": "order 1.47 after 1.64: they differ by 0.17, more than 0.15"`) {
		t.Errorf("json:\n%s", js)
	}

	// The same results judged without extend_to: the tables are those above
	// without the settling and the added lines.
	plain := append([]job.StudySettings(nil), settings...)
	plain[0].ExtendTo, plain[0].Grids = 0, nil
	want := regexp.MustCompile(`; not settled by [^\n]*`).ReplaceAllString(text, "")
	want = regexp.MustCompile(`\n    added [^\n]*`).ReplaceAllString(want, "")
	if got := settleSet(t, plain, jobs, outs, "text"); got != want {
		t.Errorf("without extend_to:\n%s\nwant\n%s", got, want)
	}
	if js := settleSet(t, plain, jobs, outs, "json"); strings.Contains(js, `"settle":`) || strings.Contains(js, `"added":`) {
		t.Errorf("json without extend_to:\n%s", js)
	}

	// A grid still running: the settling waits.
	delete(outs, extra.ID)
	if text := settleSet(t, settings, jobs, outs, "text"); !strings.Contains(text, "; settling waits: grid 64 has no result yet") {
		t.Errorf("pending:\n%s", text)
	}
}
