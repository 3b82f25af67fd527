package verify

import (
	"math"
	"strings"
	"testing"
)

// grids makes the GridResults of grids n with errors e(h), h = 1/n.
func grids(n []int, e func(h float64) float64) []GridResult {
	out := make([]GridResult, len(n))
	for i, k := range n {
		h := 1 / float64(k)
		out[i] = GridResult{N: k, H: h, Err: e(h)}
	}
	return out
}

func TestNextGrid(t *testing.T) {
	// The next grid keeps the ratio of the last pair: n_k * (n_k / n_{k-1})
	// (the refinement ratio of Celik et al. 2008, held constant).
	for _, c := range []struct {
		n    []int
		want int
	}{
		{[]int{32, 64}, 128},
		{[]int{32, 64, 128}, 256},
		{[]int{100, 150}, 225},
		{[]int{100, 150, 225}, 338}, // 225 * 1.5 = 337.5, rounded half away from zero
		{[]int{100, 101}, 102},
		{[]int{64}, 0},
		{[]int{64, 64}, 0},
		{[]int{128, 64}, 0},
	} {
		if got := NextGrid(c.n); got != c.want {
			t.Errorf("NextGrid(%v) = %d, want %d", c.n, got, c.want)
		}
	}
}

func TestSettle(t *testing.T) {
	rule := SettleRule{Design: 1, Tol: 0.15, TolHi: 0.15, ExtendTo: 1024}
	// Exact power law e = C h: every pair's order is 1 (the definition of
	// the observed order, common practice): settled at the finest grid.
	s := Settle(grids([]int{32, 64, 128}, func(h float64) float64 { return 3 * h }), rule)
	if s.State != SettleSettled || s.At != 128 || math.Abs(s.Finest-1) > 1e-12 || math.Abs(s.Previous-1) > 1e-12 {
		t.Errorf("power law: %+v", s)
	}
	if got := s.Text("nx"); got != "settled at nx = 128" {
		t.Errorf("text %q", got)
	}

	// e = h + 20 h^2 on 8, 16, 32: the pair orders are 1.64 and 1.47 (by
	// hand: ln(e(1/8)/e(1/16))/ln 2 = ln(0.4375/0.140625)/ln 2 and the
	// next), apart by 0.17 > 0.15.
	mixed := func(h float64) float64 { return h + 20*h*h }
	s = Settle(grids([]int{8, 16, 32}, mixed), rule)
	if s.State != SettleExtend || s.Next != 64 || !strings.Contains(s.Reason, "more than 0.15") {
		t.Errorf("mixed: %+v", s)
	}
	// Refined on, the h^2 term fades and the orders settle towards 1: the
	// pairs up to 128 give 1.31 then 1.18 (within 0.15 of each other), but
	// 1.18 is off the design order 1 and the fit over 8..128 is
	// further than 0.15 from it (1.40), so the verdict is pre-asymptotic; 256
	// brings 1.10, a pass.
	n := []int{8, 16, 32}
	for s.State == SettleExtend {
		n = append(n, s.Next)
		s = Settle(grids(n, mixed), rule)
	}
	if s.State != SettleSettled || s.At != 256 || len(n) != 6 {
		t.Errorf("mixed, refined: %+v on %v", s, n)
	}

	// The same data with a limit below the next grid: not settled by the
	// finest grid there is.
	s = Settle(grids([]int{8, 16, 32}, mixed), SettleRule{Design: 1, Tol: 0.15, TolHi: 0.15, ExtendTo: 63})
	if s.State != SettleExceeded || s.At != 32 || s.Next != 0 {
		t.Errorf("limit: %+v", s)
	}
	if got := s.Text("nx"); !strings.HasPrefix(got, "not settled by nx = 32 (") {
		t.Errorf("text %q", got)
	}

	// Two grids: one order, nothing to compare it with.
	s = Settle(grids([]int{32, 64}, func(h float64) float64 { return h }), rule)
	if s.State != SettleExtend || s.Next != 128 {
		t.Errorf("two grids: %+v", s)
	}

	// Order of the input does not matter; a pending grid waits, a failed
	// one stops.
	g := grids([]int{128, 32, 64}, func(h float64) float64 { return 3 * h })
	if s := Settle(g, rule); s.State != SettleSettled || s.At != 128 {
		t.Errorf("unsorted: %+v", s)
	}
	g[0].Pending = true
	if s := Settle(g, rule); s.State != SettleWaiting {
		t.Errorf("pending: %+v", s)
	}
	g[0].Pending, g[0].Err = false, math.NaN()
	if s := Settle(g, rule); s.State != SettleStopped {
		t.Errorf("failed: %+v", s)
	}
}

func TestSettlePreAsymptoticVerdict(t *testing.T) {
	// Pairs that agree with each other (0.60, 0.66 on the finest) while the
	// fit over all grids is far below them (0.39, the least-squares slope computed outside the project): e = h^p with p rising from
	// 0.1 to 0.66 over five grids. The verdict calls it pre-asymptotic
	// (Verdict, finest pair against the fit), so the group is not settled.
	n := []int{8, 16, 32, 64, 128}
	orders := []float64{0.1, 0.2, 0.60, 0.66}
	e := []float64{1}
	for _, p := range orders {
		e = append(e, e[len(e)-1]/math.Pow(2, p))
	}
	g := make([]GridResult, len(n))
	for i := range n {
		g[i] = GridResult{N: n[i], H: 1 / float64(n[i]), Err: e[i]}
	}
	rule := SettleRule{Design: 1, Tol: 0.15, TolHi: 0.15, ExtendTo: 512}
	s := Settle(g, rule)
	if s.State != SettleExtend || s.Next != 256 || !strings.Contains(s.Reason, "pre-asymptotic") {
		t.Errorf("%+v", s)
	}
	// Without a design order only the pairs count: settled.
	rule.Design = 0
	if s := Settle(g, rule); s.State != SettleSettled {
		t.Errorf("no design: %+v", s)
	}
}
