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

// Restrict returns fine averaged onto the grid of nx x ny cells: each
// coarse cell gets the mean of the rx x ry fine cells it holds,
//
//	(R u)_{i,j} = 1/(rx ry) sum_{a<rx, b<ry} u_{rx i + a, ry j + b},
//
// where fine.NX = rx nx and fine.NY = ry ny. It is an error when fine is
// malformed or does not refine nx x ny by whole cells.
func Restrict(fine Grid, nx, ny int) (Grid, error) {
	if err := fine.check("fine"); err != nil {
		return Grid{}, err
	}
	if nx < 1 || ny < 1 || fine.NX%nx != 0 || fine.NY%ny != 0 {
		return Grid{}, fmt.Errorf("restrict: grid %dx%d does not refine %dx%d by whole cells", fine.NX, fine.NY, nx, ny)
	}
	return restrict(fine, nx, ny), nil
}

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

// LocalOrders is an observed order of accuracy per cell of a coarse grid.
type LocalOrders struct {
	NX, NY int // the coarse grid of the map
	Ratio  int // refinement ratio r between successive grids
	// Order[j*NX+i] is the observed order of coarse cell (i, j); NaN where
	// the cell is masked.
	Order []float64
	// Masked counts the cells whose order is not defined: one of the two
	// magnitudes it compares is below Floor (round-off), or not finite.
	Masked int
	Floor  float64
	// Global is the observed order of the L1 norms of the same quantities
	// over the whole grids (see LocalOrdersExact, LocalOrdersDifferences);
	// NaN when either norm is zero or not finite.
	Global float64
}

// Median returns the median of the cells' orders that are not masked; NaN
// when every cell is masked.
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

// LocalOrdersExact returns the observed order in each cell of the coarse
// grid from the cell errors e = u - u_exact of a coarse and a finer nested
// grid (ratio r):
//
//	p_{i,j} = ln(|e^c_{i,j}| / |(R e^f)_{i,j}|) / ln r,
//
// R the restriction (Restrict). A cell is masked where |e^c| or |R e^f| is
// below floor (errors at round-off; see RoundOffFloor). Global is the order
// of the mean absolute errors of the two grids, each over its own cells,
// ln(mean|e^c| / mean|e^f|) / ln r: the L1 order of the pair (the domain's
// area cancels). It is an error when a grid is malformed or the two are not
// nested.
func LocalOrdersExact(coarse, fine Grid, floor float64) (LocalOrders, error) {
	if err := coarse.check("coarse"); err != nil {
		return LocalOrders{}, err
	}
	if err := fine.check("fine"); err != nil {
		return LocalOrders{}, err
	}
	_, _, r, err := nestedRatio(coarse, fine)
	if err != nil {
		return LocalOrders{}, err
	}
	m := localOrders(coarse.V, restrict(fine, coarse.NX, coarse.NY).V, r, floor)
	m.NX, m.NY = coarse.NX, coarse.NY
	m.Global = ratioOrder(meanAbs(coarse.V), meanAbs(fine.V), r)
	return m, nil
}

// LocalOrdersDifferences returns the observed order in each cell of the
// coarse grid of three nested grids (coarse, medium, fine; the same ratio r
// between each pair) without an exact solution, from the differences of
// successive grids restricted to the coarse grid:
//
//	p_{i,j} = ln(|u^c - R u^m| / |R u^m - R R u^f|)_{i,j} / ln r,
//
// R the restriction to the next coarser grid. A cell is masked where either
// difference is below floor. Global is ln(mean|u^c - R u^m| / mean|u^m -
// R u^f|) / ln r, each mean over the cells of the coarser grid of its pair
// (the three-grid L1 order). It is an error when a grid is malformed, the
// grids are not nested or the two ratios differ.
func LocalOrdersDifferences(coarse, medium, fine Grid, floor float64) (LocalOrders, error) {
	for _, g := range []struct {
		name string
		g    Grid
	}{{"coarse", coarse}, {"medium", medium}, {"fine", fine}} {
		if err := g.g.check(g.name); err != nil {
			return LocalOrders{}, err
		}
	}
	rx1, ry1, r, err := nestedRatio(coarse, medium)
	if err != nil {
		return LocalOrders{}, err
	}
	rx2, ry2, _, err := nestedRatio(medium, fine)
	if err != nil {
		return LocalOrders{}, err
	}
	if rx1 != rx2 || ry1 != ry2 {
		return LocalOrders{}, fmt.Errorf("grids %dx%d, %dx%d, %dx%d: the refinement ratios differ", coarse.NX, coarse.NY, medium.NX, medium.NY, fine.NX, fine.NY)
	}
	dc := restrict(medium, coarse.NX, coarse.NY).V // R u^m, then u^c - R u^m
	for k, v := range coarse.V {
		dc[k] = v - dc[k]
	}
	dm := restrict(fine, medium.NX, medium.NY).V // R u^f, then u^m - R u^f
	for k, v := range medium.V {
		dm[k] = v - dm[k]
	}
	m := localOrders(dc, restrict(Grid{NX: medium.NX, NY: medium.NY, V: dm}, coarse.NX, coarse.NY).V, r, floor)
	m.NX, m.NY = coarse.NX, coarse.NY
	m.Global = ratioOrder(meanAbs(dc), meanAbs(dm), r)
	return m, nil
}

// localOrders is ln(|a_k| / |b_k|) / ln r per cell, masked (NaN) where
// |a_k| or |b_k| is below floor or not finite.
func localOrders(a, b []float64, r int, floor float64) LocalOrders {
	m := LocalOrders{Ratio: r, Floor: floor, Order: make([]float64, len(a))}
	lr := math.Log(float64(r))
	for k := range a {
		x, y := math.Abs(a[k]), math.Abs(b[k])
		if !(x >= floor && y >= floor) || x == 0 || y == 0 || math.IsInf(x, 0) || math.IsInf(y, 0) {
			m.Order[k] = math.NaN()
			m.Masked++
			continue
		}
		m.Order[k] = math.Log(x/y) / lr
	}
	return m
}

// ratioOrder is ln(a/b) / ln r, NaN unless a and b are positive and finite.
func ratioOrder(a, b float64, r int) float64 {
	if !positive(a) || !positive(b) {
		return math.NaN()
	}
	return math.Log(a/b) / math.Log(float64(r))
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
