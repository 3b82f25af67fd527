package fv2d

import "math"

// Products that meet an addition are written float64(x*y): an explicit
// conversion rounds, so the compiler cannot fuse them into one FMA (Go spec,
// "Arithmetic operators"), which would give other bits under GOAMD64=v3 or
// on arm64 than on the default build (docs/speed.md, "The same bits").

// neumaier is a compensated sum (Neumaier 1974, the improved Kahan-Babuska
// summation): the running error of each addition is kept in c and added at
// the end, so the sum of n terms is accurate to about one rounding of the
// result instead of n of them.
type neumaier struct{ s, c float64 }

func (n *neumaier) add(x float64) {
	t := n.s + x
	if math.Abs(n.s) >= math.Abs(x) {
		n.c += (n.s - t) + x
	} else {
		n.c += (x - t) + n.s
	}
	n.s = t
}

func (n *neumaier) sum() float64 { return n.s + n.c }

// Totals returns the domain integral sum_ij U_k(i,j) dx dy of each conserved
// variable k, by compensated summation.
func (s *State) Totals() []float64 {
	out := make([]float64, len(s.U))
	for k, q := range s.U {
		var acc neumaier
		for j := 0; j < s.NY; j++ {
			row := q[s.Index(0, j) : s.Index(0, j)+s.NX]
			for _, x := range row {
				acc.add(x)
			}
		}
		out[k] = acc.sum() * s.DX * s.DY
	}
	return out
}

// errorNorms compares the cell averages of s with the exact cell averages
// ex (same layout) and returns per conserved variable
// L1 = sum |e| dx dy / A, L2 = sqrt(sum e^2 dx dy / A), Linf = max |e|,
// with A the domain area (so L1 and L2 are mean values per unit area).
func errorNorms(s, ex *State) []Norms {
	out := make([]Norms, len(s.U))
	n := float64(s.NX * s.NY) // dx dy / A = 1/n
	for k := range s.U {
		var l1, l2 neumaier
		linf := 0.0
		for j := 0; j < s.NY; j++ {
			a := s.U[k][s.Index(0, j) : s.Index(0, j)+s.NX]
			b := ex.U[k][s.Index(0, j) : s.Index(0, j)+s.NX]
			for i, x := range a {
				e := math.Abs(x - b[i])
				l1.add(e)
				l2.add(float64(e * e))
				if e > linf || e != e {
					linf = e
				}
			}
		}
		out[k] = Norms{L1: l1.sum() / n, L2: math.Sqrt(l2.sum() / n), Linf: linf}
	}
	return out
}

// Integrate returns the domain integral of f(w) over the cells of s, by the
// midpoint rule in each cell with compensated summation, where w is the
// primitive state of the cell. It is the building block of functionals
// such as the total entropy.
func (s *State) Integrate(f func(w []float64) float64) float64 {
	w := make([]float64, len(s.U))
	var acc neumaier
	for j := 0; j < s.NY; j++ {
		for i := 0; i < s.NX; i++ {
			s.Primitive(i, j, w)
			acc.add(f(w))
		}
	}
	return acc.sum() * s.DX * s.DY
}

// EntropyFunctional is the total entropy integral of rho ln(p / rho^gamma)
// over the domain (a smooth functional of Euler runs; the physical entropy
// per unit volume up to sign and constants).
func EntropyFunctional(gamma float64) Functional {
	return Functional{
		Name: "entropy",
		Doc:  "domain integral of rho ln(p / rho^gamma)",
		Eval: func(s *State) float64 {
			return s.Integrate(func(w []float64) float64 {
				return w[0] * (logarithm(w[3]) - float64(gamma*logarithm(w[0])))
			})
		},
	}
}

// ProbeFunctional is the primitive variable k at the cell that contains
// (x, y).
func ProbeFunctional(name, doc string, x, y float64, k int) Functional {
	return Functional{Name: name, Doc: doc, Eval: func(s *State) float64 {
		i := int(math.Floor((x - s.X0) / s.DX))
		j := int(math.Floor((y - s.Y0) / s.DY))
		i = min(max(i, 0), s.NX-1)
		j = min(max(j, 0), s.NY-1)
		w := make([]float64, len(s.U))
		s.Primitive(i, j, w)
		return w[k]
	}}
}

// ExtremumFunctional is the largest (max=true) or smallest primitive
// variable k over the cells.
func ExtremumFunctional(name, doc string, k int, max bool) Functional {
	return Functional{Name: name, Doc: doc, Eval: func(s *State) float64 {
		w := make([]float64, len(s.U))
		best := math.Inf(1)
		if max {
			best = math.Inf(-1)
		}
		for j := 0; j < s.NY; j++ {
			for i := 0; i < s.NX; i++ {
				s.Primitive(i, j, w)
				if (max && w[k] > best) || (!max && w[k] < best) {
					best = w[k]
				}
			}
		}
		return best
	}}
}
