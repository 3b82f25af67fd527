package fv2d

import "testing"

func TestParamCheck(t *testing.T) {
	cfl := Param{Name: "cfl", Kind: Float, Min: 0, Max: 1, MinOpen: true}
	nx := Param{Name: "nx", Kind: Int, Min: 4, Max: Unbounded}
	lim := Param{Name: "limiter", Kind: Choice, Choices: []string{"minmod", "mc"}}
	for _, tc := range []struct {
		p    Param
		in   string
		good bool
	}{
		{cfl, "0.9", true}, {cfl, "1", true}, {cfl, "0", false}, {cfl, "1.01", false},
		{cfl, "NaN", false}, {cfl, "Inf", false}, {cfl, "fast", false},
		{nx, "4", true}, {nx, "3", false}, {nx, "4.5", false},
		{lim, "mc", true}, {lim, "MC", false},
	} {
		err := tc.p.Check(tc.in)
		if (err == nil) != tc.good {
			t.Errorf("%s=%q: err=%v, want ok=%v", tc.p.Name, tc.in, err, tc.good)
		}
	}
	if got := (Param{Kind: Float}).Canon("5e-1"); got != "0.5" {
		t.Errorf("Canon(5e-1) = %q", got)
	}
}
