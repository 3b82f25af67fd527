package main

import (
	"bytes"
	"context"
	"image/png"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"testing"

	"fvsweep/store"
	"fvsweep/sweep/field"
	"fvsweep/sweep/job"
	"fvsweep/sweep/spec"
	"fvsweep/sweep/table"
	"fvsweep/worker"

	"fvsweep/coordinator/datadir"
)

const plotTestSpec = `name = "pics"
[[study]]
label = "smooth"
case = "vortex"
fixed = { t_end = 0.5 }
axes = { limiter = ["minmod", "mc"] }
refine = { nx = [16, 32, 64] }
design_order = 2
order_tol = 0.5
snapshot = true
`

// plotRig runs the spec's jobs with the real solver, stores them in a
// fresh data directory and writes the snapshot of the finest mc run to a
// file. It returns the data directory, that job's ID and the snapshot path.
func plotRig(t *testing.T) (dir, jobID, snap string) {
	t.Helper()
	sp, err := spec.LoadSource("pics.toml", []byte(plotTestSpec), spec.Limits{})
	if err != nil {
		t.Fatal(err)
	}
	jobs, err := sp.Expand()
	if err != nil {
		t.Fatal(err)
	}
	dir = t.TempDir()
	db, err := store.Open(datadir.Dir(dir).DB(), store.Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	if _, _, err := db.PutSweep(store.SweepRecord{Name: sp.Name, SpecFile: "pics.toml", Spec: plotTestSpec}, jobs); err != nil {
		t.Fatal(err)
	}
	var outs []job.Outcome
	for _, j := range jobs {
		snapped := j.Params["limiter"] == "mc" && j.Params["nx"] == "64"
		run := j
		run.Snapshot = snapped
		res, err := worker.FV2D{}.Run(context.Background(), run)
		o := res.Outcome
		if err != nil || o.Status != job.StatusDone {
			t.Fatal(o.Error, err)
		}
		if runtime.GOOS == "linux" && !(o.CPUS > 0) {
			t.Fatalf("job %s: cpu_s %g: the runner did not record the solving threads' CPU time", j.ID, o.CPUS)
		}
		o.JobID, o.Sweep, o.Attempts, o.Worker = j.ID, sp.Name, 1, "test"
		if snapped {
			data, err := field.Encode(res.Snapshot.Header, res.Snapshot.Data)
			if err != nil {
				t.Fatal(err)
			}
			snap = filepath.Join(dir, "mc64.fvf")
			if err := os.WriteFile(snap, data, 0o644); err != nil {
				t.Fatal(err)
			}
			jobID, o.Snapshot = j.ID, "fields/"+j.ID
		}
		outs = append(outs, o)
	}
	if _, err := db.PutOutcomes(outs); err != nil {
		t.Fatal(err)
	}
	return dir, jobID, snap
}

func checkPNG(t *testing.T, path string) {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	img, err := png.Decode(f)
	if err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	if img.Bounds().Dx() < 400 || img.Bounds().Dy() < 200 {
		t.Errorf("%s: %v is too small", path, img.Bounds())
	}
}

func TestPlotCommands(t *testing.T) {
	dir, id, snap := plotRig(t)
	outDir := os.Getenv("FVSWEEP_PLOT_DIR") // set it to keep the pictures to look at
	if outDir == "" {
		outDir = t.TempDir()
	}
	for _, tc := range []struct {
		name string
		args []string
	}{
		{"convergence.png", []string{"pics", "convergence"}},
		{"convergence.svg", []string{"pics", "convergence", "--norm", "linf"}},
		// The titles name what tells the job apart within its study.
		{"heat.svg", []string{"pics", "field", "--job", id, "--snapshot", snap}},
		{"cut.svg", []string{"pics", "field", "--job", id, "--snapshot", snap, "--cut", "y"}},
		{"cost.png", []string{"pics", "cost"}},
		{"work.png", []string{"pics", "cost", "--x", "work"}},
		{"heat.png", []string{"pics", "field", "--job", id[:8], "--snapshot", snap}},
		{"heat-p.png", []string{"pics", "field", "--job", id, "--snapshot", snap, "--var", "p"}},
		{"cut.png", []string{"pics", "field", "--job", id, "--snapshot", snap, "--cut", "x", "--at", "5"}},
	} {
		args := tc.args
		out := filepath.Join(outDir, tc.name)
		var stdout, stderr bytes.Buffer
		args = append(args, "--data", dir, "--out", out)
		if code := runPlot(args, &stdout, &stderr); code != 0 {
			t.Fatalf("plot %v: exit %d: %s", args, code, stderr.String())
		}
		if strings.TrimSpace(stdout.String()) != out {
			t.Errorf("stdout %q, want the output path", stdout.String())
		}
		if strings.HasSuffix(out, ".png") {
			checkPNG(t, out)
		} else if b, _ := os.ReadFile(out); !bytes.Contains(b, []byte("<svg")) {
			t.Errorf("%s: not an SVG", out)
		} else if want := map[bool]string{true: "Linf(rho)", false: "limiter=mc nx=64"}[tc.args[1] == "convergence"]; !bytes.Contains(b, []byte(want)) {
			t.Errorf("%s lacks %q", out, want)
		}
	}
}

func TestPlotErrors(t *testing.T) {
	dir, id, snap := plotRig(t)
	out := filepath.Join(t.TempDir(), "x.png")
	for _, tc := range []struct {
		args []string
		code int
		want string
	}{
		{[]string{"pics"}, 2, "missing PLOT"},
		{[]string{"pics", "histogram", "--out", out}, 2, `unknown plot "histogram"`},
		{[]string{"pics", "convergence"}, 2, "--out FILE is required"},
		{[]string{"pics", "convergence", "--out", "x.gif"}, 2, `unknown image format ".gif"`},
		{[]string{"pics", "convergence", "--out", out, "--cut", "x"}, 2, "are for the field plot"},
		{[]string{"pics", "field", "--out", out, "--cut", "z"}, 2, `--cut "z"`},
		{[]string{"pics", "convergence", "--out", out, "--x", "work"}, 2, "--x is for the cost plot"},
		{[]string{"pics", "cost", "--out", out, "--x", "wall"}, 2, `--x "wall": want cpu or work`},
		{[]string{"pics", "convergence", "--out", out, "--norm", "l7"}, 2, `--norm "l7": want l1, l2 or linf`},
		{[]string{"pics", "convergence", "--out", out, "--study", "4"}, 1, "--study 4"},
		{[]string{"pics", "field", "--out", out, "--norm", "linf"}, 2, "--norm is for the convergence and cost plots"},
		{[]string{"nosuch", "convergence", "--out", out}, 1, "nosuch"},
		{[]string{"pics", "field", "--out", out}, 1, "needs --job"},
		{[]string{"pics", "field", "--out", out, "--job", "ffff"}, 1, "no such job"},
		{[]string{"pics", "field", "--out", out, "--job", id}, 1, "pass it with --snapshot FILE"},
		// The vortex lives on [0, 10]^2: a cut outside it is refused, not clamped.
		{[]string{"pics", "field", "--out", out, "--job", id, "--snapshot", snap, "--cut", "x", "--at", "50"}, 1, "--at 50: the cut along x passes at y = 50, outside the domain's y range [0, 10]"},
		{[]string{"pics", "field", "--out", out, "--job", id, "--snapshot", snap, "--cut", "y", "--at", "-1"}, 1, "outside the domain's x range [0, 10]"},
	} {
		var stdout, stderr bytes.Buffer
		args := append(tc.args, "--data", dir)
		code := runPlot(args, &stdout, &stderr)
		if code != tc.code || !strings.Contains(stderr.String(), tc.want) {
			t.Errorf("plot %v: exit %d, stderr %q; want exit %d and %q", tc.args, code, stderr.String(), tc.code, tc.want)
		}
	}
	var stdout, stderr bytes.Buffer
	if code := runPlot([]string{"pics", "convergence", "--data", t.TempDir(), "--out", out}, &stdout, &stderr); code != 1 || !strings.Contains(stderr.String(), "no store at") {
		t.Errorf("empty data dir: exit %d, %q", code, stderr.String())
	}
}

func TestReportCommand(t *testing.T) {
	dir, _, _ := plotRig(t)
	out := filepath.Join(t.TempDir(), "rep")
	var stdout, stderr bytes.Buffer
	if code := runReport([]string{"pics", "--data", dir, "--out", out}, &stdout, &stderr); code != 0 {
		t.Fatalf("report: exit %d: %s", code, stderr.String())
	}
	path := filepath.Join(out, "pics.html")
	if strings.TrimSpace(stdout.String()) != path {
		t.Errorf("stdout %q, want %q", stdout.String(), path)
	}
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	html := string(b)
	for _, want := range []string{"<h3>limiter=mc</h3>", "<h3>limiter=minmod</h3>", "<svg", "snapshot = true", "Verdict:", version} {
		if !strings.Contains(html, want) {
			t.Errorf("report lacks %q", want)
		}
	}
	if n := strings.Count(html, "<svg"); n != 3 {
		t.Errorf("%d plots, want 3 (convergence, cost in CPU seconds and in cell updates)", n)
	}
	for _, tc := range []struct {
		args []string
		want string
	}{
		{[]string{"pics", "--data", dir}, "--out DIR is required"},
		{[]string{"--data", dir, "--out", out}, "missing SWEEP"},
		{[]string{"../pics", "--data", dir, "--out", out}, "no path separators"},
	} {
		stderr.Reset()
		if code := runReport(tc.args, &stdout, &stderr); code != 2 || !strings.Contains(stderr.String(), tc.want) {
			t.Errorf("report %v: exit %d, %q; want %q", tc.args, code, stderr.String(), tc.want)
		}
	}
}

// A plot never draws more groups than there are line colours: a study
// with more is refused with the parameters that tell them apart, and
// --group picks a few by k=v.
func TestPickGroups(t *testing.T) {
	st := table.Study{Index: 2}
	for _, flux := range []string{"hll", "hllc", "roe", "rusanov"} {
		for _, lim := range []string{"minmod", "mc", "vanleer"} {
			st.Groups = append(st.Groups, table.Group{Params: map[string]string{"flux": flux, "limiter": lim, "nx": "16"}})
		}
	}
	_, err := pickGroups(st, "")
	if err == nil || !strings.Contains(err.Error(), "12 groups to draw, more than the 6 colours") ||
		!strings.Contains(err.Error(), "flux (hll, hllc, roe, rusanov); limiter (minmod, mc, vanleer)") {
		t.Errorf("12 groups: %v", err)
	}
	sub, err := pickGroups(st, "flux=roe")
	if err != nil || len(sub.Groups) != 3 {
		t.Fatalf("--group flux=roe: %d groups, %v; want 3", len(sub.Groups), err)
	}
	for _, g := range sub.Groups {
		if g.Params["flux"] != "roe" {
			t.Errorf("--group flux=roe kept %v", g.Params)
		}
	}
	if _, err := pickGroups(st, "flux=exact"); err == nil || !strings.Contains(err.Error(), "no group of study 2 matches") {
		t.Errorf("--group flux=exact: %v", err)
	}
}

// A selection matches when every k=v pair names a parameter with that
// value; a missing parameter or a pair without "=" matches nothing.
func TestMatchPairs(t *testing.T) {
	params := lookupIn(map[string]string{"nx": "64", "limiter": "mc"})
	for _, tc := range []struct {
		sel  string
		want bool
	}{
		{"", true},
		{"nx=64", true},
		{"nx=64, limiter=mc", true},
		{"nx=64 limiter=minmod", false},
		{"flux=", false},
		{"nx", false},
	} {
		if got := matchPairs(selPairs(tc.sel), params); got != tc.want {
			t.Errorf("%q: %v, want %v", tc.sel, got, tc.want)
		}
	}
}
