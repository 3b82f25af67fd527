package fv2d

import (
	"fmt"
	"math"
)

// Products that meet an addition are written float64(x*y): an explicit
// conversion rounds, so the compiler cannot fuse them into one FMA (Go spec,
// "Arithmetic operators"), which would give other bits under GOAMD64=v3 or
// on arm64 than on the default build (docs/speed.md, "The same bits").

// The Burgers cases. For u_t + (u^2/2)_x + (u^2/2)_y = 0 the characteristics
// are straight lines (dx/dt, dy/dt) = (u, u) along which u is constant
// (method of characteristics, a law; docs/references.md §2, §3).

func init() {
	Register(burgersSineCase{})
	Register(burgersRiemannCase{})
	Register(burgersDiagonalCase{})
}

// sineWaveParams are the parameters of u0 = a + b sin(2 pi k s).
func sineWaveParams(tEnd, a, b, doc string) []Param {
	return []Param{
		{Name: "t_end", Kind: Float, Default: tEnd, Min: 0, Max: Unbounded, Doc: "final time; must be before the breaking time " + doc},
		floatParam("a", a, "mean of u0"),
		floatParam("b", b, "amplitude of u0"),
		bounded("k", Int, "1", 1, 64, "wave number (periods across the domain)"),
	}
}

// sineWave is u0(s) = a + b sin(kappa s) transported with speed c u along
// s, before it breaks at t_b = 1 / (c |b| kappa) (docs/references.md §3).
type sineWave struct{ a, b, kappa, c float64 }

func newSineWave(v Values, c float64) (sineWave, error) {
	w := sineWave{a: v.Float("a"), b: v.Float("b"), kappa: 2 * math.Pi * float64(v.Int("k")), c: c}
	if t := v.Float("t_end"); w.b != 0 && t >= w.breaking() {
		return w, fmt.Errorf("parameter t_end: %g is not before the breaking time t_b = %.6g", t, w.breaking())
	}
	return w, nil
}

func (w sineWave) breaking() float64 { return 1 / (w.c * math.Abs(w.b) * w.kappa) }

// at returns u(s, t): the root of F(u) = u - a - b sin(kappa (s - c u t)),
// by Newton's method safeguarded by bisection on [a-|b|, a+|b|]. For
// t < t_b, F' = 1 + b kappa c t cos(.) > 0, so the root is unique.
func (w sineWave) at(s, t float64) float64 {
	u0 := w.a + float64(w.b*sine(w.kappa*s))
	if t == 0 || w.b == 0 {
		return u0
	}
	lo, hi := w.a-math.Abs(w.b), w.a+math.Abs(w.b)
	u, ct := u0, w.c*t
	for it := 0; it < 100; it++ {
		ph := w.kappa * (s - float64(ct*u))
		f := u - w.a - float64(w.b*sine(ph))
		if f > 0 {
			hi = u
		} else {
			lo = u
		}
		du := f / (1 + float64(w.b*w.kappa*ct*cosine(ph)))
		next := u - du
		if !(next > lo && next < hi) {
			next = 0.5 * (lo + hi)
		}
		if math.Abs(next-u) <= 1e-15*(1+math.Abs(u)) {
			return next
		}
		u = next
	}
	return u
}

func burgersFunctionals() []Functional {
	return []Functional{
		ExtremumFunctional("u_max", "largest cell value of u", 0, true),
		{Name: "energy", Doc: "domain integral of u^2/2 (conserved while the solution is smooth)",
			Eval: func(s *State) float64 { return s.Integrate(func(w []float64) float64 { return 0.5 * w[0] * w[0] }) }},
	}
}

func periodicSquare(eq Equation) *Problem {
	return &Problem{Eq: eq, X0: 0, X1: 1, Y0: 0, Y1: 1, BC: [4]Boundary{Periodic, Periodic, Periodic, Periodic}}
}

// burgersSineCase: u0 = a + b sin(2 pi k x) on the periodic unit square,
// constant in y, so the 2-D law reduces to u_t + (u^2/2)_x = 0; exact by
// characteristics, u = u0(x - u t), before the breaking time 1/(2 pi k |b|).
type burgersSineCase struct{}

func (burgersSineCase) Name() string       { return "burgers-sine" }
func (burgersSineCase) Equation() Equation { return Burgers }
func (burgersSineCase) Summary() string {
	return "Burgers sine wave u0 = a + b sin(2 pi k x) before it breaks (smooth, exact by characteristics)"
}
func (burgersSineCase) Params() []Param {
	return append(sineWaveParams("0.25", "1", "0.5", "1/(2 pi k |b|)"), bounded("ny", Int, "4", 1, 1<<20, "cells in y (the solution is constant in y)"))
}
func (burgersSineCase) Validate(v Values) error { _, err := newSineWave(v, 1); return err }

func (burgersSineCase) Setup(v Values) (*Problem, error) {
	w, err := newSineWave(v, 1)
	if err != nil {
		return nil, err
	}
	p := periodicSquare(Burgers)
	p.Exact = func(x, _, t float64, u []float64) { u[0] = w.at(x, t) }
	p.Initial = func(x, y float64, u []float64) { p.Exact(x, y, 0, u) }
	p.Functionals = burgersFunctionals()
	return p, nil
}

// burgersDiagonalCase: u0 = g(x + y) = a + b sin(2 pi k (x + y)) on the
// periodic unit square. u stays a function of s = x + y, and along the
// characteristics ds/dt = 2u, so u = g(s - 2 u t) before the breaking time
// 1/(4 pi k |b|) (docs/references.md §3, derived: u_t + u u_x + u u_y = 0).
type burgersDiagonalCase struct{}

func (burgersDiagonalCase) Name() string       { return "burgers-diagonal" }
func (burgersDiagonalCase) Equation() Equation { return Burgers }
func (burgersDiagonalCase) Summary() string {
	return "Burgers wave u0 = a + b sin(2 pi k (x+y)) along the diagonal before it breaks (smooth, exact)"
}
func (burgersDiagonalCase) Params() []Param {
	return sineWaveParams("0.2", "0.5", "0.25", "1/(4 pi k |b|)")
}
func (burgersDiagonalCase) Validate(v Values) error { _, err := newSineWave(v, 2); return err }

func (burgersDiagonalCase) Setup(v Values) (*Problem, error) {
	w, err := newSineWave(v, 2)
	if err != nil {
		return nil, err
	}
	p := periodicSquare(Burgers)
	p.Exact = func(x, y, t float64, u []float64) { u[0] = w.at(x+y, t) }
	p.Initial = func(x, y float64, u []float64) { p.Exact(x, y, 0, u) }
	p.Functionals = burgersFunctionals()
	return p, nil
}

// burgersRiemannCase: u_l for x < x0, u_r for x > x0 on the unit square with
// transmissive sides. u_l > u_r is a shock moving at the Rankine-Hugoniot
// speed (u_l + u_r)/2; u_l < u_r opens into the rarefaction fan
// u = (x - x0)/t (Lax entropy condition; docs/references.md §2).
type burgersRiemannCase struct{}

func (burgersRiemannCase) Name() string       { return "burgers-riemann" }
func (burgersRiemannCase) Equation() Equation { return Burgers }
func (burgersRiemannCase) Summary() string {
	return "Burgers Riemann problem along x: a shock or a rarefaction fan (exact)"
}
func (burgersRiemannCase) Params() []Param {
	return []Param{
		{Name: "t_end", Kind: Float, Default: "0.5", Min: 0, Max: Unbounded, Doc: "final time"},
		bounded("ny", Int, "4", 1, 1<<20, "cells in y (the solution is constant in y)"),
		floatParam("u_l", "2", "state left of x0"),
		floatParam("u_r", "0", "state right of x0"),
		{Name: "x0", Kind: Float, Default: "0.25", Min: 0, Max: 1, MinOpen: true, MaxOpen: true, Doc: "initial jump position, in (0,1)"},
	}
}

func (burgersRiemannCase) Setup(v Values) (*Problem, error) {
	ul, ur, x0 := v.Float("u_l"), v.Float("u_r"), v.Float("x0")
	p := &Problem{Eq: Burgers, X0: 0, X1: 1, Y0: 0, Y1: 1,
		BC: [4]Boundary{Transmissive, Transmissive, Transmissive, Transmissive}}
	p.Exact = func(x, _, t float64, u []float64) { u[0] = burgersRiemann(ul, ur, x0, x, t) }
	p.Breaks = func(t float64) (xs, ys []float64) { return burgersRiemannBreaks(ul, ur, x0, t), nil }
	p.Initial = func(x, y float64, u []float64) { p.Exact(x, y, 0, u) }
	p.Functionals = append(burgersFunctionals(), Functional{
		Name: "front_x", Doc: "where u crosses (u_l + u_r)/2 on the middle row (the shock, or the fan's centre)",
		Eval: func(s *State) float64 { return crossing(s, s.NY/2, 0.5*(ul+ur)) },
	})
	return p, nil
}

// burgersRiemann is the entropy solution of the Burgers Riemann problem.
func burgersRiemann(ul, ur, x0, x, t float64) float64 {
	if t <= 0 {
		if x < x0 {
			return ul
		}
		return ur
	}
	xi := (x - x0) / t
	if ul > ur { // shock
		if xi < 0.5*(ul+ur) {
			return ul
		}
		return ur
	}
	switch {
	case xi <= ul:
		return ul
	case xi >= ur:
		return ur
	}
	return xi
}

// burgersRiemannBreaks returns where burgersRiemann is not smooth at time t:
// the shock x0 + t (u_l + u_r)/2, or the edges x0 + u_l t and x0 + u_r t of
// the fan (u linear in x between them); x0 for t <= 0.
func burgersRiemannBreaks(ul, ur, x0, t float64) []float64 {
	switch {
	case t <= 0:
		return []float64{x0}
	case ul > ur:
		return []float64{x0 + float64(0.5*(ul+ur)*t)}
	}
	return []float64{x0 + float64(ul*t), x0 + float64(ur*t)}
}

// crossing returns the x where the conserved variable 0 on row j first
// crosses level c, by linear interpolation between cell centres; NaN if it
// does not.
func crossing(s *State, j int, c float64) float64 {
	prev := s.At(0, 0, j)
	for i := 1; i < s.NX; i++ {
		cur := s.At(0, i, j)
		if (prev-c)*(cur-c) <= 0 && prev != cur {
			x0, _ := s.Center(i-1, j)
			return x0 + s.DX*(c-prev)/(cur-prev)
		}
		prev = cur
	}
	return math.NaN()
}
