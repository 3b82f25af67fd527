package main

import (
	"bytes"
	"context"
	"math"
	"os"
	"path/filepath"
	"slices"
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
	m, err := localOrderMap(snaps, "rho", prob, vals.Int("quad"), 1)
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
	png3 := filepath.Join(outDir, "order-map-fit.png")
	if code, _, stderr := plot("--group", "limiter=minmod", "--fit-grids", "all", "--window", "3", "--out", png3); code != 0 {
		t.Fatalf("png, --fit-grids all --window 3: exit %d\n%s", code, stderr)
	}
	checkPNG(t, png3)

	code, csv, stderr := plot("--group", "limiter=mc", "--format", "csv")
	if code != 0 {
		t.Fatalf("csv: exit %d\n%s", code, stderr)
	}
	lines := strings.Split(strings.TrimSpace(csv), "\n")
	if lines[0] != "x,y,order" || len(lines) != 1+32*32 {
		t.Fatalf("csv: header %q, %d lines", lines[0], len(lines))
	}
	snaps, _, prob, vals := runGrids(t, "vortex", map[string]string{"t_end": "0.5", "scheme": "muscl", "limiter": "mc"}, 32, 64)
	want, err := localOrderMap(snaps, "rho", prob, vals.Int("quad"), 1)
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
		{[]string{"--group", "limiter=mc", "--window", "2", "--format", "csv"}, 2, "--window 2: want an odd number"},
		{[]string{"--group", "limiter=mc", "--fit-grids", "1", "--format", "csv"}, 2, `--fit-grids "1"`},
		{[]string{"--group", "limiter=mc", "--fit-grids", "4", "--format", "csv"}, 1, "4 grids asked for, 3 finished grids"},
		{[]string{"--group", "limiter=mc", "--coarse", "32", "--fit-grids", "3", "--format", "csv"}, 1, "needs 3 finished grids"},
		{[]string{"--group", "limiter=mc", "--coarse", "64", "--fit-grids", "all", "--format", "csv"}, 1, "needs 2 finished grids"},
	} {
		code, _, stderr := plot(tc.args...)
		if code != tc.code || !strings.Contains(stderr, tc.want) {
			t.Errorf("%v: exit %d, %q; want %d and %q", tc.args, code, stderr, tc.code, tc.want)
		}
	}
	// --fit-grids all --window 3: the three grids fitted per window of 3x3
	// cells of the 16 grid, as computed here from fv2d directly.
	code, csv, stderr = plot("--group", "limiter=mc", "--fit-grids", "all", "--window", "3", "--format", "csv")
	if code != 0 {
		t.Fatalf("--fit-grids all: exit %d\n%s", code, stderr)
	}
	snaps, _, prob, vals = runGrids(t, "vortex", map[string]string{"t_end": "0.5", "scheme": "muscl", "limiter": "mc"}, 16, 32, 64)
	if want, err = localOrderMap(snaps, "rho", prob, vals.Int("quad"), 3); err != nil {
		t.Fatal(err)
	}
	lines = strings.Split(strings.TrimSpace(csv), "\n")
	if len(lines) != 1+16*16 || want.orders.Grids != 3 || want.orders.Window != 3 {
		t.Fatalf("--fit-grids all: %d lines; map of %d grids, window %d", len(lines), want.orders.Grids, want.orders.Window)
	}
	for k, line := range lines[1:] {
		f := strings.Split(line, ",")
		w := want.orders.Order[k]
		if p, _ := strconv.ParseFloat(f[2], 64); f[2] == "" != math.IsNaN(w) || (!math.IsNaN(w) && math.Abs(p-w) > 1e-5*math.Max(1, math.Abs(w))) {
			t.Fatalf("--fit-grids all, line %d: order %q, want %v", k+2, f[2], w)
		}
	}
	// --coarse 16 compares 16 and 32.
	if code, csv, stderr := plot("--group", "limiter=minmod", "--coarse", "16", "--format", "csv"); code != 0 || strings.Count(csv, "\n") != 1+16*16 {
		t.Errorf("--coarse 16: exit %d, %d lines\n%s", code, strings.Count(csv, "\n"), stderr)
	}
	// --coarse 32 --fit-grids all fits 32 and 64: the grids from --coarse
	// on, the map on the 32 grid.
	if code, csv, stderr := plot("--group", "limiter=minmod", "--coarse", "32", "--fit-grids", "all", "--format", "csv"); code != 0 || strings.Count(csv, "\n") != 1+32*32 {
		t.Errorf("--coarse 32 --fit-grids all: exit %d, %d lines\n%s", code, strings.Count(csv, "\n"), stderr)
	}
}

// Toro's test 1 (docs/references.md §1) with MUSCL, van Leer and HLLC on
// five nested grids, 100 to 1600 cells in x (2 in y), rho fitted by least
// squares per window of 9 coarse cells: the order falls at the waves of
// the exact solution (Problem.Breaks) as theory says it must.
//   - At the shock, L1 convergence of a captured shock is first order
//     (docs/references.md §6; common practice): 1 ± 0.15.
//   - At the contact, a scheme of formal order p converges in L1 at
//     p/(p+1), 2/3 for p = 2 (Banks, Aslam & Rider 2008;
//     docs/references.md §6 and §18): 2/3 ± 0.15.
//   - Both lie clearly below the design order 2, and the lowest order of
//     the whole map sits at the contact (within the window's half-width
//     and a cell of the exact contact), the wave theory gives the lowest
//     order.
//   - Outside the fan and away from the waves the solution is constant and
//     reproduced to round-off: every window out of reach of a wave is
//     masked.
//
// Measured (this solver): shock 0.92, contact 0.65, fan edges and
// interior 1.00, map minimum 0.41 four cells right of the contact.
func TestOrderMapShockTubeWaves(t *testing.T) {
	const w = 9
	snaps, _, prob, vals := runGrids(t, "shocktube", map[string]string{"test": "1", "ny": "2", "scheme": "muscl", "limiter": "vanleer", "flux": "hllc"},
		100, 200, 400, 800, 1600)
	m, err := localOrderMap(snaps, "rho", prob, vals.Int("quad"), w)
	if err != nil {
		t.Fatal(err)
	}
	o := m.orders
	if o.Grids != 5 || o.Window != w || o.NX != 100 || o.NY != 2 {
		t.Fatalf("map of %d grids, window %d, %dx%d", o.Grids, o.Window, o.NX, o.NY)
	}
	waves, _ := prob.Breaks(snaps[0].hdr.T) // fan head, fan tail, contact, shock (Toro 2009 §4.5)
	if len(waves) != 4 {
		t.Fatalf("waves %v: want a fan's two edges, a contact and a shock", waves)
	}
	contact, shock := waves[2], waves[3]
	dx := 1 / float64(o.NX)
	cell := func(x float64) int { return int(x / dx) }
	for j := range o.NY {
		at := func(x float64) float64 { return o.Order[j*o.NX+cell(x)] }
		if p := at(shock); !(p >= 0.85 && p <= 1.15) {
			t.Errorf("row %d: order %.3f at the shock (x = %.4f), want 1 ± 0.15", j, p, shock)
		}
		if p := at(contact); !(math.Abs(p-2.0/3) <= 0.15) {
			t.Errorf("row %d: order %.3f at the contact (x = %.4f), want 2/3 ± 0.15", j, p, contact)
		}
		low, lowX := math.Inf(1), math.NaN()
		for i := range o.NX {
			x := (float64(i) + 0.5) * dx
			p := o.Order[j*o.NX+i]
			near := x >= waves[0] && x <= waves[1] // inside the fan the solution is smooth, not constant
			for _, s := range waves {
				near = near || math.Abs(x-s) <= (w/2+3)*dx // the window's reach and a few cells of smearing
			}
			if !near && !math.IsNaN(p) {
				t.Errorf("row %d: window at x = %.3f, far from every wave, has order %.3f: want masked (round-off)", j, x, p)
			}
			if p < low {
				low, lowX = p, x
			}
		}
		t.Logf("row %d: order %.3f at the shock, %.3f at the contact; lowest %.3f, %+.0f cells from the contact", j, at(shock), at(contact), low, (lowX-contact)/dx)
		if math.Abs(lowX-contact) > (w/2+1)*dx {
			t.Errorf("row %d: lowest order %.3f at x = %.3f, want it within %d cells of the contact at %.4f", j, low, lowX, w/2+1, contact)
		}
	}
}

// A TVD limiter clips smooth extrema (its slope is zero in a cell where
// the neighbouring differences change sign), so there the reconstruction
// is first order (Harten 1983; Osher & Chakravarthy 1984: TVD schemes
// degenerate to first order at smooth extrema; recalled from memory,
// docs/references.md §18). Shu's vortex under minmod (t = 2, nx = 32 to
// 256, the least-squares fit over the four grids, cell by cell): the map
// of x-momentum shows the loss at the maximum of u, one radius below the
// vortex centre, where the flow crosses the x faces fastest: the order
// there lies at least 0.5 below the median of the smooth ring r in (0.5,
// 1.5) around the centre (off the axes, where the extrema are), and among
// its lowest tenth. The check is of the location, at the point the
// solution predicts, not of a picture.
func TestOrderMapVortexClippedExtremum(t *testing.T) {
	if testing.Short() {
		t.Skip("four vortex runs up to 256x256 (about 10 s): skipped with -short")
	}
	snaps, _, prob, vals := runGrids(t, "vortex", map[string]string{"scheme": "muscl", "limiter": "minmod", "flux": "hllc", "t_end": "2"},
		32, 64, 128, 256)
	m, err := localOrderMap(snaps, "mx", prob, vals.Int("quad"), 1)
	if err != nil {
		t.Fatal(err)
	}
	o := m.orders
	if o.Grids != 4 || o.NX != 32 {
		t.Fatalf("map of %d grids on %dx%d", o.Grids, o.NX, o.NY)
	}
	h := 10 / float64(o.NX)
	cx, cy := 5+2.0, 5+2.0 // the centre (5, 5) moved by (u_inf, v_inf) t
	at := func(x, y float64) float64 { return o.Order[int(y/h)*o.NX+int(x/h)] }
	var ring []float64
	for j := range o.NY {
		for i := range o.NX {
			dx, dy := (float64(i)+0.5)*h-cx, (float64(j)+0.5)*h-cy
			if r := math.Hypot(dx, dy); r > 0.5 && r < 1.5 && math.Abs(dx) > 0.5 && math.Abs(dy) > 0.5 {
				if p := o.Order[j*o.NX+i]; !math.IsNaN(p) {
					ring = append(ring, p)
				}
			}
		}
	}
	if len(ring) < 16 {
		t.Fatalf("only %d cells of the ring have an order", len(ring))
	}
	slices.Sort(ring)
	median := ring[len(ring)/2]
	p := at(cx, cy-1) // u = u_inf + beta/(2 pi) at (0, -1) from the centre: its maximum
	below := 0
	for _, q := range ring {
		if q < p {
			below++
		}
	}
	t.Logf("order of mx at the maximum of u: %.3f; ring median %.3f; %d of %d ring cells lower", p, median, below, len(ring))
	if !(p <= median-0.5) {
		t.Errorf("order %.3f at the maximum of u, ring median %.3f: want the extremum at least 0.5 lower", p, median)
	}
	if frac := float64(below) / float64(len(ring)); frac > 0.1 {
		t.Errorf("order %.3f at the maximum of u is above %.0f %% of the ring: want it among the lowest tenth", p, 100*frac)
	}
}
