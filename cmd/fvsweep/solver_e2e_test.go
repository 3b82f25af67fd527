package main

import (
	"bytes"
	"context"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"fvsweep/sweep/table"
	"fvsweep/sweep/verify"
	"fvsweep/sweep/wire"
	"fvsweep/worker"
)

// buildMuscl builds the C example solver with the system compiler beside
// a copy of its manifest and returns the manifest's path, or skips.
func buildMuscl(t *testing.T) string {
	t.Helper()
	cc, err := exec.LookPath("cc")
	if err != nil {
		if cc, err = exec.LookPath("gcc"); err != nil {
			t.Skip("no C compiler (cc or gcc): the C example is not built")
		}
	}
	ex := filepath.Join("..", "..", "examples", "solvers", "muscl-c")
	dir := t.TempDir()
	if out, err := exec.Command(cc, "-O2", "-o", filepath.Join(dir, "muscl"), filepath.Join(ex, "muscl.c"), "-lm").CombinedOutput(); err != nil {
		t.Fatalf("%s muscl.c: %v\n%s", cc, err, out)
	}
	src, err := os.ReadFile(filepath.Join(ex, "manifest.toml"))
	if err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(dir, "manifest.toml")
	if err := os.WriteFile(path, src, 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

// sideSpec puts the C example beside fv2d's MUSCL-Hancock on the same
// grids of the isentropic vortex.
const sideSpec = `name = "side"
[[study]]
case = "vortex"
fixed = { t_end = 0.5, limiter = "vanleer", cfl = 0.5 }
axes = { solver = ["fv2d", "muscl-c"] }
refine = { nx = [16, 32, 64] }
design_order = 2
`

// The whole pipeline with an outside program: the spec and the manifest go
// to the coordinator through submit; a worker that offers only fv2d runs
// fv2d's jobs and leaves the program's waiting (status says so); a worker
// that offers the program runs them; the table shows both solvers with
// their observed orders.
func TestOutsideSolverEndToEnd(t *testing.T) {
	manifestPath := buildMuscl(t)
	specPath, data := specFiles(t, sideSpec)
	c := &common{data: data, logLevel: "warn"}
	log, _ := c.logger("test")
	s, err := startService(c, defaultServerFlags(), "", log, nil)
	if err != nil {
		t.Fatal(err)
	}
	defer s.close()
	start := func(solvers ...string) context.CancelFunc {
		t.Helper()
		sv := solverFlags{files: solvers}
		progs, _, err := sv.load()
		if err != nil {
			t.Fatal(err)
		}
		offer, err := runners(progs)
		if err != nil {
			t.Fatal(err)
		}
		nc, err := s.dial(c, "test worker", wire.RoleWorker)
		if err != nil {
			t.Fatal(err)
		}
		ctx, cancel := context.WithCancel(context.Background())
		w, err := worker.New(ctx, nc, worker.Config{Concurrency: 2, Runners: offer, ReportEvery: 200 * time.Millisecond,
			FetchWait: 200 * time.Millisecond, Log: log.Named("worker")})
		if err != nil {
			t.Fatal(err)
		}
		done := make(chan struct{})
		go func() { defer close(done); w.Run(ctx); nc.Close() }()
		stop := func() { cancel(); <-done }
		t.Cleanup(stop)
		return stop
	}
	stopPlain := start()

	if code, out := capture(t, func() int {
		return runSubmit([]string{specPath, "--data", data, "--solver", manifestPath, "--log-level", "warn"})
	}); code != 0 || !strings.Contains(out, "6 jobs") {
		t.Fatalf("submit: exit %d\n%s", code, out)
	}
	status := func() wire.SweepStatus {
		st, err := s.coord.Status("side")
		if err != nil || len(st) != 1 {
			t.Fatalf("status: %v %v", st, err)
		}
		return st[0]
	}
	deadline := time.Now().Add(60 * time.Second)
	for st := status(); st.Done < 3; st = status() {
		if time.Now().After(deadline) {
			t.Fatalf("fv2d's jobs not done: %+v", st)
		}
		time.Sleep(50 * time.Millisecond)
	}
	time.Sleep(500 * time.Millisecond) // the plain worker would have taken a program job by now
	st := status()
	if st.Done != 3 || st.Failed != 0 || st.Running != 0 || st.Queued != 3 || st.Waiting["muscl-c@1.0"] != 3 {
		t.Fatalf("with a worker without the program: %+v", st)
	}
	rep, live, err := storeStatus(c, "side")
	if err != nil || !live {
		t.Fatal(live, err)
	}
	var text bytes.Buffer
	writeStatus(&text, rep, live)
	if !strings.Contains(text.String(), "side: 3 queued jobs waiting for a worker with muscl-c@1.0") {
		t.Fatalf("status does not say the jobs wait:\n%s", text.String())
	}
	stopPlain()

	start(manifestPath)
	deadline = time.Now().Add(120 * time.Second)
	for st = status(); st.Done+st.Failed < 6; st = status() {
		if time.Now().After(deadline) {
			t.Fatalf("the program's jobs not done: %+v", st)
		}
		time.Sleep(50 * time.Millisecond)
	}
	if st.Failed != 0 || st.Waiting != nil {
		t.Fatalf("after a worker with the program: %+v", st)
	}
	sd, err := openSweep(c, "side")
	if err != nil {
		t.Fatal(err)
	}
	set, err := sd.tables(table.Options{})
	if err != nil {
		t.Fatal(err)
	}
	var out bytes.Buffer
	if err := table.Write(&out, "text", set); err != nil {
		t.Fatal(err)
	}
	t.Logf("tables:\n%s", out.String())
	if len(set.Studies) != 1 || len(set.Studies[0].Groups) != 2 {
		t.Fatalf("want one study with the two solvers side by side:\n%s", out.String())
	}
	for _, g := range set.Studies[0].Groups {
		fin := g.Rows[len(g.Rows)-1]
		// Both are MUSCL-Hancock schemes with a van Leer limiter: second
		// order on the smooth vortex (docs/references.md §6), within the
		// design band on the finest pair.
		if len(g.Rows) != 3 || math.IsNaN(fin.Order) || fin.Order < 1 || g.Verdict.Status != verify.StatusPass {
			t.Errorf("group %s: finest observed order %v, verdict %s", g.Label, fin.Order, g.Verdict.Status)
		}
	}
	for _, want := range []string{"fv2d: ", "muscl-c@1.0: "} {
		if !strings.Contains(out.String(), want) {
			t.Errorf("the table does not name %q:\n%s", want, out.String())
		}
	}
}
