package main

import (
	"bytes"
	"strings"
	"testing"
)

func TestPlanSaysWhatAddedGridsMayCost(t *testing.T) {
	path := writeSpec(t, `name = "plan-extend"
[[study]]
case = "vortex"
fixed = { t_end = 0.5, scheme = "godunov" }
axes = { limiter = ["minmod", "mc"] }
refine = { nx = [16, 32], extend_to = 128 }
`)
	var out, errb bytes.Buffer
	if code := runPlan([]string{path}, &out, &errb); code != 0 {
		t.Fatalf("exit %d: %s", code, errb.String())
	}
	for _, want := range []string{"nx 64 128 while the order has not settled: at most 4 more jobs",
		"grids added until the order settles may cost at most 4 more jobs"} {
		if !strings.Contains(out.String(), want) {
			t.Errorf("plan lacks %q:\n%s", want, out.String())
		}
	}
	// A memory limit that the spec's grids fit and the added ones do not.
	out.Reset()
	errb.Reset()
	if code := runPlan([]string{path, "--mem-limit", "500KiB"}, &out, &errb); code != 1 ||
		!strings.Contains(errb.String(), "refine.extend_to: grid 128x128 that may be added needs") {
		t.Errorf("exit %d: %s", code, errb.String())
	}
}
