package fv2d

import (
	"math"
	"sort"
)

// Products that meet an addition are written float64(x*y): an explicit
// conversion rounds, so the compiler cannot fuse them into one FMA (Go spec,
// "Arithmetic operators"), which would give other bits under GOAMD64=v3 or
// on arm64 than on the default build (docs/speed.md, "The same bits").

// Cell averages of exact solutions with known discontinuities.
//
// A Gauss-Legendre rule converges fast on a smooth integrand but only at
// first order on one that jumps inside the cell: a cell holding a shock,
// contact or fan edge gets a reference that is off by up to the jump times
// the distance from the discontinuity to the nearest node. When the problem
// names the lines where its exact solution is not smooth (Problem.Breaks),
// each cell is cut at them and every smooth piece is integrated on its own,
// to round-off.

// Tolerances of the piecewise averages: on each piece the tensor
// Gauss-Legendre rule of n points per direction is compared with the rule of
// 2n points, n starting at the quad parameter (at least 2), and the finer
// estimate is taken once the two agree to breakTol times the largest value
// of the integrand on the piece. On a smooth piece the error of the finer
// estimate is then far below breakTol; 1e-13 stays above the round-off of a
// 64^2-point sum (about sqrt(4096) ulps). breakMaxN bounds n: a piece that
// has not converged by then (an Exact with a kink Breaks does not list) keeps
// its last estimate.
const (
	breakTol  = 1e-13
	breakMaxN = 64
)

// splitRule holds the Gauss-Legendre rules n0, 2 n0, ... <= breakMaxN used
// on the pieces, and the scratch space of one goroutine.
type splitRule struct {
	x, w         [][]float64 // nodes and weights on [-1, 1], one rule per level
	prim         func(x, y float64, w []float64)
	eq           Equation
	gamma        float64
	pw, c        []float64 // primitive and conserved state at a node
	prev, cur    []float64 // estimates of two successive levels
	scale, piece []float64
	xc, yc       []float64 // cuts of the current cell
}

func newSplitRule(s *State, n0 int, prim func(x, y float64, w []float64)) *splitRule {
	nv := len(s.U)
	r := &splitRule{prim: prim, eq: s.Eq, gamma: s.Gamma}
	for n := max(n0, 2); n <= breakMaxN || len(r.x) < 2; n *= 2 {
		x, w := gaussLegendre(n)
		r.x, r.w = append(r.x, x), append(r.w, w)
	}
	r.pw, r.c = make([]float64, len(s.Eq.PrimVars())), make([]float64, nv)
	r.prev, r.cur = make([]float64, nv), make([]float64, nv)
	r.scale, r.piece = make([]float64, nv), make([]float64, nv)
	return r
}

// estimate writes into avg the average over [a,b]x[c,d] of the conserved
// variables by the tensor rule of level l, and into scale the largest
// magnitude of each at the nodes.
func (r *splitRule) estimate(l int, a, b, c, d float64, avg, scale []float64) {
	for k := range avg {
		avg[k], scale[k] = 0, 0
	}
	gx, gw := r.x[l], r.w[l]
	for j := range gx {
		y := c + float64(0.5*(d-c)*(1+gx[j]))
		for i := range gx {
			r.prim(a+float64(0.5*(b-a)*(1+gx[i])), y, r.pw)
			toConserved(r.eq, r.gamma, r.pw, r.c)
			wt := 0.25 * gw[i] * gw[j]
			for k, v := range r.c {
				avg[k] += float64(wt * v)
				scale[k] = math.Max(scale[k], math.Abs(v))
			}
		}
	}
}

// average writes into avg the average over [a,b]x[c,d] of the conserved
// variables of prim, which must be smooth there: the rules of levels 0, 1,
// ... until two successive estimates agree to breakTol (see above).
func (r *splitRule) average(a, b, c, d float64, avg []float64) {
	r.estimate(0, a, b, c, d, r.prev, r.scale)
	for l := 1; l < len(r.x); l++ {
		r.estimate(l, a, b, c, d, r.cur, r.scale)
		done := true
		for k := range r.cur {
			if !(math.Abs(r.cur[k]-r.prev[k]) <= breakTol*r.scale[k]) {
				done = false
				break
			}
		}
		r.prev, r.cur = r.cur, r.prev
		if done {
			break
		}
	}
	copy(avg, r.prev)
}

// cuts appends to dst lo, the breaks strictly inside (lo, hi) in increasing
// order (breaks must be sorted), and hi.
func cuts(dst []float64, lo, hi float64, breaks []float64) []float64 {
	dst = append(dst[:0], lo)
	for i := sort.SearchFloat64s(breaks, lo); i < len(breaks) && breaks[i] < hi; i++ {
		if breaks[i] > lo {
			dst = append(dst, breaks[i])
		}
	}
	return append(dst, hi)
}

// splitAverages writes into s the cell averages of the conserved variables
// of the primitive field prim, which is smooth between the lines x = xs[k]
// and y = ys[k] (sorted, increasing): each cell is cut at the lines that
// cross it, and each piece is integrated by average, starting from n0
// Gauss-Legendre points per direction. It runs the rows of the grid on up to
// threads goroutines; the result does not depend on threads.
func splitAverages(s *State, xs, ys []float64, n0, threads int, prim func(x, y float64, w []float64)) {
	parallelRows(s.NY, threads, func(j0, j1 int) {
		r := newSplitRule(s, n0, prim)
		acc := make([]float64, len(s.U))
		for j := j0; j < j1; j++ {
			y0 := s.Y0 + float64(float64(j)*s.DY)
			r.yc = cuts(r.yc, y0, y0+s.DY, ys)
			for i := 0; i < s.NX; i++ {
				x0 := s.X0 + float64(float64(i)*s.DX)
				r.xc = cuts(r.xc, x0, x0+s.DX, xs)
				for k := range acc {
					acc[k] = 0
				}
				for q := 1; q < len(r.yc); q++ {
					c, d := r.yc[q-1], r.yc[q]
					for p := 1; p < len(r.xc); p++ {
						a, b := r.xc[p-1], r.xc[p]
						r.average(a, b, c, d, r.piece)
						f := (b - a) / s.DX * (d - c) / s.DY
						for k, v := range r.piece {
							acc[k] += float64(f * v)
						}
					}
				}
				idx := s.Index(i, j)
				for k, v := range acc {
					s.U[k][idx] = v
				}
			}
		}
	})
}

// sortedBreaks returns a sorted copy of b.
func sortedBreaks(b []float64) []float64 {
	b = append([]float64(nil), b...)
	sort.Float64s(b)
	return b
}
