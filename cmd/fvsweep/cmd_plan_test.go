package main

import (
	"bytes"
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

const planTestSpec = `name = "plan-test"

[[study]]
label = "order"
case = "vortex"
fixed = { t_end = 0.5 }
axes = { limiter = ["minmod", "mc"] }
together = [{ flux = ["hll", "hllc"], cfl = [0.5, 0.9] }]
refine = { nx = [16, 32] }

[[study]]
case = "vortex"
fixed = { t_end = 0.5, limiter = "mc", flux = "hll", cfl = 0.5, nx = 32, ny = 32 }
`

func writeSpec(t *testing.T, src string) string {
	t.Helper()
	path := filepath.Join(t.TempDir(), "spec.toml")
	if err := os.WriteFile(path, []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

func TestPlanText(t *testing.T) {
	path := writeSpec(t, planTestSpec)
	var out, errb bytes.Buffer
	if code := runPlan([]string{path}, &out, &errb); code != 0 {
		t.Fatalf("exit %d: %s", code, errb.String())
	}
	text := out.String()
	for _, want := range []string{
		"sweep plan-test (" + path + "): 2 studies, 8 jobs",
		"study 1  order  (case vortex)",
		"crossed   limiter: minmod mc",
		"together  flux, cfl: (hll, 0.5) (hllc, 0.9)",
		"refine    nx: 16 32 (ny follows nx)",
		"runs      8 on 16x16 32x32",
		"1 runs are shared by two or more studies and run once: 9 runs, 8 jobs",
	} {
		if !strings.Contains(text, want) {
			t.Errorf("output lacks %q:\n%s", want, text)
		}
	}
}

func TestPlanJSON(t *testing.T) {
	path := writeSpec(t, planTestSpec)
	var out, errb bytes.Buffer
	if code := runPlan([]string{path, "--json"}, &out, &errb); code != 0 { // flag after SPEC
		t.Fatalf("exit %d: %s", code, errb.String())
	}
	// Field names match the JSON keys (encoding/json ignores case).
	type axis struct {
		Name   string
		Values []string
	}
	var doc struct {
		Sweep   string
		Runs    int
		Jobs    int
		Cost    float64
		Studies []struct {
			Runs     int
			Refine   string
			Grid     []axis
			Together [][]axis
			Grids    []string
			Fixed    map[string]string
			Var      string
			Cost     float64
			Share    float64
		}
	}
	if err := json.Unmarshal(out.Bytes(), &doc); err != nil {
		t.Fatalf("%v\n%s", err, out.String())
	}
	if doc.Sweep != "plan-test" || doc.Runs != 9 || doc.Jobs != 8 || len(doc.Studies) != 2 || doc.Cost <= 0 {
		t.Fatalf("doc = %+v", doc)
	}
	s1 := doc.Studies[0]
	if s1.Runs != 8 || s1.Refine != "nx" || len(s1.Grid) != 2 || len(s1.Together) != 1 || len(s1.Together[0]) != 2 ||
		strings.Join(s1.Grids, ",") != "16x16,32x32" || s1.Fixed["t_end"] != "0.5" || s1.Var != "rho" {
		t.Errorf("study 1 = %+v", s1)
	}
	share := doc.Studies[0].Share + doc.Studies[1].Share
	if math.Abs(share-1) > 1e-12 || doc.Studies[1].Cost >= s1.Cost {
		t.Errorf("shares %v (sum %v), costs %v %v", doc.Studies[0].Share, share, s1.Cost, doc.Studies[1].Cost)
	}
}

func TestPlanErrors(t *testing.T) {
	good := writeSpec(t, planTestSpec)
	bad := writeSpec(t, "name = \"x\"\n[[study]]\ncase = \"vortex\"\naxes = { limiter = [\"foo\"] }\n")
	tests := []struct {
		args []string
		code int
		msg  string
	}{
		{nil, 2, "fvsweep expand: missing SPEC (see fvsweep expand --help)"},
		{[]string{good, good}, 2, "unexpected argument"},
		{[]string{"--colour", good}, 2, "unknown flag --colour"},
		{[]string{bad}, 1, ":4: study 1: axes.limiter: \"foo\" is not one of"},
		{[]string{filepath.Join(t.TempDir(), "none.toml")}, 1, "no such file"},
		{[]string{good, "--job-limit", "5"}, 1, "expands to 9 jobs (this study 8), over the job limit of 5"},
		{[]string{good, "--job-limit", "0"}, 2, "--job-limit"},
		{[]string{good, "--mem-limit", "lots"}, 2, "--mem-limit"},
		{[]string{good, "--mem-limit", "1KiB"}, 1, "over the per-job limit of 1 KiB"},
	}
	for _, tc := range tests {
		var out, errb bytes.Buffer
		code := runPlan(tc.args, &out, &errb)
		if code != tc.code || !strings.Contains(errb.String(), tc.msg) {
			t.Errorf("expand %v: exit %d, stderr %q; want %d and %q", tc.args, code, errb.String(), tc.code, tc.msg)
		}
	}
	var out, errb bytes.Buffer
	if code := runPlan([]string{"-h"}, &out, &errb); code != 0 || !strings.Contains(out.String(), "usage: fvsweep expand SPEC") {
		t.Errorf("-h: exit %d, %q", code, out.String())
	}
}
