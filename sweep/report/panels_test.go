package report

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"fvsweep/sweep/job"
	"fvsweep/sweep/plots"
	"fvsweep/sweep/spec"
	"fvsweep/sweep/table"
)

// A study of 4 limiters x 3 fluxes x 2 CFL numbers: 24 groups.
const crossSpec = `name = "wide"
[[study]]
case = "vortex"
fixed = { t_end = 0.5 }
cross = { limiter = ["minmod", "vanleer", "mc", "superbee"], flux = ["hll", "hllc", "roe"], cfl = [0.4, 0.8] }
refine = { nx = [16, 32] }
`

func wideStudy(t *testing.T) table.Study {
	t.Helper()
	sp, err := spec.LoadSource("wide.toml", []byte(crossSpec), spec.Limits{})
	if err != nil {
		t.Fatal(err)
	}
	jobs, err := sp.Expand()
	if err != nil {
		t.Fatal(err)
	}
	outs := map[string]job.Outcome{}
	for _, j := range jobs {
		h := 10 / float64(nxOf(j))
		c := 0.01 * map[string]float64{"hll": 1, "hllc": 2, "roe": 4}[j.Params["flux"]] * map[string]float64{"0.4": 1, "0.8": 1.5}[j.Params["cfl"]]
		outs[j.ID] = job.Outcome{JobID: j.ID, Sweep: "wide", Status: job.StatusDone, Attempts: 1, WallS: 1 / h, CPUS: 1 / h, Steps: 10,
			Errors: map[string]job.Norms{"rho": {L1: c * h * h}}}
	}
	studies, _, err := table.Build(sp.Settings(), jobs, outs, table.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if n := len(studies[0].Groups); n != 24 {
		t.Fatalf("%d groups, want 24", n)
	}
	return studies[0]
}

// 24 groups split into panels of at most plots.Colours() (6) groups, each
// panel holding the groups that share one value of the parameter with the
// most values (limiter: 4 panels of flux x cfl = 6), every group in exactly
// one panel, no colour twice within a panel.
func TestPanelsSplitWideStudy(t *testing.T) {
	st := wideStudy(t)
	panels := Panels(st)
	if len(panels) != 4 {
		t.Fatalf("%d panels, want 4", len(panels))
	}
	seen := map[string]bool{}
	for i, p := range panels {
		if !strings.HasPrefix(p.Holds, "limiter=") {
			t.Errorf("panel %d holds %q, want one limiter", i, p.Holds)
		}
		if n := len(p.Study.Groups); n == 0 || n > plots.Colours() {
			t.Errorf("panel %d: %d groups", i, n)
		}
		for _, g := range p.Study.Groups {
			if seen[g.Ident] {
				t.Errorf("group %s in two panels", g.Ident)
			}
			seen[g.Ident] = true
			if p.Holds != "limiter="+g.Params["limiter"] || strings.Contains(g.Label, "limiter=") {
				t.Errorf("panel %q has group %q (label %q)", p.Holds, g.Params["limiter"], g.Label)
			}
		}
		f, err := ConvergenceFigure(p.Study)
		if err != nil {
			t.Fatal(err)
		}
		colours := map[string]bool{}
		for _, l := range f.Lines {
			c := l.Style.String()[:7]
			if colours[c] {
				t.Errorf("panel %d: colour %s twice", i, c)
			}
			colours[c] = true
		}
		if len(f.Lines) != len(p.Study.Groups) {
			t.Errorf("panel %d: %d lines for %d groups", i, len(f.Lines), len(p.Study.Groups))
		}
	}
	if len(seen) != 24 {
		t.Errorf("%d groups in panels, want 24", len(seen))
	}
}

// A study that fits one plot is one panel, unchanged; a panel that still
// holds too many groups is cut into parts.
func TestPanelsSmallAndUneven(t *testing.T) {
	st := wideStudy(t)
	small := st
	small.Groups = st.Groups[:5]
	if p := Panels(small); len(p) != 1 || p[0].Holds != "" || len(p[0].Study.Groups) != 5 || p[0].Study.Groups[0].Label != st.Groups[0].Label {
		t.Errorf("5 groups: %+v", p)
	}
	// Ten groups that differ only in one parameter: parts of 6 and 4,
	// not ten panels of one.
	ten := st
	ten.Groups = nil
	for i, g := range st.Groups[:10] {
		g.Params = map[string]string{"nx": "16", "k": string(rune('a' + i))}
		ten.Groups = append(ten.Groups, g)
	}
	p := Panels(ten)
	if len(p) != 2 || len(p[0].Study.Groups) != 6 || len(p[1].Study.Groups) != 4 || p[0].Holds != "" || p[1].Holds != "" {
		t.Errorf("ten groups: %d panels %+v", len(p), p)
	}
}

// The report of the 24-group study draws 4 panels per kind of plot, each
// with its caption naming what it holds, and each legend narrower than the
// plot area. The first convergence panel is written to $FVSWEEP_PANEL_PNG
// when set, to look at.
func TestReportPanels(t *testing.T) {
	st := wideStudy(t)
	r := &Report{Sweep: "wide", Studies: []StudyReport{{Study: st}}}
	r.AddFigures()
	figs := r.Studies[0].Figures
	if len(figs) != 12 || len(r.Studies[0].Notes) != 0 {
		t.Fatalf("%d figures, notes %v; want 3 kinds x 4 panels", len(figs), r.Studies[0].Notes)
	}
	for i, f := range figs {
		if want := "Panel " + string(rune('1'+i%4)) + " of 4: the groups with limiter="; !strings.HasPrefix(f.Caption, want) {
			t.Errorf("figure %d caption %q", i, f.Caption)
		}
	}
	p := Panels(st)[0]
	f, err := ConvergenceFigure(p.Study)
	if err != nil {
		t.Fatal(err)
	}
	f.Title += " [" + p.Holds + "]"
	if !strings.Contains(string(figs[0].SVG), f.Title) {
		t.Errorf("first panel's SVG lacks its title %q", f.Title)
	}
	if lw, pw := f.LegendWidth(), plots.PlotWidth(); lw > pw {
		t.Errorf("legend %v wide, plot area %v", lw, pw)
	}
	if path := os.Getenv("FVSWEEP_PANEL_PNG"); path != "" {
		if err := plots.Save(filepath.Clean(path), f); err != nil {
			t.Fatal(err)
		}
	}
}
