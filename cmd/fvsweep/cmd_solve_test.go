package main

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func runSolve(args ...string) (code int, stdout, stderr string) {
	var o, e bytes.Buffer
	code = solveMain(args, &o, &e)
	return code, o.String(), e.String()
}

func TestSolveJSON(t *testing.T) {
	code, out, errs := runSolve("vortex", "-p", "nx=16", "-p", "ny=16", "-p", "t_end=0.1", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var m map[string]any
	if err := json.Unmarshal([]byte(out), &m); err != nil {
		t.Fatalf("%v\n%s", err, out)
	}
	for _, k := range []string{"case", "params", "nx", "ny", "steps", "t_final", "wall_s", "cell_updates_per_s", "totals", "errors", "functionals"} {
		if _, ok := m[k]; !ok {
			t.Errorf("JSON lacks %q", k)
		}
	}
	rho := m["totals"].(map[string]any)["rho"].(map[string]any)
	if _, ok := rho["initial"]; !ok {
		t.Errorf("totals.rho lacks initial: %v", rho)
	}
	if e := m["errors"].(map[string]any)["E"].(map[string]any); e["l1"] == nil || e["l2"] == nil || e["linf"] == nil {
		t.Errorf("errors.E = %v", e)
	}
	if m["t_final"].(float64) != 0.1 || m["params"].(map[string]any)["cfl"] != "0.8" {
		t.Errorf("t_final %v, params %v", m["t_final"], m["params"])
	}
}

func TestSolveTextAndDump(t *testing.T) {
	path := filepath.Join(t.TempDir(), "u.csv")
	code, out, errs := runSolve("burgers-sine", "-p", "nx=8", "-p", "ny=2", "--dump", path)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errs)
	}
	for _, want := range []string{"case        burgers-sine", "L1", "energy"} {
		if !strings.Contains(out, want) {
			t.Errorf("text report lacks %q:\n%s", want, out)
		}
	}
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(string(b)), "\n")
	if lines[0] != "x,y,u" || len(lines) != 1+8*2 {
		t.Errorf("dump: header %q, %d lines", lines[0], len(lines))
	}
	code, out, _ = runSolve("quadrants", "-p", "nx=8", "-p", "ny=8", "--dump", path)
	b, _ = os.ReadFile(path)
	if code != 0 || !strings.HasPrefix(string(b), "x,y,rho,u,v,p\n") {
		t.Errorf("euler dump header: %q", strings.SplitN(string(b), "\n", 2)[0])
	}
	if !strings.Contains(out, "none: no exact solution") || strings.Contains(out, "Linf") {
		t.Errorf("a case without exact solution should say so, not print errors:\n%s", out)
	}
}

// Bad input gets one line on stderr naming it and a non-zero exit.
func TestSolveErrors(t *testing.T) {
	for _, tc := range []struct {
		args []string
		want string
	}{
		{[]string{"nosuch"}, `unknown case "nosuch"`},
		{[]string{"vortex", "-p", "speed=3"}, `unknown parameter "speed"`},
		{[]string{"vortex", "-p", "cfl=1.5"}, "parameter cfl: 1.5 out of range"},
		{[]string{"vortex", "-p", "cfl=0"}, "parameter cfl: 0 out of range"},
		{[]string{"vortex", "-p", "nx=3"}, "parameter nx: 3 out of range"},
		{[]string{"vortex", "-p", "gamma=1"}, "parameter gamma: 1 out of range"},
		{[]string{"vortex", "-p", "nx=ten"}, "parameter nx: \"ten\" is not an integer"},
		{[]string{"shocktube", "-p", "test=2", "-p", "rho_l=3"}, "set test=0"},
		{[]string{"burgers-sine", "-p", "t_end=1"}, "breaking time"},
		{[]string{"vortex", "-p", "nx=16", "-p", "ny=16", "-p", "max_steps=2"}, "step guard exceeded"},
		{[]string{"vortex", "-p", "nx=100000", "-p", "ny=100000"}, "over --mem-limit 8GiB"},
		{[]string{"vortex", "-p", "nx=64", "-p", "ny=64", "--mem-limit", "1KiB"}, "needs an estimated"},
		{[]string{"vortex", "--mem-limit", "lots"}, "--mem-limit: size"},
	} {
		code, _, errs := runSolve(tc.args...)
		if code == 0 || !strings.Contains(errs, tc.want) || strings.Count(strings.TrimSpace(errs), "\n") != 0 {
			t.Errorf("%v: exit %d, stderr %q, want one line with %q", tc.args, code, errs, tc.want)
		}
	}
}

func TestCasesList(t *testing.T) {
	var o, e bytes.Buffer
	if code := casesMain(nil, &o, &e); code != 0 {
		t.Fatalf("exit %d: %s", code, e.String())
	}
	for _, name := range []string{"shocktube", "vortex", "density-wave", "quadrants", "burgers-sine", "burgers-riemann", "burgers-diagonal", "cfl", "limiter"} {
		if !strings.Contains(o.String(), name) {
			t.Errorf("cases output lacks %q", name)
		}
	}
	o.Reset()
	if code := casesMain([]string{"shocktube"}, &o, &e); code != 0 || !strings.Contains(o.String(), "rho_l") || !strings.Contains(o.String(), "gamma") {
		t.Errorf("cases shocktube: exit %d\n%s", code, o.String())
	}
	if code := casesMain([]string{"nosuch"}, &o, &e); code == 0 {
		t.Error("unknown case accepted")
	}
}
