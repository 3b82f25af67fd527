package verify

import (
	"fmt"
	"math"
	"slices"
)

// Local observed orders: the order of accuracy cell by cell on nested grids,
// where each cell of a coarse grid is the union of r x r cells of the next
// finer one (r in each refined direction, 1 in a direction that is not
// refined). Cell averages on nested grids restrict exactly by averaging:
// the average over a coarse cell is the mean of the averages over the fine
// cells it holds, so a finer error or difference moved to the coarse grid
// this way is the error or difference of the coarse cell's average
// (common practice).

// Grid is a field of cell values on a uniform grid of NX x NY cells:
// V[j*NX+i] is cell (i, j), x running fastest. The caller owns V; the
// functions here only read it.
type Grid struct {
	NX, NY int
	V      []float64
}

func (g Grid) check(name string) error {
	switch {
	case g.NX < 1 || g.NY < 1:
		return fmt.Errorf("%s grid %dx%d is empty", name, g.NX, g.NY)
	case len(g.V) != g.NX*g.NY:
		return fmt.Errorf("%s grid: %d values for %dx%d cells", name, len(g.V), g.NX, g.NY)
	}
	return nil
}

// nestedRatio returns the refinement ratio r between a coarse grid and a
// fine one nested in it: fine.NX = rx coarse.NX, fine.NY = ry coarse.NY,
// each of rx, ry either 1 or the same r >= 2, at least one of them r.
func nestedRatio(coarse, fine Grid) (rx, ry, r int, err error) {
	if coarse.NX < 1 || coarse.NY < 1 || fine.NX%coarse.NX != 0 || fine.NY%coarse.NY != 0 {
		return 0, 0, 0, fmt.Errorf("grids %dx%d and %dx%d are not nested", coarse.NX, coarse.NY, fine.NX, fine.NY)
	}
	rx, ry = fine.NX/coarse.NX, fine.NY/coarse.NY
	r = max(rx, ry)
	if r < 2 || (rx != 1 && rx != r) || (ry != 1 && ry != r) {
		return 0, 0, 0, fmt.Errorf("grids %dx%d and %dx%d: want the same refinement ratio (at least 2) in each refined direction", coarse.NX, coarse.NY, fine.NX, fine.NY)
	}
	return rx, ry, r, nil
}

// restrict returns fine averaged onto the grid of nx x ny cells: each
// coarse cell gets the mean of the rx x ry fine cells it holds,
//
//	(R u)_{i,j} = 1/(rx ry) sum_{a<rx, b<ry} u_{rx i + a, ry j + b},
//
// where fine.NX = rx nx and fine.NY = ry ny (the caller has checked that
// fine is well formed and nested so).
func restrict(fine Grid, nx, ny int) Grid {
	rx, ry := fine.NX/nx, fine.NY/ny
	w := 1 / float64(rx*ry)
	out := Grid{NX: nx, NY: ny, V: make([]float64, nx*ny)}
	for j := range ny {
		row := out.V[j*nx : (j+1)*nx]
		for b := range ry {
			src := fine.V[(ry*j+b)*fine.NX : (ry*j+b+1)*fine.NX]
			for i := range row {
				for a := range rx {
					row[i] += src[rx*i+a]
				}
			}
		}
		for i := range row {
			row[i] *= w
		}
	}
	return out
}

// LocalOrders is an observed order of accuracy per window of a coarse grid.
type LocalOrders struct {
	NX, NY int // the coarse grid of the map: one window centred on each of its cells
	Ratio  int // refinement ratio r between successive grids
	Window int // the windows' side in coarse cells (odd; 1: cell by cell)
	Grids  int // the number of grids whose errors or differences were fitted
	// Order[j*NX+i] is the observed order of the window centred on coarse
	// cell (i, j); NaN where the window is masked.
	Order []float64
	// Masked counts the windows whose order is not defined: one of the
	// magnitudes it fits is below Floor (round-off), or not finite.
	Masked int
	Floor  float64
	// Global is the observed order of the L1 norms of the same quantities
	// over the whole grids (see WindowOrdersExact, WindowOrdersDifferences);
	// NaN when any norm is zero or not finite.
	Global float64
}

// Median returns the median of the windows' orders that are not masked;
// NaN when every window is masked.
func (m LocalOrders) Median() float64 {
	v := make([]float64, 0, len(m.Order))
	for _, p := range m.Order {
		if !math.IsNaN(p) {
			v = append(v, p)
		}
	}
	if len(v) == 0 {
		return math.NaN()
	}
	slices.Sort(v)
	n := len(v)
	if n%2 == 1 {
		return v[n/2]
	}
	return 0.5 * (v[n/2-1] + v[n/2])
}

// WindowOrdersExact returns the observed order per window from the cell
// errors e_k = u_k - u_exact of n >= 2 nested grids, coarsest first, the
// same ratio r between each pair (h_k = h_0 / r^k). A window is w x w cells
// of the coarse grid (w odd) centred on one of its cells, cut by the
// domain's edges (a strip of fewer than w cells across is taken whole). On
// it each grid's error is measured by its L1 norm over the window's area,
// divided by the area:
//
//	E_k = mean over the window of R_k|e_k|,
//
// R_k|e_k| the mean of |e_k| over the grid-k cells inside each coarse cell
// (every coarse cell has the same area, so this is the mean of |e_k| over
// the grid-k cells of the window). The magnitudes are taken before
// averaging: a signed error averaged first (|R e|) cancels where it
// changes sign inside the window and shows a spurious high order there.
// Dividing by the area changes no order. The order of the window is the
// least-squares slope of ln E_k against ln h_k (ordinary least squares on
// the logarithms, common practice; for n = 2 it is ln(E_0/E_1) / ln r).
// With w = 1 the map is cell by cell: for a pair of grids,
//
//	p_{i,j} = ln(|e_0|_{i,j} / (R_1|e_1|)_{i,j}) / ln r.
//
// A window is masked (NaN) where any E_k is below floor (see
// RoundOffFloor), zero or not finite. Global is the same fit of the mean
// of |e_k| over all the cells of grid k: the L1 order of the sequence (the
// domain's area cancels; the map of a window covering the whole domain).
// It is an error when a grid is malformed, the grids are fewer than two or
// not nested with one ratio, or w is not a positive odd number. The grids'
// values are only read.
func WindowOrdersExact(errs []Grid, w int, floor float64) (LocalOrders, error) {
	if len(errs) < 2 {
		return LocalOrders{}, fmt.Errorf("local orders from exact errors need at least two grids; have %d", len(errs))
	}
	r, err := checkSequence(errs, w)
	if err != nil {
		return LocalOrders{}, err
	}
	return windowOrders(errs, r, w, floor), nil
}

// WindowOrdersDifferences returns the observed order per window of n >= 3
// nested grids u_0 ... u_{n-1}, coarsest first, the same ratio r between
// each pair, without an exact solution: from the differences of successive
// grids on the coarser grid of each pair,
//
//	d_k = u_k - R u_{k+1},  k = 0 ... n-2,
//
// R u_{k+1} the mean of u_{k+1} over the grid-(k+1) cells inside each cell
// of grid k (the restriction, exact for cell averages). The d_k behave
// like C h_k^p (1 - r^-p) where u_k = u + C h_k^p, so that the fit of
// ln E_k against ln h_k over the n-1 differences has slope p. E_k,
// the windows, the fit, the masking and Global are those of
// WindowOrdersExact with d_k in place of e_k. It is an error when a grid
// is malformed, the grids are fewer than three or not nested with one
// ratio, or w is not a positive odd number.
func WindowOrdersDifferences(grids []Grid, w int, floor float64) (LocalOrders, error) {
	if len(grids) < 3 {
		return LocalOrders{}, fmt.Errorf("local orders without an exact solution need at least three grids; have %d", len(grids))
	}
	r, err := checkSequence(grids, w)
	if err != nil {
		return LocalOrders{}, err
	}
	d := make([]Grid, len(grids)-1)
	for k := range d {
		c, f := grids[k], grids[k+1]
		v := restrict(f, c.NX, c.NY).V // R u_{k+1}, then u_k - R u_{k+1}
		for i, x := range c.V {
			v[i] = x - v[i]
		}
		d[k] = Grid{NX: c.NX, NY: c.NY, V: v}
	}
	return windowOrders(d, r, w, floor), nil
}

// checkSequence checks that grids are well formed and nested, coarsest
// first, with one ratio in each refined direction, and that w is a window
// side; it returns the ratio.
func checkSequence(grids []Grid, w int) (int, error) {
	if w < 1 || w%2 == 0 {
		return 0, fmt.Errorf("window of %d cells: want a positive odd number (the window is centred on a cell)", w)
	}
	for k, g := range grids {
		if err := g.check(fmt.Sprintf("grid %d (%dx%d)", k, g.NX, g.NY)); err != nil {
			return 0, err
		}
	}
	var rx0, ry0, r int
	for k := 1; k < len(grids); k++ {
		rx, ry, rk, err := nestedRatio(grids[k-1], grids[k])
		if err != nil {
			return 0, err
		}
		if k > 1 && (rx != rx0 || ry != ry0) {
			g0, g1, g2 := grids[k-2], grids[k-1], grids[k]
			return 0, fmt.Errorf("grids %dx%d, %dx%d, %dx%d: the refinement ratios differ", g0.NX, g0.NY, g1.NX, g1.NY, g2.NX, g2.NY)
		}
		rx0, ry0, r = rx, ry, rk
	}
	return r, nil
}

// windowOrders fits the orders of the magnitudes a_k (errors or
// differences of grid k, h_k = h_0 / r^k) per window of w x w cells of
// the coarse grid a_0.
func windowOrders(a []Grid, r, w int, floor float64) LocalOrders {
	c := a[0]
	m := LocalOrders{NX: c.NX, NY: c.NY, Ratio: r, Window: w, Grids: len(a), Floor: floor,
		Order: make([]float64, c.NX*c.NY)}
	// x_k = ln h_k - ln h_0 = -k ln r: the slope does not depend on h_0.
	x := make([]float64, len(a))
	for k := range x {
		x[k] = -float64(k) * math.Log(float64(r))
	}
	E := make([][]float64, len(a)) // E[k][cell]: the window mean of |a_k|
	glob := make([]float64, len(a))
	for k, g := range a {
		abs := Grid{NX: g.NX, NY: g.NY, V: make([]float64, len(g.V))}
		for i, v := range g.V {
			abs.V[i] = math.Abs(v)
		}
		glob[k] = meanAbs(g.V)
		E[k] = boxMean(restrict(abs, c.NX, c.NY), w)
	}
	y := make([]float64, len(a))
	for cell := range m.Order {
		ok := true
		for k := range E {
			e := E[k][cell]
			if !(e >= floor) || !positive(e) {
				ok = false
				break
			}
			y[k] = math.Log(e)
		}
		if !ok {
			m.Order[cell] = math.NaN()
			m.Masked++
			continue
		}
		m.Order[cell] = slope(x, y)
	}
	m.Global = math.NaN()
	for k, v := range glob {
		if !positive(v) {
			return m
		}
		y[k] = math.Log(v)
	}
	m.Global = slope(x, y)
	return m
}

// slope is the least-squares slope of y against x, Sxy/Sxx (lineSums):
// with x = ln h_k and y = ln E_k the order p of E_k ~ C h_k^p.
func slope(x, y []float64) float64 {
	_, _, sxx, sxy, _ := lineSums(x, y)
	return sxy / sxx
}

// boxMean returns, for each cell of g, the mean of g over the w x w cells
// centred on it, cut by the grid's edges: sums along x, then along y, each
// added up directly (no running sums, whose differences would lose the
// small values next to large ones).
func boxMean(g Grid, w int) []float64 {
	if w == 1 {
		return g.V
	}
	half := w / 2
	sx := make([]float64, len(g.V))
	for j := range g.NY {
		row := g.V[j*g.NX : (j+1)*g.NX]
		for i := range row {
			s := 0.0
			for _, v := range row[max(i-half, 0):min(i+half+1, g.NX)] {
				s += v
			}
			sx[j*g.NX+i] = s
		}
	}
	out := make([]float64, len(g.V))
	for j := range g.NY {
		lo, hi := max(j-half, 0), min(j+half+1, g.NY)
		for i := range g.NX {
			s := 0.0
			for b := lo; b < hi; b++ {
				s += sx[b*g.NX+i]
			}
			n := min(i+half+1, g.NX) - max(i-half, 0)
			out[j*g.NX+i] = s / float64(n*(hi-lo))
		}
	}
	return out
}

func meanAbs(v []float64) float64 {
	s := 0.0
	for _, x := range v {
		s += math.Abs(x)
	}
	return s / float64(len(v))
}

// RoundOffFactor is the multiple of the storage round-off below which
// RoundOffFloor masks a cell.
const RoundOffFactor = 32

// RoundOffFloor is the magnitude below which an error or a difference of
// cell values stored with machine epsilon eps (2^-23 for float32, 2^-52
// for float64) is not resolved:
//
//	floor = RoundOffFactor * eps * max |u|,
//
// the maximum over every value of fields (the solutions, not the errors).
// Storing a value u rounds it by at most eps |u| / 2, so an error u - u_exact
// (exact values held more precisely) or a difference of two stored values,
// restricted or not, is off by at most eps max|u|; above the floor that is
// at most 1/32 of it, and the local order ln(|a|/|b|)/ln 2 is off by at most
// log2(33/31), about 0.09.
func RoundOffFloor(eps float64, fields ...[]float64) float64 {
	top := 0.0
	for _, f := range fields {
		for _, v := range f {
			if a := math.Abs(v); a > top && !math.IsInf(a, 0) {
				top = a
			}
		}
	}
	return RoundOffFactor * eps * top
}
