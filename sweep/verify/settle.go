package verify

import (
	"fmt"
	"math"
	"slices"
)

// States of a Settling: what a study that may add grids does with a group.
const (
	SettleWaiting  = "waiting"     // a grid of the group has no result yet
	SettleStopped  = "stopped"     // a grid failed or has no usable error: no grid is added
	SettleSettled  = "settled"     // the finest orders agree: no grid is needed
	SettleExtend   = "extend"      // not settled: add the grid Next
	SettleExceeded = "not-settled" // not settled, and the next grid is beyond the limit
)

// SettleRule is when a group's observed order counts as settled and how far
// grids may be added: the two finest pairs' orders agree within Tol, and the
// order verdict (VerdictBand with Design, Tol and TolHi; skipped when Design
// is not positive) is not pre-asymptotic. Grids are added up to ExtendTo on
// the refinement axis.
type SettleRule struct {
	Design, Tol, TolHi float64
	ExtendTo           int
}

// GridResult is one grid of a group: its size on the refinement axis, its
// spacing and the error judged. Pending is set while it has no result; a
// result without a positive finite error (a failed run) stops the group.
type GridResult struct {
	N       int
	H, Err  float64
	Pending bool
}

// Settling is the judgement of Settle.
type Settling struct {
	State string `json:"state"`
	// At is the finest grid judged (settled at, or not settled by); Next
	// the grid to add (State SettleExtend), else 0.
	At   int `json:"at"`
	Next int `json:"next,omitempty"`
	// Finest and Previous are the observed orders of the finest pair and of
	// the pair before it (0 where the group has too few grids).
	Finest   float64 `json:"finest"`
	Previous float64 `json:"previous"`
	Reason   string  `json:"reason"`
}

// NextGrid returns the grid after the sequence n (sorted coarse to fine, at
// least two): the finest times the ratio of the last pair, rounded,
// round(n_k^2 / n_{k-1}). It is always larger than n_k. It returns 0 for
// fewer than two grids or a sequence that does not grow at its end.
func NextGrid(n []int) int {
	k := len(n)
	if k < 2 || n[k-2] <= 0 || n[k-1] <= n[k-2] {
		return 0
	}
	last := float64(n[k-1])
	next := math.Round(last * last / float64(n[k-2]))
	if next > math.MaxInt32 {
		return 0
	}
	return int(next)
}

// Settle judges whether the observed order of a group of grids has settled
// and, when it has not, which grid to add. The grids may come in any order;
// they are sorted by N. A pending grid gives SettleWaiting, a grid without a
// usable error SettleStopped. With two grids there is one order and nothing
// to compare it with, so the group is not settled. Otherwise it is settled
// when |p_finest - p_previous| <= rule.Tol and the verdict is not
// pre-asymptotic. A group that is not settled gets SettleExtend with Next =
// NextGrid of its grids when that is at most rule.ExtendTo, else
// SettleExceeded.
func Settle(grids []GridResult, rule SettleRule) Settling {
	gs := slices.Clone(grids)
	slices.SortFunc(gs, func(a, b GridResult) int { return a.N - b.N })
	s := Settling{}
	if len(gs) > 0 {
		s.At = gs[len(gs)-1].N
	}
	n := make([]int, len(gs))
	h := make([]float64, len(gs))
	e := make([]float64, len(gs))
	for i, g := range gs {
		if g.Pending {
			s.State, s.Reason = SettleWaiting, fmt.Sprintf("grid %d has no result yet", g.N)
			return s
		}
		if !positive(g.Err) || !positive(g.H) {
			s.State, s.Reason = SettleStopped, fmt.Sprintf("grid %d has no usable error", g.N)
			return s
		}
		n[i], h[i], e[i] = g.N, g.H, g.Err
	}
	if len(gs) < 2 {
		s.State, s.Reason = SettleStopped, "fewer than two grids"
		return s
	}
	p := ObservedOrders(h, e)
	s.Finest = p[len(p)-1]
	var why string
	switch {
	case math.IsNaN(s.Finest):
		s.Finest = 0
		s.State, s.Reason = SettleStopped, "the finest pair has no order"
		return s
	case len(p) < 2:
		why = fmt.Sprintf("one order (%.2f), nothing to compare it with", s.Finest)
	default:
		s.Previous = p[len(p)-2]
		if math.IsNaN(s.Previous) {
			s.Previous = 0
			why = "the pair before the finest has no order"
		} else if d := math.Abs(s.Finest - s.Previous); d > rule.Tol {
			why = fmt.Sprintf("order %.2f after %.2f: they differ by %.2f, more than %g", s.Finest, s.Previous, d, rule.Tol)
		} else if rule.Design > 0 {
			if v := VerdictBand(h, e, rule.Design, rule.Tol, rule.TolHi); v.Status == StatusPreAsymptotic {
				why = fmt.Sprintf("order %.2f after %.2f, but the fit over all grids gives %.2f (pre-asymptotic)",
					s.Finest, s.Previous, v.Fitted)
			}
		}
	}
	if why == "" {
		s.State = SettleSettled
		s.Reason = fmt.Sprintf("order %.2f after %.2f: within %g", s.Finest, s.Previous, rule.Tol)
		return s
	}
	s.Reason = why
	if next := NextGrid(n); next > 0 && next <= rule.ExtendTo {
		s.State, s.Next = SettleExtend, next
		return s
	}
	s.State = SettleExceeded
	return s
}

// Text is the settling in words: "settled at nx = 256", "not settled by nx =
// 1024", "adding nx = 512", "waiting for ...", for the refinement axis axis.
func (s Settling) Text(axis string) string {
	switch s.State {
	case SettleSettled:
		return fmt.Sprintf("settled at %s = %d", axis, s.At)
	case SettleExceeded:
		return fmt.Sprintf("not settled by %s = %d (%s)", axis, s.At, s.Reason)
	case SettleExtend:
		return fmt.Sprintf("not settled yet, adding %s = %d (%s)", axis, s.Next, s.Reason)
	case SettleWaiting:
		return "settling waits: " + s.Reason
	}
	return "grids added no further: " + s.Reason
}
