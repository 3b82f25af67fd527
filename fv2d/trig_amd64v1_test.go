//go:build amd64 && !amd64.v3

package fv2d

import (
	"math"
	"testing"
)

// TestTrigBitsStd: on amd64 below GOAMD64=v3 Go's math.Sin and math.Cos
// make no fused multiply-adds, and sine and cosine follow the same method
// step for step, so they must give the same bits: the cases' initial data
// are unchanged by the switch to them.
func TestTrigBitsStd(t *testing.T) {
	for _, x := range trigArgs() {
		s, c := sincos(x)
		if math.Float64bits(s) != math.Float64bits(math.Sin(x)) || math.Float64bits(c) != math.Float64bits(math.Cos(x)) {
			t.Errorf("sincos(%v) = %v, %v; math %v, %v", x, s, c, math.Sin(x), math.Cos(x))
		}
	}
}
