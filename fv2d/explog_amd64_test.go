package fv2d

import (
	"math"
	"testing"

	"golang.org/x/sys/cpu"
)

// TestExpLogBitsStd: on amd64 with FMA, math.Exp takes its fused path
// (the condition of math's exp_amd64.go) and math.Log has no fused step;
// exponential, logarithm and power take the same steps, so they must give
// the same bits for normal arguments (independent library: Go's math), and
// the cases' initial data and the exact solver are unchanged by the switch.
func TestExpLogBitsStd(t *testing.T) {
	if !cpu.X86.HasAVX || !cpu.X86.HasFMA {
		t.Skip("math.Exp takes its path without FMA on this processor")
	}
	bad := 0
	check := func(name string, x, y, got, want float64) {
		t.Helper()
		if math.Float64bits(got) != math.Float64bits(want) {
			if bad++; bad <= 10 {
				t.Errorf("%s(%v, %v) = %v, math %v", name, x, y, got, want)
			}
		}
	}
	for _, x := range expArgs() {
		if x > 709.43 && x <= expMax { // math.Exp returns +Inf here, exponential the finite value (explog_test.go)
			continue
		}
		check("exp", x, 0, exponential(x), math.Exp(x))
	}
	for _, x := range logArgs() {
		check("log", x, 0, logarithm(x), math.Log(x))
	}
	for _, xy := range powArgs() {
		check("pow", xy[0], xy[1], power(xy[0], xy[1]), math.Pow(xy[0], xy[1]))
	}
	if bad > 0 {
		t.Errorf("%d arguments differ", bad)
	}
}
