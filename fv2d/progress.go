package fv2d

import (
	"context"
	"math"
	"sync/atomic"
)

type progressKey struct{}

// WithProgress returns a copy of ctx that makes Run report how far it has
// got: after each step it stores in p the float64 bits of t/t_end, from 0
// to 1 (read with math.Float64frombits(p.Load())). Storing costs one atomic
// write per step and changes nothing of the run. Run stores t/t_end at
// the start once the case is set up, so a run that fails in its set-up
// stores nothing.
func WithProgress(ctx context.Context, p *atomic.Uint64) context.Context {
	return context.WithValue(ctx, progressKey{}, p)
}

// progressOf is the progress holder of ctx; nil for none.
func progressOf(ctx context.Context) *atomic.Uint64 {
	p, _ := ctx.Value(progressKey{}).(*atomic.Uint64)
	return p
}

// setProgress stores t/tEnd, at most 1, in p when p is not nil (and
// tEnd is positive).
func setProgress(p *atomic.Uint64, t, tEnd float64) {
	if p != nil && tEnd > 0 {
		p.Store(math.Float64bits(min(1, t/tEnd)))
	}
}
