package main

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"fvsweep/fv2d"
	"fvsweep/sweep/field"
	"fvsweep/worker"

	"fvsweep/coordinator/datadir"
)

// fieldSpec is one vortex run (Shu's isentropic vortex, which has an exact
// solution) that keeps its final field.
const fieldSpec = `name = "field"
[[study]]
case = "vortex"
fixed = { nx = 48, ny = 48, t_end = 0.5, limiter = "mc" }
snapshot = true
`

// A snapshot-enabled sweep run by 'run' is plotted from the object store:
// from the server files in --data once run has ended, and through the
// coordinator's server while one runs; the snapshot read back is the
// solver's final field.
func TestPlotFieldFromObjectStore(t *testing.T) {
	spec, data := specFiles(t, fieldSpec)
	if code, out := capture(t, func() int { return runRun([]string{spec, "--data", data, "--format", "none", "--log-level", "warn"}) }); code != 0 {
		t.Fatalf("run: exit %d\n%s", code, out)
	}
	c := &common{data: data}
	sd, err := openSweep(c, "field")
	if err != nil || len(sd.rows) != 1 || sd.rows[0].Outcome == nil || sd.rows[0].Outcome.Snapshot == "" {
		t.Fatalf("stored rows %+v: %v", sd, err)
	}
	jb, ref := sd.rows[0].Job, sd.rows[0].Outcome.Snapshot

	// The bytes read back are the field the solver computes for the job.
	raw, err := fetchSnapshot(c, ref)
	if err != nil {
		t.Fatal(err)
	}
	hdr, got, err := field.Decode(raw)
	if err != nil {
		t.Fatal(err)
	}
	v, err := fv2d.Resolve(jb.Case, jb.Params)
	if err != nil {
		t.Fatal(err)
	}
	res, err := fv2d.Run(context.Background(), v)
	if err != nil {
		t.Fatal(err)
	}
	want := worker.SnapshotOf(res.Final).Data
	if hdr.JobID != jb.ID || hdr.NX != 48 || hdr.NY != 48 || hdr.T != res.Final.T || len(got) != len(want) {
		t.Fatalf("snapshot header %+v", hdr)
	}
	for k := range want {
		if !slices.Equal(got[k], want[k]) {
			t.Errorf("variable %s differs from the solver's final field", hdr.Vars[k])
		}
	}

	outDir := os.Getenv("FVSWEEP_PLOT_DIR") // set it to keep the pictures to look at
	if outDir == "" {
		outDir = t.TempDir()
	}
	plot := func(name string, extra ...string) {
		t.Helper()
		out := filepath.Join(outDir, name)
		var stdout, stderr bytes.Buffer
		args := append([]string{"field", "field", "--job", jb.ID[:8], "--data", data, "--out", out}, extra...)
		if code := runPlot(args, &stdout, &stderr); code != 0 {
			t.Fatalf("plot %v: exit %d\n%s", extra, code, stderr.String())
		}
		checkPNG(t, out)
	}
	plot("store-heat.png")
	plot("store-cut.png", "--cut", "x")

	log, _ := (&common{logLevel: "warn"}).logger("test")
	s, err := startService(c, defaultServerFlags(), "", log, nil)
	if err != nil {
		t.Fatal(err)
	}
	plot("served-heat-p.png", "--var", "p")
	if err := s.close(); err != nil {
		t.Fatal(err)
	}

	var stdout, stderr bytes.Buffer
	if err := os.RemoveAll(datadir.Dir(data).NATS()); err != nil {
		t.Fatal(err)
	}
	code := runPlot([]string{"field", "field", "--job", jb.ID, "--data", data, "--out", filepath.Join(outDir, "x.png")}, &stdout, &stderr)
	if code != 1 || !strings.Contains(stderr.String(), "no NATS files") || !strings.Contains(stderr.String(), "--snapshot FILE") {
		t.Errorf("without server files: exit %d, %q", code, stderr.String())
	}
}
