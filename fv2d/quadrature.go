package fv2d

import (
	"math"
	"sync"
)

// Products that meet an addition are written float64(x*y): an explicit
// conversion rounds, so the compiler cannot fuse them into one FMA (Go spec,
// "Arithmetic operators"), which would give other bits under GOAMD64=v3 or
// on arm64 than on the default build (docs/speed.md, "The same bits").

// gaussLegendre returns the n nodes and weights of the Gauss-Legendre rule on
// [-1, 1]: int_{-1}^{1} f(x) dx ≈ sum_i w_i f(x_i), exact for polynomials of
// degree <= 2n-1. The nodes are the roots of the Legendre polynomial P_n,
// found by Newton's method from the Chebyshev-like first guess
// cos(pi (i + 3/4) / (n + 1/2)), with P_n and P_n' from the three-term
// recurrence (k+1) P_{k+1} = (2k+1) x P_k - k P_{k-1}; the weights are
// w_i = 2 / ((1 - x_i^2) P_n'(x_i)^2) (Abramowitz & Stegun 25.4.29; Press et
// al., Numerical Recipes, §4.6). The nodes are returned in increasing order,
// and the rule is computed once per n and shared: callers must not modify
// the slices.
func gaussLegendre(n int) (x, w []float64) {
	glMu.Lock()
	defer glMu.Unlock()
	if r, ok := glCache[n]; ok {
		return r[0], r[1]
	}
	x, w = make([]float64, n), make([]float64, n)
	for i := 0; i < (n+1)/2; i++ {
		z := cosine(math.Pi * (float64(i) + 0.75) / (float64(n) + 0.5))
		var dp float64
		for it := 0; it < 100; it++ {
			var p float64
			p, dp = legendre(n, z)
			dz := p / dp
			z -= dz
			if math.Abs(dz) <= 1e-16 {
				break
			}
		}
		_, dp = legendre(n, z)
		// z is the i-th largest root; store symmetric pairs.
		x[i], x[n-1-i] = -z, z
		wi := 2 / ((1 - float64(z*z)) * dp * dp)
		w[i], w[n-1-i] = wi, wi
	}
	if n%2 == 1 {
		x[n/2] = 0 // exact by symmetry
	}
	glCache[n] = [2][]float64{x, w}
	return x, w
}

var (
	glMu    sync.Mutex
	glCache = map[int][2][]float64{}
)

// legendre returns P_n(x) and P_n'(x) by the three-term recurrence.
func legendre(n int, x float64) (p, dp float64) {
	p0, p1 := 1.0, x
	if n == 0 {
		return 1, 0
	}
	for k := 1; k < n; k++ {
		p0, p1 = p1, (float64(float64(2*k+1)*x*p1)-float64(float64(k)*p0))/float64(k+1)
	}
	// P_n'(x) = n (x P_n - P_{n-1}) / (x^2 - 1)
	return p1, float64(n) * (float64(x*p1) - p0) / (float64(x*x) - 1)
}

// cellRule is the tensor Gauss-Legendre rule of a cell of size dx x dy:
// offsets from the cell's lower-left corner and weights that sum to 1, so
// that the cell average of f is ≈ sum_k w_k f(x_c + ox_k, y_c + oy_k).
type cellRule struct {
	ox, oy, w []float64
}

func newCellRule(n int, dx, dy float64) cellRule {
	x, w := gaussLegendre(n)
	var r cellRule
	for j := range x {
		for i := range x {
			r.ox = append(r.ox, 0.5*dx*(1+x[i]))
			r.oy = append(r.oy, 0.5*dy*(1+x[j]))
			r.w = append(r.w, 0.25*w[i]*w[j])
		}
	}
	return r
}

// cellAverages writes into u (one flat slice per conserved variable, the
// State layout) the cell averages of the conserved variables of the
// primitive field prim(x, y, w), by the tensor rule r. It runs the rows of
// the grid on up to threads goroutines; each cell is independent, so the
// result does not depend on threads.
func cellAverages(s *State, r cellRule, threads int, prim func(x, y float64, w []float64)) {
	nv := len(s.U)
	parallelRows(s.NY, threads, func(j0, j1 int) {
		w := make([]float64, nv)
		c := make([]float64, nv)
		acc := make([]float64, nv)
		for j := j0; j < j1; j++ {
			y0 := s.Y0 + float64(float64(j)*s.DY)
			for i := 0; i < s.NX; i++ {
				x0 := s.X0 + float64(float64(i)*s.DX)
				for k := range acc {
					acc[k] = 0
				}
				for q := range r.w {
					prim(x0+r.ox[q], y0+r.oy[q], w)
					toConserved(s.Eq, s.Gamma, w, c)
					for k := range acc {
						acc[k] += float64(r.w[q] * c[k])
					}
				}
				idx := s.Index(i, j)
				for k := range acc {
					s.U[k][idx] = acc[k]
				}
			}
		}
	})
}

// parallelRows calls f on contiguous blocks [j0, j1) covering [0, n), on up
// to threads goroutines, and waits for them. Used for set-up work (cell
// averages, errors), not in the time-stepping loop.
func parallelRows(n, threads int, f func(j0, j1 int)) {
	if threads > n {
		threads = n
	}
	if threads <= 1 {
		f(0, n)
		return
	}
	var wg sync.WaitGroup
	for t := 0; t < threads; t++ {
		j0, j1 := t*n/threads, (t+1)*n/threads
		wg.Add(1)
		go func() { defer wg.Done(); f(j0, j1) }()
	}
	wg.Wait()
}
