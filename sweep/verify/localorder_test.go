package verify

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// cubicAverages returns the exact cell averages of f(x, y) = x^3 + x y^2 +
// 2 y on an nx x ny grid of [0,1]^2, from its antiderivative
// F = x^4 y / 4 + x^2 y^3 / 6 + x^2 y^2 / 2 (calculus: the average is the
// double integral over the cell divided by its area).
func cubicAverages(nx, ny int) Grid {
	F := func(x, y float64) float64 { return x*x*x*x*y/4 + x*x*y*y*y/6 + x*x*y*y/2 }
	g := Grid{NX: nx, NY: ny, V: make([]float64, nx*ny)}
	dx, dy := 1/float64(nx), 1/float64(ny)
	for j := range ny {
		for i := range nx {
			x0, x1, y0, y1 := float64(i)*dx, float64(i+1)*dx, float64(j)*dy, float64(j+1)*dy
			g.V[j*nx+i] = (F(x1, y1) - F(x0, y1) - F(x1, y0) + F(x0, y0)) / (dx * dy)
		}
	}
	return g
}

// Averaging the fine cell averages of a function gives its coarse cell
// averages (additivity of the integral), for ratio 2 in both directions,
// 2 in x only and 4 in both.
func TestRestrictCellAverages(t *testing.T) {
	for _, tc := range []struct{ nx, ny, fnx, fny int }{{8, 6, 16, 12}, {8, 2, 16, 2}, {4, 4, 16, 16}} {
		got, err := Restrict(cubicAverages(tc.fnx, tc.fny), tc.nx, tc.ny)
		if err != nil {
			t.Fatal(err)
		}
		want := cubicAverages(tc.nx, tc.ny)
		for k := range want.V {
			if math.Abs(got.V[k]-want.V[k]) > 1e-13 {
				t.Errorf("%dx%d from %dx%d, cell %d: %.17g, want %.17g", tc.nx, tc.ny, tc.fnx, tc.fny, k, got.V[k], want.V[k])
			}
		}
	}
	if _, err := Restrict(cubicAverages(10, 10), 4, 5); err == nil || !strings.Contains(err.Error(), "whole cells") {
		t.Errorf("10x10 onto 4x5: %v", err)
	}
}

// errorsOfOrder returns errors e = a_k h^p_k on a grid nested in the coarse
// grid nx x ny by ratio r, the amplitude a_k and order p_k those of the
// coarse cell k holding each cell: a local power law (the law the observed
// order measures).
func errorsOfOrder(nx, ny, r int, h float64, a, p []float64) Grid {
	g := Grid{NX: r * nx, NY: r * ny, V: make([]float64, r*r*nx*ny)}
	for j := range g.NY {
		for i := range g.NX {
			k := (j/r)*nx + i/r
			g.V[j*g.NX+i] = a[k] * math.Pow(h, p[k])
		}
	}
	return g
}

func TestLocalOrdersExactPowerLaw(t *testing.T) {
	const nx, ny = 6, 4
	rng := rand.New(rand.NewPCG(1, 2))
	a, p := make([]float64, nx*ny), make([]float64, nx*ny)
	for k := range a {
		a[k] = (0.5 + rng.Float64()) * float64(1-2*(k%2)) // signs alternate: the order uses magnitudes
		p[k] = 0.5 + 2*rng.Float64()
	}
	h := 0.1
	coarse := errorsOfOrder(nx, ny, 1, h, a, p)
	fine := errorsOfOrder(nx, ny, 2, h/2, a, p)
	m, err := LocalOrdersExact(coarse, fine, 0)
	if err != nil {
		t.Fatal(err)
	}
	if m.NX != nx || m.NY != ny || m.Ratio != 2 || m.Masked != 0 {
		t.Fatalf("map %dx%d ratio %d masked %d", m.NX, m.NY, m.Ratio, m.Masked)
	}
	for k, q := range m.Order {
		if math.Abs(q-p[k]) > 1e-12 {
			t.Errorf("cell %d: order %.15g, want %.15g", k, q, p[k])
		}
	}
	// The global order is the L1 order of the pair.
	var sc, sf float64
	for k := range a {
		sc += math.Abs(a[k]) * math.Pow(h, p[k])
		sf += math.Abs(a[k]) * math.Pow(h/2, p[k])
	}
	if want := math.Log2(sc / sf); math.Abs(m.Global-want) > 1e-12 {
		t.Errorf("global order %.15g, want %.15g", m.Global, want)
	}
	// One order everywhere: the map and the global order agree.
	for k := range p {
		p[k] = 2
	}
	m, _ = LocalOrdersExact(errorsOfOrder(nx, ny, 1, h, a, p), errorsOfOrder(nx, ny, 2, h/2, a, p), 0)
	if math.Abs(m.Global-2) > 1e-12 || math.Abs(m.Median()-2) > 1e-12 {
		t.Errorf("uniform order 2: global %v median %v", m.Global, m.Median())
	}
}

// Cells where either error is below the floor are masked (NaN) and
// counted; the median ignores them.
func TestLocalOrdersExactMasking(t *testing.T) {
	coarse := Grid{NX: 2, NY: 2, V: []float64{4e-3, 1e-9, 4e-3, 0}}
	fine := Grid{NX: 4, NY: 4, V: make([]float64, 16)}
	for j := range 4 {
		for i := range 4 {
			v := 1e-3 // order 2 in cells 0 and 2
			if i/2 == 0 && j/2 == 1 {
				v = 1e-10 // below the floor: cell 2 masked
			}
			fine.V[j*4+i] = v
		}
	}
	m, err := LocalOrdersExact(coarse, fine, 1e-8)
	if err != nil {
		t.Fatal(err)
	}
	if m.Masked != 3 || !math.IsNaN(m.Order[1]) || !math.IsNaN(m.Order[2]) || !math.IsNaN(m.Order[3]) {
		t.Errorf("masked %d, orders %v", m.Masked, m.Order)
	}
	if math.Abs(m.Order[0]-2) > 1e-12 || math.Abs(m.Median()-2) > 1e-12 {
		t.Errorf("order %v, median %v", m.Order[0], m.Median())
	}
	all := LocalOrders{Order: []float64{math.NaN()}}
	if !math.IsNaN(all.Median()) {
		t.Error("median of a fully masked map is not NaN")
	}
	if got := (LocalOrders{Order: []float64{3, 1, math.NaN(), 2, 10}}).Median(); got != 2.5 {
		t.Errorf("median of 1 2 3 10: %v", got)
	}
	// Zero errors everywhere: nothing to measure, no global order.
	z, _ := LocalOrdersExact(Grid{NX: 1, NY: 1, V: []float64{0}}, Grid{NX: 2, NY: 2, V: make([]float64, 4)}, 0)
	if z.Masked != 1 || !math.IsNaN(z.Global) {
		t.Errorf("zero errors: masked %d global %v", z.Masked, z.Global)
	}
}

// Three grids u = exact averages + a h^p (a smooth part that restriction
// carries over exactly, and a local power law) give p in every cell
// without the exact solution.
func TestLocalOrdersDifferencesPowerLaw(t *testing.T) {
	const nx, ny = 4, 3
	rng := rand.New(rand.NewPCG(3, 4))
	a, p := make([]float64, nx*ny), make([]float64, nx*ny)
	for k := range a {
		a[k] = 0.5 + rng.Float64()
		p[k] = 0.7 + 2*rng.Float64()
	}
	h := 0.2
	grid := func(r int) Grid {
		u := cubicAverages(r*nx, r*ny)
		e := errorsOfOrder(nx, ny, r, h/float64(r), a, p)
		for k := range u.V {
			u.V[k] += e.V[k]
		}
		return u
	}
	m, err := LocalOrdersDifferences(grid(1), grid(2), grid(4), 0)
	if err != nil {
		t.Fatal(err)
	}
	if m.Masked != 0 || m.Ratio != 2 {
		t.Fatalf("masked %d ratio %d", m.Masked, m.Ratio)
	}
	for k, q := range m.Order {
		if math.Abs(q-p[k]) > 1e-8 {
			t.Errorf("cell %d: order %.12g, want %.12g", k, q, p[k])
		}
	}
	// Global: L1 of u^c - R u^m over the coarse grid against that of
	// u^m - R u^f over the medium grid, a (h^p - (h/2)^p) per coarse cell
	// and a ((h/2)^p - (h/4)^p) per medium cell.
	var s1, s2 float64
	for k := range a {
		s1 += a[k] * (math.Pow(h, p[k]) - math.Pow(h/2, p[k]))
		s2 += a[k] * (math.Pow(h/2, p[k]) - math.Pow(h/4, p[k]))
	}
	if want := math.Log2(s1 / s2); math.Abs(m.Global-want) > 1e-8 {
		t.Errorf("global %.12g, want %.12g", m.Global, want)
	}
}

func TestLocalOrdersGridErrors(t *testing.T) {
	g := func(nx, ny int) Grid { return Grid{NX: nx, NY: ny, V: make([]float64, nx*ny)} }
	for _, tc := range []struct {
		name string
		err  error
		want string
	}{
		{"not nested", func() error { _, err := LocalOrdersExact(g(4, 4), g(6, 8), 0); return err }(), "not nested"},
		{"same grid", func() error { _, err := LocalOrdersExact(g(4, 4), g(4, 4), 0); return err }(), "refinement ratio"},
		{"ratios 2 and 3", func() error { _, err := LocalOrdersExact(g(4, 4), g(8, 12), 0); return err }(), "refinement ratio"},
		{"short values", func() error {
			_, err := LocalOrdersExact(Grid{NX: 2, NY: 2, V: make([]float64, 3)}, g(4, 4), 0)
			return err
		}(), "3 values"},
		{"ratios differ", func() error { _, err := LocalOrdersDifferences(g(4, 4), g(8, 8), g(32, 32), 0); return err }(), "ratios differ"},
		{"strip then square", func() error { _, err := LocalOrdersDifferences(g(4, 4), g(8, 4), g(16, 8), 0); return err }(), "ratios differ"},
	} {
		if tc.err == nil || !strings.Contains(tc.err.Error(), tc.want) {
			t.Errorf("%s: %v, want %q", tc.name, tc.err, tc.want)
		}
	}
	// A strip refined along x only is nested with ratio 2.
	m, err := LocalOrdersExact(Grid{NX: 2, NY: 1, V: []float64{4, 4}}, Grid{NX: 4, NY: 1, V: []float64{1, 1, 1, 1}}, 0)
	if err != nil || m.Ratio != 2 || m.Order[0] != 2 {
		t.Errorf("strip: %+v %v", m, err)
	}
}

// Storing values as float32 moves an error u - u_exact or a difference of
// two values by at most eps max|u| (IEEE 754 binary32 rounding to nearest:
// at most half an ulp, eps/2 |u|, per value), which is 1/32 of the floor.
func TestRoundOffFloorBoundsFloat32Storage(t *testing.T) {
	eps := math.Pow(2, -23) // binary32 machine epsilon (IEEE 754)
	rng := rand.New(rand.NewPCG(5, 6))
	u := make([]float64, 4096)
	for k := range u {
		u[k] = 1 + 3*rng.Float64()
	}
	floor := RoundOffFloor(eps, u)
	if want := RoundOffFactor * eps * 4; floor > want || floor < RoundOffFactor*eps*3.99 {
		t.Fatalf("floor %g, want about %g", floor, want)
	}
	worst := 0.0
	for k := 1; k < len(u); k++ {
		d := u[k] - u[k-1]
		d32 := float64(float32(u[k])) - float64(float32(u[k-1]))
		worst = max(worst, math.Abs(d-d32))
	}
	if worst > floor/RoundOffFactor {
		t.Errorf("float32 storage moved a difference by %g, over eps max|u| = %g", worst, floor/RoundOffFactor)
	}
	if RoundOffFloor(eps, []float64{math.Inf(1), -2}) != RoundOffFactor*eps*2 {
		t.Error("an infinite value set the floor")
	}
}
