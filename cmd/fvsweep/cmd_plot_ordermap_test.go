package main

import (
	"bytes"
	"context"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"fvsweep/fv2d"
	"fvsweep/sweep/job"
	"fvsweep/worker"
)

// runGrids runs case c with params on each nx (ny = nx unless ny is given
// in params) and returns the grids' snapshots, as the worker stores them,
// and the L1 error of rho of each run.
func runGrids(t *testing.T, c string, params map[string]string, nxs ...int) ([]gridSnapshot, []float64, *fv2d.Problem, fv2d.Values) {
	t.Helper()
	var snaps []gridSnapshot
	var l1 []float64
	var prob *fv2d.Problem
	var vals fv2d.Values
	for _, nx := range nxs {
		p := map[string]string{"nx": strconv.Itoa(nx)}
		if _, ok := params["ny"]; !ok {
			p["ny"] = strconv.Itoa(nx)
		}
		for k, v := range params {
			p[k] = v
		}
		v, err := fv2d.Resolve(c, p)
		if err != nil {
			t.Fatal(err)
		}
		res, err := fv2d.Run(context.Background(), v)
		if err != nil {
			t.Fatal(err)
		}
		s := worker.SnapshotOf(res.Final)
		snaps = append(snaps, gridSnapshot{job: job.Job{Case: c, Params: p}, hdr: s.Header, data: s.Data})
		if e, ok := res.Errors["rho"]; ok {
			l1 = append(l1, e.L1)
		}
		prob, _ = problemOf(job.Job{Case: c, Params: p})
		vals = v
	}
	return snaps, l1, prob, vals
}

// A smooth solution (Shu's isentropic vortex, docs/references.md §4) with a
// gently limited MUSCL scheme: the map's median lies within 0.2 of the
// global L1 order, which is the order of the solver's own L1 errors.
// Grids 128 and 256 (the finest pair of 64/128/256): on 32/64/128 the L1
// order of this case is still pre-asymptotic (2.35, dominated by the
// vortex core, while the median cell is at 2.09).
func TestOrderMapSmoothVortex(t *testing.T) {
	snaps, l1, prob, vals := runGrids(t, "vortex", map[string]string{"scheme": "muscl", "limiter": "mc"}, 128, 256)
	m, err := localOrderMap(snaps, "rho", prob, vals.Int("quad"))
	if err != nil {
		t.Fatal(err)
	}
	// The global order is that of the solver's L1 errors (float32 storage
	// moves it by far less than 1e-3).
	if want := math.Log2(l1[0] / l1[1]); math.Abs(m.orders.Global-want) > 1e-3 {
		t.Errorf("global order %.4f, the solver's L1 errors give %.4f", m.orders.Global, want)
	}
	// Second order on a smooth solution (docs/references.md §6).
	if g := m.orders.Global; g < 1.85 || g > 2.6 {
		t.Errorf("global order %.3f outside the band of a second-order scheme", g)
	}
	if med := m.orders.Median(); math.Abs(med-m.orders.Global) > 0.2 {
		t.Errorf("median order %.3f, global %.3f: more than 0.2 apart", med, m.orders.Global)
	}
	if m.orders.Masked == 0 || m.orders.Masked > len(m.orders.Order)*3/4 {
		t.Errorf("%d of %d cells masked", m.orders.Masked, len(m.orders.Order))
	}
}

// orderMapSpec is a small vortex study on nested grids that keeps its
// fields, two limiters (so two groups).
const orderMapSpec = `name = "omap"
[[study]]
case = "vortex"
fixed = { t_end = 0.5, scheme = "muscl" }
axes = { limiter = ["mc", "minmod"] }
refine = { nx = [16, 32, 64] }
snapshot = true
`

// End to end: a sweep run by 'run', then 'plot order-map' from the stored
// snapshots, as a picture and as CSV; the CSV is the map of the same
// fields computed here from fv2d directly.
func TestPlotOrderMapCommand(t *testing.T) {
	spec, data := specFiles(t, orderMapSpec)
	if code, out := capture(t, func() int { return runRun([]string{spec, "--data", data, "--format", "none", "--log-level", "warn"}) }); code != 0 {
		t.Fatalf("run: exit %d\n%s", code, out)
	}
	outDir := os.Getenv("FVSWEEP_PLOT_DIR") // set it to keep the picture to look at
	if outDir == "" {
		outDir = t.TempDir()
	}
	plot := func(args ...string) (int, string, string) {
		var stdout, stderr bytes.Buffer
		code := runPlot(append([]string{"omap", "order-map", "--data", data}, args...), &stdout, &stderr)
		return code, stdout.String(), stderr.String()
	}
	png := filepath.Join(outDir, "order-map.png")
	if code, _, stderr := plot("--group", "limiter=mc", "--var", "rho", "--out", png); code != 0 {
		t.Fatalf("png: exit %d\n%s", code, stderr)
	} else if !strings.Contains(stderr, "cells masked") {
		t.Errorf("no note of the masked cells: %q", stderr)
	}
	checkPNG(t, png)

	code, csv, stderr := plot("--group", "limiter=mc", "--format", "csv")
	if code != 0 {
		t.Fatalf("csv: exit %d\n%s", code, stderr)
	}
	lines := strings.Split(strings.TrimSpace(csv), "\n")
	if lines[0] != "x,y,order" || len(lines) != 1+32*32 {
		t.Fatalf("csv: header %q, %d lines", lines[0], len(lines))
	}
	snaps, _, prob, vals := runGrids(t, "vortex", map[string]string{"t_end": "0.5", "scheme": "muscl", "limiter": "mc"}, 32, 64)
	want, err := localOrderMap(snaps, "rho", prob, vals.Int("quad"))
	if err != nil {
		t.Fatal(err)
	}
	for k, line := range lines[1:] {
		f := strings.Split(line, ",")
		x, _ := strconv.ParseFloat(f[0], 64)
		y, _ := strconv.ParseFloat(f[1], 64)
		i, j := k%32, k/32
		if math.Abs(x-(float64(i)+0.5)*10/32) > 1e-12 || math.Abs(y-(float64(j)+0.5)*10/32) > 1e-12 {
			t.Fatalf("line %d: cell centre %s,%s", k+2, f[0], f[1])
		}
		w := want.orders.Order[k]
		if f[2] == "" != math.IsNaN(w) {
			t.Fatalf("line %d: order %q, want %v", k+2, f[2], w)
		}
		if p, _ := strconv.ParseFloat(f[2], 64); !math.IsNaN(w) && math.Abs(p-w) > 1e-5*math.Max(1, math.Abs(w)) {
			t.Fatalf("line %d: order %s, want %v", k+2, f[2], w)
		}
	}

	for _, tc := range []struct {
		args []string
		code int
		want string
	}{
		{[]string{"--out", png}, 1, "2 groups: choose one with --group"},
		{[]string{"--group", "limiter=superbee", "--out", png}, 1, "no group of study 1 matches"},
		{[]string{"--group", "limiter=mc", "--var", "p", "--out", png}, 1, "no result reports errors of"},
		{[]string{"--group", "limiter=mc", "--coarse", "64", "--out", png}, 1, "needs 2 finished grids"},
		{[]string{"--group", "limiter=mc", "--format", "pdf"}, 2, `--format "pdf"`},
		{[]string{"--group", "limiter=mc"}, 2, "--out FILE is required"},
	} {
		code, _, stderr := plot(tc.args...)
		if code != tc.code || !strings.Contains(stderr, tc.want) {
			t.Errorf("%v: exit %d, %q; want %d and %q", tc.args, code, stderr, tc.code, tc.want)
		}
	}
	// --coarse 16 compares 16 and 32.
	if code, csv, stderr := plot("--group", "limiter=minmod", "--coarse", "16", "--format", "csv"); code != 0 || strings.Count(csv, "\n") != 1+16*16 {
		t.Errorf("--coarse 16: exit %d, %d lines\n%s", code, strings.Count(csv, "\n"), stderr)
	}
}
