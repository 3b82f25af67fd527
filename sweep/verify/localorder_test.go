package verify

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/gonum/stat"
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
		got := restrict(cubicAverages(tc.fnx, tc.fny), tc.nx, tc.ny)
		want := cubicAverages(tc.nx, tc.ny)
		for k := range want.V {
			if math.Abs(got.V[k]-want.V[k]) > 1e-13 {
				t.Errorf("%dx%d from %dx%d, cell %d: %.17g, want %.17g", tc.nx, tc.ny, tc.fnx, tc.fny, k, got.V[k], want.V[k])
			}
		}
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

// Cell by cell (windows of one cell), from a pair of grids: errors of a
// local power law give its order in every cell.
func TestCellOrdersExactPowerLaw(t *testing.T) {
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
	m, err := WindowOrdersExact([]Grid{coarse, fine}, 1, 0)
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
	m, _ = WindowOrdersExact([]Grid{errorsOfOrder(nx, ny, 1, h, a, p), errorsOfOrder(nx, ny, 2, h/2, a, p)}, 1, 0)
	if math.Abs(m.Global-2) > 1e-12 || math.Abs(m.Median()-2) > 1e-12 {
		t.Errorf("uniform order 2: global %v median %v", m.Global, m.Median())
	}
}

// Cell by cell from a pair of grids: cells where either error is below
// the floor are masked (NaN) and counted; the median ignores them.
func TestCellOrdersExactMasking(t *testing.T) {
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
	m, err := WindowOrdersExact([]Grid{coarse, fine}, 1, 1e-8)
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
	z, _ := WindowOrdersExact([]Grid{{NX: 1, NY: 1, V: []float64{0}}, {NX: 2, NY: 2, V: make([]float64, 4)}}, 1, 0)
	if z.Masked != 1 || !math.IsNaN(z.Global) {
		t.Errorf("zero errors: masked %d global %v", z.Masked, z.Global)
	}
}

// Cell by cell from three grids u = exact averages + a h^p (a smooth part
// that restriction carries over exactly, and a local power law): p in
// every cell without the exact solution.
func TestCellOrdersDifferencesPowerLaw(t *testing.T) {
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
	m, err := WindowOrdersDifferences([]Grid{grid(1), grid(2), grid(4)}, 1, 0)
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

func TestCellOrdersGridErrors(t *testing.T) {
	g := func(nx, ny int) Grid { return Grid{NX: nx, NY: ny, V: make([]float64, nx*ny)} }
	for _, tc := range []struct {
		name string
		err  error
		want string
	}{
		{"not nested", func() error { _, err := WindowOrdersExact([]Grid{g(4, 4), g(6, 8)}, 1, 0); return err }(), "not nested"},
		{"not whole cells", func() error { _, err := WindowOrdersExact([]Grid{g(4, 5), cubicAverages(10, 10)}, 1, 0); return err }(), "not nested"},
		{"same grid", func() error { _, err := WindowOrdersExact([]Grid{g(4, 4), g(4, 4)}, 1, 0); return err }(), "refinement ratio"},
		{"ratios 2 and 3", func() error { _, err := WindowOrdersExact([]Grid{g(4, 4), g(8, 12)}, 1, 0); return err }(), "refinement ratio"},
		{"short values", func() error {
			_, err := WindowOrdersExact([]Grid{{NX: 2, NY: 2, V: make([]float64, 3)}, g(4, 4)}, 1, 0)
			return err
		}(), "3 values"},
		{"ratios differ", func() error { _, err := WindowOrdersDifferences([]Grid{g(4, 4), g(8, 8), g(32, 32)}, 1, 0); return err }(), "ratios differ"},
		{"strip then square", func() error { _, err := WindowOrdersDifferences([]Grid{g(4, 4), g(8, 4), g(16, 8)}, 1, 0); return err }(), "ratios differ"},
	} {
		if tc.err == nil || !strings.Contains(tc.err.Error(), tc.want) {
			t.Errorf("%s: %v, want %q", tc.name, tc.err, tc.want)
		}
	}
	// A strip refined along x only is nested with ratio 2.
	m, err := WindowOrdersExact([]Grid{{NX: 2, NY: 1, V: []float64{4, 4}}, {NX: 4, NY: 1, V: []float64{1, 1, 1, 1}}}, 1, 0)
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

// blockErrors returns errors on grid k of a sequence nested in the coarse
// grid nx x ny by ratio 2 in both directions (h_k = h0 / 2^k): in each
// fine cell s a_c h_k^p_b, with s = ±1 a checkerboard over the grid-k
// cells, a_c an amplitude per coarse cell c and p_b an order per block of
// b x b coarse cells. Every window of the coarse grid that lies inside one
// block has E_k = mean|a| h_k^p_b: an exact power law of order p_b.
func blockErrors(nx, ny, b, k int, h0 float64, a, p []float64) Grid {
	r := 1 << k
	h := h0 / float64(r)
	g := Grid{NX: r * nx, NY: r * ny, V: make([]float64, r*r*nx*ny)}
	nbx := (nx + b - 1) / b
	for j := range g.NY {
		for i := range g.NX {
			ci, cj := i/r, j/r
			s := float64(1 - 2*((i+j)%2))
			g.V[j*g.NX+i] = s * a[cj*nx+ci] * math.Pow(h, p[(cj/b)*nbx+ci/b])
		}
	}
	return g
}

// Exact local power laws over four grids: every window inside a block of
// one order recovers it to 1e-12 (the definition of the observed order of
// E ~ C h^p). The signs alternate cell by cell, so a restriction of the
// signed errors (|R e|) would be zero and mask everything; the L1 of the
// fine cells keeps the magnitude.
func TestWindowOrdersExactPowerLaw(t *testing.T) {
	const nx, ny, b, h0 = 10, 15, 5, 0.3
	rng := rand.New(rand.NewPCG(7, 8))
	a := make([]float64, nx*ny)
	for k := range a {
		a[k] = 0.2 + rng.Float64()
	}
	p := make([]float64, 2*3)
	for k := range p {
		p[k] = 0.4 + 2.5*rng.Float64()
	}
	for _, w := range []int{1, 3} {
		for _, n := range []int{2, 4} {
			errs := make([]Grid, n)
			for k := range errs {
				errs[k] = blockErrors(nx, ny, b, k, h0, a, p)
			}
			m, err := WindowOrdersExact(errs, w, 0)
			if err != nil {
				t.Fatal(err)
			}
			if m.NX != nx || m.NY != ny || m.Ratio != 2 || m.Window != w || m.Grids != n || m.Masked != 0 {
				t.Fatalf("w=%d n=%d: map %dx%d ratio %d window %d grids %d masked %d", w, n, m.NX, m.NY, m.Ratio, m.Window, m.Grids, m.Masked)
			}
			checked := 0
			for j := range ny {
				for i := range nx {
					if i%b < w/2 || i%b >= b-w/2 || j%b < w/2 || j%b >= b-w/2 {
						continue // the window reaches into another block
					}
					want := p[(j/b)*2+i/b]
					if q := m.Order[j*nx+i]; math.Abs(q-want) > 1e-12 {
						t.Errorf("w=%d n=%d cell (%d,%d): order %.15g, want %.15g", w, n, i, j, q, want)
					}
					checked++
				}
			}
			if checked < 6*3*3 {
				t.Fatalf("only %d windows checked", checked)
			}
		}
	}
	// Windows of one cell on a pair of grids: in every cell, block edges
	// included, p_{i,j} = ln(|e_0|_{i,j} / (R|e_1|)_{i,j}) / ln 2, R|e_1|
	// the mean of the four fine magnitudes.
	e0, e1 := blockErrors(nx, ny, b, 0, h0, a, p), blockErrors(nx, ny, b, 1, h0, a, p)
	pair, err := WindowOrdersExact([]Grid{e0, e1}, 1, 0)
	if err != nil || pair.Masked != 0 {
		t.Fatalf("pair: masked %d, %v", pair.Masked, err)
	}
	for j := range ny {
		for i := range nx {
			f := 0.0
			for _, c := range [][2]int{{0, 0}, {1, 0}, {0, 1}, {1, 1}} {
				f += math.Abs(e1.V[(2*j+c[1])*e1.NX+2*i+c[0]]) / 4
			}
			want := math.Log(math.Abs(e0.V[j*nx+i])/f) / math.Log(2)
			if q := pair.Order[j*nx+i]; math.Abs(q-want) > 1e-12 {
				t.Errorf("pair, cell (%d,%d): order %.15g, want %.15g", i, j, q, want)
			}
		}
	}
}

// The fitted order is the ordinary least-squares slope of ln E_k against
// ln h_k: cross-checked against gonum's stat.LinearRegression (an
// independent library) on scattered data, per window and globally.
func TestWindowOrdersMatchLinearRegression(t *testing.T) {
	const nx, ny, n, w, h0 = 6, 5, 5, 3, 0.25
	rng := rand.New(rand.NewPCG(9, 10))
	errs := make([]Grid, n)
	for k := range errs {
		r := 1 << k
		g := Grid{NX: r * nx, NY: r * ny, V: make([]float64, r*r*nx*ny)}
		for c := range g.V {
			g.V[c] = (rng.Float64() - 0.4) * math.Pow(h0/float64(r), 1+rng.Float64())
		}
		errs[k] = g
	}
	m, err := WindowOrdersExact(errs, w, 0)
	if err != nil {
		t.Fatal(err)
	}
	x, y := make([]float64, n), make([]float64, n)
	for _, c := range [][2]int{{0, 0}, {2, 3}, {5, 4}, {3, 0}} {
		i0, j0 := c[0], c[1]
		for k, g := range errs {
			r := 1 << k
			// The grid-k cells of the window: coarse cells i0-1..i0+1, j0-1..j0+1, cut by the edges.
			s, cnt := 0.0, 0
			for j := max(j0-1, 0) * r; j < min(j0+2, ny)*r; j++ {
				for i := max(i0-1, 0) * r; i < min(i0+2, nx)*r; i++ {
					s += math.Abs(g.V[j*g.NX+i])
					cnt++
				}
			}
			x[k], y[k] = math.Log(h0/float64(r)), math.Log(s/float64(cnt))
		}
		_, beta := stat.LinearRegression(x, y, nil, false)
		if got := m.Order[j0*nx+i0]; math.Abs(got-beta) > 1e-12 {
			t.Errorf("window at (%d,%d): order %.15g, gonum slope %.15g", i0, j0, got, beta)
		}
	}
	for k, g := range errs {
		x[k], y[k] = math.Log(h0/float64(int(1)<<k)), math.Log(meanAbs(g.V))
	}
	if _, beta := stat.LinearRegression(x, y, nil, false); math.Abs(m.Global-beta) > 1e-12 {
		t.Errorf("global order %.15g, gonum slope %.15g", m.Global, beta)
	}
}

// Without an exact solution: u_k = exact averages + a checkerboard local
// power law. The smooth part cancels in u_k - R u_{k+1} (additivity of the
// integral) and so does the checkerboard of grid k+1, leaving d_k =
// ±a h_k^p: each window inside a block recovers p. Tolerance 1e-9: the
// smooth part, of size 1, cancels only to about 1e-16 against differences
// down to 1e-5.
func TestWindowOrdersDifferencesPowerLaw(t *testing.T) {
	const nx, ny, b, h0, n, w = 10, 10, 5, 0.2, 5, 3
	rng := rand.New(rand.NewPCG(11, 12))
	a := make([]float64, nx*ny)
	for k := range a {
		a[k] = 0.5 + rng.Float64()
	}
	p := []float64{0.6, 1, 1.5, 2.3}
	grids := make([]Grid, n)
	for k := range grids {
		u := cubicAverages(nx<<k, ny<<k)
		e := blockErrors(nx, ny, b, k, h0, a, p)
		for c := range u.V {
			u.V[c] += e.V[c]
		}
		grids[k] = u
	}
	m, err := WindowOrdersDifferences(grids, w, 0)
	if err != nil {
		t.Fatal(err)
	}
	if m.Grids != n-1 || m.Masked != 0 {
		t.Fatalf("grids %d masked %d", m.Grids, m.Masked)
	}
	for j := range ny {
		for i := range nx {
			if i%b == 0 || i%b == b-1 || j%b == 0 || j%b == b-1 {
				continue
			}
			if q, want := m.Order[j*nx+i], p[(j/b)*2+i/b]; math.Abs(q-want) > 1e-9 {
				t.Errorf("cell (%d,%d): order %.12g, want %.12g", i, j, q, want)
			}
		}
	}
}

// A window is masked when the magnitude of any grid falls below the
// floor, even if the other grids are well above it.
func TestWindowOrdersMasking(t *testing.T) {
	const nx, ny = 9, 3
	errs := make([]Grid, 3)
	for k := range errs {
		r := 1 << k
		g := Grid{NX: r * nx, NY: r * ny, V: make([]float64, r*r*nx*ny)}
		for c := range g.V {
			g.V[c] = math.Pow(0.5, float64(2*k)) // order 2 everywhere
		}
		if k == 2 { // the finest grid at round-off in coarse columns 0..2
			for j := range g.NY {
				for i := range 3 * r {
					g.V[j*g.NX+i] = 1e-12
				}
			}
		}
		errs[k] = g
	}
	m, err := WindowOrdersExact(errs, 3, 1e-8)
	if err != nil {
		t.Fatal(err)
	}
	// The windows centred on columns 0 and 1 hold only round-off columns
	// of the finest grid: masked. Those on columns 2 and 3 hold one or two
	// of them: their finest mean stays above the floor but is too small,
	// so their order exceeds 2. From column 4 on: order 2.
	for j := range ny {
		for i := range nx {
			q := m.Order[j*nx+i]
			switch {
			case i <= 1:
				if !math.IsNaN(q) {
					t.Errorf("cell (%d,%d): order %v, want masked", i, j, q)
				}
			case i >= 4:
				if math.Abs(q-2) > 1e-12 {
					t.Errorf("cell (%d,%d): order %v, want 2", i, j, q)
				}
			default:
				if math.IsNaN(q) || q <= 2 {
					t.Errorf("cell (%d,%d): order %v, want above 2 (the finest grid's window is partly at round-off)", i, j, q)
				}
			}
		}
	}
	if m.Masked != 2*ny {
		t.Errorf("masked %d, want %d", m.Masked, 2*ny)
	}
}

func TestWindowOrdersErrors(t *testing.T) {
	g := func(nx, ny int) Grid { return Grid{NX: nx, NY: ny, V: make([]float64, nx*ny)} }
	for _, tc := range []struct {
		name string
		err  error
		want string
	}{
		{"one grid", func() error { _, err := WindowOrdersExact([]Grid{g(4, 4)}, 1, 0); return err }(), "at least two grids"},
		{"two grids, no exact", func() error { _, err := WindowOrdersDifferences([]Grid{g(4, 4), g(8, 8)}, 1, 0); return err }(), "at least three grids"},
		{"even window", func() error { _, err := WindowOrdersExact([]Grid{g(4, 4), g(8, 8)}, 2, 0); return err }(), "odd"},
		{"zero window", func() error { _, err := WindowOrdersExact([]Grid{g(4, 4), g(8, 8)}, 0, 0); return err }(), "odd"},
		{"ratios differ", func() error {
			_, err := WindowOrdersExact([]Grid{g(4, 4), g(8, 8), g(16, 16), g(48, 48)}, 1, 0)
			return err
		}(), "ratios differ"},
		{"not nested", func() error { _, err := WindowOrdersExact([]Grid{g(4, 4), g(8, 8), g(12, 16)}, 1, 0); return err }(), "not nested"},
		{"short values", func() error {
			_, err := WindowOrdersDifferences([]Grid{g(2, 2), {NX: 4, NY: 4, V: make([]float64, 15)}, g(8, 8)}, 3, 0)
			return err
		}(), "15 values"},
	} {
		if tc.err == nil || !strings.Contains(tc.err.Error(), tc.want) {
			t.Errorf("%s: %v, want %q", tc.name, tc.err, tc.want)
		}
	}
}
