// Package solvers holds example outside solvers (C and Python) with their
// manifests; its tests run them through fvsweep's runner and check their
// observed orders and shock-tube errors.
package solvers

import (
	"context"
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"testing"

	"fvsweep/fv2d"
	"fvsweep/sweep/field/fieldtest"
	"fvsweep/sweep/job"
	"fvsweep/sweep/manifest"
	"fvsweep/sweep/outside"
	"fvsweep/sweep/spec"
	"fvsweep/sweep/verify"
	"fvsweep/worker/external"
)

// muscl builds the C example with the system compiler next to a copy of
// its manifest, or skips.
func muscl(t *testing.T) *manifest.Manifest {
	t.Helper()
	cc, err := exec.LookPath("cc")
	if err != nil {
		if cc, err = exec.LookPath("gcc"); err != nil {
			t.Skip("no C compiler (cc or gcc): the C example is not built")
		}
	}
	dir := t.TempDir()
	if out, err := exec.Command(cc, "-O2", "-o", filepath.Join(dir, "muscl"), filepath.Join("muscl-c", "muscl.c"), "-lm").CombinedOutput(); err != nil {
		t.Fatalf("%s muscl.c: %v\n%s", cc, err, out)
	}
	src, err := os.ReadFile(filepath.Join("muscl-c", "manifest.toml"))
	if err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(dir, "manifest.toml")
	if err := os.WriteFile(path, src, 0o644); err != nil {
		t.Fatal(err)
	}
	m, err := spec.LoadManifest(path)
	if err != nil {
		t.Fatal(err)
	}
	return m
}

// rusanov loads the Python example with an interpreter that has NumPy.
// Without one it skips the test, or fails it where CI=true: .ci/run
// installs python3-numpy, so there a missing NumPy is a broken setup whose
// skip would hide the check.
func rusanov(t *testing.T) *manifest.Manifest {
	t.Helper()
	py := fieldtest.NumPyPython(t, "the Python example is not run")
	m, err := spec.LoadManifest(filepath.Join("rusanov-py", "manifest.toml"))
	if err != nil {
		t.Fatal(err)
	}
	m.Command[0] = py
	return m
}

// as returns a copy of m for equation eq.
func as(t *testing.T, m *manifest.Manifest, eq string) *manifest.Manifest {
	c := *m
	c.Equation, c.Variables = eq, nil
	if eq == manifest.Euler {
		c.Variables = m.Variables
	}
	if err := c.Check(); err != nil {
		t.Fatal(err)
	}
	return &c
}

// l1 runs case name on each nx (with the extra settings kv) and returns
// the L1 errors of variable v.
func l1(t *testing.T, m *manifest.Manifest, name, v string, nxs []int, kv map[string]string) []float64 {
	t.Helper()
	r, err := external.New(m)
	if err != nil {
		t.Fatal(err)
	}
	var out []float64
	for _, nx := range nxs {
		p := map[string]string{"nx": fmt.Sprint(nx)}
		for k, x := range kv {
			p[k] = x
		}
		if _, ok := kv["ny"]; !ok {
			p["ny"] = fmt.Sprint(nx)
		}
		run, err := outside.Resolve(m, name, p)
		if err != nil {
			t.Fatal(err)
		}
		res, err := r.Run(context.Background(), job.Job{ID: run.ID(), Case: name, Solver: m.Name, Params: p})
		if err != nil {
			t.Fatal(err)
		}
		if res.Outcome.Status != job.StatusDone {
			t.Fatalf("%s %s nx=%d: %s", m.Name, name, nx, res.Outcome.Error)
		}
		out = append(out, res.Outcome.Errors[v].L1)
	}
	return out
}

// order is the observed order of the finest pair (grids halving h).
func order(e []float64) float64 {
	n := len(e)
	h := make([]float64, n)
	for i := range h {
		h[i] = math.Pow(0.5, float64(i))
	}
	p := verify.ObservedOrders(h, e)
	return p[len(p)-1]
}

// Observed L1 orders on the finest pair of grids halving h, against the
// design order on smooth solutions (docs/references.md §6, common
// practice): first order 1 ± 0.15 (§6, short grid sequences); second order
// on the vortex in the band [1.85, 2.6] of §4, on the smooth Burgers wave
// 2 ± 0.15 (§6). Shock tubes with a contact and a shock land between 2/3
// and 1 (§6), tolerance 0.15. The shock-tube errors are compared with
// those of the same published method as fv2d implements it (independently
// written): within 10 % for the first-order Rusanov scheme, whose update
// and time step are the same, and 25 % for MUSCL-Hancock, whose HLL wave
// speeds differ (Davis here, Einfeldt in fv2d).
func TestExampleOrders(t *testing.T) {
	vortex := map[string]string{"t_end": "1"}
	for _, tc := range []struct {
		name     string
		m        func(*testing.T) *manifest.Manifest
		design   float64
		lo, hi   float64 // vortex band
		nxs      []int
		fv2d     map[string]string // the same method in fv2d
		ratioTol float64
	}{
		{"muscl-c", muscl, 2, 1.85, 2.6, []int{32, 64, 128},
			map[string]string{"scheme": "muscl", "flux": "hll", "limiter": "vanleer", "split": "strang"}, 0.25},
		{"rusanov-py", rusanov, 1, 0.85, 1.15, []int{64, 128, 256},
			map[string]string{"scheme": "godunov", "flux": "rusanov", "split": "lie"}, 0.10},
	} {
		t.Run(tc.name, func(t *testing.T) {
			m := tc.m(t)
			e := l1(t, m, "vortex", "rho", tc.nxs, vortex)
			p := order(e)
			t.Logf("vortex rho L1 %.3g, order %.3f", e, p)
			if p < tc.lo || p > tc.hi {
				t.Errorf("vortex: order %.3f, want within [%g, %g]", p, tc.lo, tc.hi)
			}
			b := as(t, m, manifest.Burgers)
			e = l1(t, b, "burgers-sine", "u", tc.nxs, map[string]string{"ny": "4"})
			p = order(e)
			t.Logf("burgers-sine u L1 %.3g, order %.3f", e, p)
			if math.Abs(p-tc.design) > 0.15 {
				t.Errorf("burgers-sine: order %.3f, design %g ± 0.15", p, tc.design)
			}
			e = l1(t, m, "shocktube", "rho", []int{100, 200, 400}, map[string]string{"ny": "2", "test": "1"})
			p = order(e)
			t.Logf("sod rho L1 %.3g, order %.3f", e, p)
			if p < 2.0/3-0.15 || p > 1+0.15 {
				t.Errorf("sod: order %.3f, want within [2/3, 1] ± 0.15", p)
			}
			kv := map[string]string{"nx": "400", "ny": "2", "test": "1"}
			for k, v := range tc.fv2d {
				kv[k] = v
			}
			v, err := fv2d.Resolve("shocktube", kv)
			if err != nil {
				t.Fatal(err)
			}
			own, err := fv2d.Run(context.Background(), v)
			if err != nil {
				t.Fatal(err)
			}
			ratio := e[2] / own.Errors["rho"].L1
			t.Logf("sod rho L1 at 400 cells: %.4g, fv2d %.4g, ratio %.3f", e[2], own.Errors["rho"].L1, ratio)
			if math.Abs(ratio-1) > tc.ratioTol {
				t.Errorf("sod: L1 %.4g is %.3f times fv2d's %.4g with the same method, want within %g", e[2], ratio, own.Errors["rho"].L1, tc.ratioTol)
			}
		})
	}
}
