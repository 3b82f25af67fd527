package main

import (
	"encoding/json"
	"encoding/xml"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"fvsweep/sweep/gate"
)

// A Burgers sine wave before it breaks: godunov converges at order 1 and
// muscl at 2 (common practice, docs/references.md §6), so both groups pass
// the design orders of their schemes.
const gateSpec = `name = "gate-cli"
[[study]]
label = "sine"
case = "burgers-sine"
fixed = { ny = 1, t_end = 0.1 }
axes = { scheme = ["godunov", "muscl"] }
refine = { nx = [64, 128, 256] }
order_tol_high = 0.6
error_growth_tol = 0
order_drop_tol = 0
`

// The same first-order runs, in a study that claims design order 2: a
// deliberate mismatch in the spec, which the gate must catch.
const gateMismatch = gateSpec + `
[[study]]
label = "claims two"
case = "burgers-sine"
fixed = { ny = 1, t_end = 0.1, scheme = "godunov", flux = "rusanov" }
refine = { nx = [64, 128, 256] }
design_order = 2
`

func writeFile(t *testing.T, dir, name, src string) string {
	t.Helper()
	p := filepath.Join(dir, name)
	if err := os.WriteFile(p, []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

func TestGatePassBaselineAndReports(t *testing.T) {
	dir := t.TempDir()
	spec := writeFile(t, dir, "gate.toml", gateSpec)
	data, base := filepath.Join(dir, "data"), filepath.Join(dir, "base.json")
	junit, md := filepath.Join(dir, "gate.xml"), filepath.Join(dir, "gate.md")
	code, out := capture(t, func() int {
		return runGate([]string{spec, "--data", data, "--log-level", "warn", "--write-baseline", base,
			"--junit", junit, "--markdown", md, "--", "--workers", "1"})
	})
	if code != gate.ExitPass || !strings.Contains(out, "gate gate-cli: 2 groups, 2 passed, 0 failed: PASS") {
		t.Fatalf("gate: exit %d\n%s", code, out)
	}
	b, err := os.ReadFile(junit)
	if err != nil {
		t.Fatal(err)
	}
	var doc struct {
		Tests    int `xml:"tests,attr"`
		Failures int `xml:"failures,attr"`
	}
	if err := xml.Unmarshal(b, &doc); err != nil || doc.Tests != 2 || doc.Failures != 0 {
		t.Errorf("junit: %v, tests %d failures %d\n%s", err, doc.Tests, doc.Failures, b)
	}
	if b, _ := os.ReadFile(md); !strings.Contains(string(b), ": PASS") {
		t.Errorf("markdown:\n%s", b)
	}

	// The same results against their own baseline, tolerance 0: pass.
	code, out = capture(t, func() int {
		return runGate([]string{spec, "--data", data, "--judge-only", "--baseline", base})
	})
	if code != gate.ExitPass {
		t.Fatalf("judge against own baseline: exit %d\n%s", code, out)
	}

	// A baseline whose error is smaller than the run's fails the
	// comparison, with both numbers in the message.
	var bl gate.Baseline
	raw, err := os.ReadFile(base)
	if err != nil || json.Unmarshal(raw, &bl) != nil || len(bl.Groups) != 2 {
		t.Fatalf("baseline file: %v\n%s", err, raw)
	}
	g := &bl.Groups[1].Grids[2]
	runErr := g.Error
	g.Error = runErr / 2
	edited, _ := json.Marshal(bl)
	smaller := writeFile(t, dir, "smaller.json", string(edited))
	code, out = capture(t, func() int {
		return runGate([]string{spec, "--data", data, "--judge-only", "--baseline", smaller})
	})
	want := "l1 error " + strconv.FormatFloat(runErr, 'g', -1, 64) + " > baseline " + strconv.FormatFloat(runErr/2, 'g', -1, 64)
	if code != gate.ExitBaseline || !strings.Contains(out, "FAIL  sine / scheme=muscl") || !strings.Contains(out, want) {
		t.Errorf("smaller baseline: exit %d, want %d and %q\n%s", code, gate.ExitBaseline, want, out)
	}
}

func TestGateOrderLow(t *testing.T) {
	dir := t.TempDir()
	spec := writeFile(t, dir, "gate.toml", gateMismatch)
	junit := filepath.Join(dir, "gate.xml")
	code, out := capture(t, func() int {
		return runGate([]string{spec, "--log-level", "warn", "--junit", junit, "--", "--workers", "1"})
	})
	if code != gate.ExitOrderLow {
		t.Fatalf("exit %d, want %d (order-low)\n%s", code, gate.ExitOrderLow, out)
	}
	for _, want := range []string{"FAIL  claims two / burgers-sine  order-low", "design 2",
		"gate gate-cli: 3 groups, 2 passed, 1 failed: FAIL (exit 11, order-low)"} {
		if !strings.Contains(out, want) {
			t.Errorf("output lacks %q\n%s", want, out)
		}
	}
	b, err := os.ReadFile(junit)
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(b), `<failure message="order-low: finest-pair order`) || !strings.Contains(string(b), `classname="gate-cli.claims_two"`) {
		t.Errorf("junit:\n%s", b)
	}
}

func TestGateToolErrors(t *testing.T) {
	dir := t.TempDir()
	bad := writeFile(t, dir, "bad.toml", "name = \"x\"\n[[study]]\ncase = \"nope\"\n")
	good := writeFile(t, dir, "good.toml", gateSpec)
	for _, tc := range []struct {
		name string
		args []string
		want int
	}{
		{"bad spec", []string{bad}, gate.ExitError},
		{"no stored sweep", []string{good, "--judge-only", "--data", filepath.Join(dir, "empty")}, gate.ExitError},
		{"missing baseline", []string{good, "--baseline", filepath.Join(dir, "none.json")}, gate.ExitError},
		{"bad flag", []string{good, "--bogus"}, gate.ExitUsage},
		{"judge-only with run flags", []string{good, "--judge-only", "--", "--workers", "2"}, gate.ExitUsage},
	} {
		code, out := capture(t, func() int { return runGate(tc.args) })
		if code != tc.want {
			t.Errorf("%s: exit %d, want %d\n%s", tc.name, code, tc.want, out)
		}
	}
}

func TestPassOn(t *testing.T) {
	got := passOn([]string{"s.toml", "--baseline", "b.json", "--data=d", "--junit=j.xml", "-judge-only", "--log-level", "warn", "--markdown", "-"})
	want := []string{"s.toml", "--data=d", "--log-level", "warn"}
	if strings.Join(got, " ") != strings.Join(want, " ") {
		t.Errorf("passOn = %q, want %q", got, want)
	}
}
