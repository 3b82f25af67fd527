package table

import (
	"strings"
	"testing"

	"fvsweep/sweep/job"
)

// A group whose grids are still to come is waiting, not short of data: the
// HTML says "not run yet" (or "waiting for more grids") in a neutral class;
// insufficient-data stays for a group whose grids all finished without two
// usable errors.
func TestWriteHTMLWaitingGroups(t *testing.T) {
	sp, jobs := parseExpand(t, "wait.toml", `name = "wait"
[[study]]
case = "burgers-sine"
fixed = { t_end = 0.05 }
axes = { limiter = ["minmod", "mc"] }
refine = { nx = [16, 32] }
`)
	outs := map[string]job.Outcome{}
	for _, j := range jobs {
		if j.Params["limiter"] == "minmod" {
			outs[j.ID] = job.Outcome{JobID: j.ID, Sweep: "wait", Status: job.StatusFailed, Attempts: 1, Error: "diverged"}
		}
	}
	studies, _, err := Build(sp.Settings(), jobs, outs, Options{})
	if err != nil {
		t.Fatal(err)
	}
	var b strings.Builder
	if err := WriteHTML(&b, studies); err != nil {
		t.Fatal(err)
	}
	html := b.String()
	mc, minmod, _ := strings.Cut(html[strings.Index(html, "<h3>limiter=mc</h3>"):], "<h3>limiter=minmod</h3>")
	if !strings.Contains(mc, `<span class="waiting">not run yet</span> — 0 of 2 grids have a result`) || strings.Contains(mc, "insufficient-data") {
		t.Errorf("group not run yet:\n%s", mc)
	}
	if !strings.Contains(minmod, `<span class="other">insufficient-data</span>`) {
		t.Errorf("group whose grids all failed:\n%s", minmod)
	}
	// One grid of mc done: still waiting, for more grids.
	for _, j := range jobs {
		if j.Params["limiter"] == "mc" && j.Params["nx"] == "16" {
			outs[j.ID] = job.Outcome{JobID: j.ID, Sweep: "wait", Status: job.StatusDone, Attempts: 1,
				Errors: map[string]job.Norms{"u": {L1: 1e-3, L2: 1e-3, Linf: 1e-3}}}
		}
	}
	studies, _, _ = Build(sp.Settings(), jobs, outs, Options{})
	b.Reset()
	WriteHTML(&b, studies)
	if !strings.Contains(b.String(), `<span class="waiting">waiting for more grids</span> — 1 of 2 grids have a result`) {
		t.Errorf("group with one grid of two:\n%s", b.String())
	}
}
