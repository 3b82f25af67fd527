package fv2d

import (
	"fmt"
	"math"
)

// Products that meet an addition are written float64(x*y): an explicit
// conversion rounds, so the compiler cannot fuse them into one FMA (Go spec,
// "Arithmetic operators"), which would give other bits under GOAMD64=v3 or
// on arm64 than on the default build (docs/speed.md, "The same bits").

// shocktubeCase is a Riemann problem of the Euler equations along x or y on
// [0,1]^2 with transmissive sides: the left state for s < x0 and the right
// state for s > x0, s the coordinate along axis. test=1..5 selects the
// states, diaphragm and output time of the five tests of Toro (2009, ch. 4)
// and Complete writes them into the resolved values; test=0 takes the
// states from rho_l u_l p_l rho_r u_r p_r and x0. The exact
// solution comes from SolveRiemann (none when the data generate vacuum).
type shocktubeCase struct{}

func init() { Register(shocktubeCase{}) }

// toroTube is one of the five Riemann problems of Toro (2009) ch. 4, with its
// diaphragm position and output time (recalled from memory; see
// docs/references.md §1).
type toroTube struct {
	rl, ul, pl, rr, ur, pr, x0, t float64
}

var toroTubes = [...]toroTube{
	1: {1, 0, 1, 0.125, 0, 0.1, 0.5, 0.25},
	2: {1, -2, 0.4, 1, 2, 0.4, 0.5, 0.15},
	3: {1, 0, 1000, 1, 0, 0.01, 0.5, 0.012},
	4: {1, 0, 0.01, 1, 0, 100, 0.5, 0.035},
	5: {5.99924, 19.5975, 460.894, 5.99242, -6.19633, 46.0950, 0.5, 0.035},
}

var tubeStates = presetStates{
	selector: "test",
	names:    []string{"rho_l", "u_l", "p_l", "rho_r", "u_r", "p_r", "x0"},
	defaults: []float64{1, 0, 1, 0.125, 0, 0.1, 0.5},
	preset: func(n int) ([]float64, float64) {
		if n == 0 {
			return nil, 0.2
		}
		t := toroTubes[n]
		return []float64{t.rl, t.ul, t.pl, t.rr, t.ur, t.pr, t.x0}, t.t
	},
}

func (shocktubeCase) Name() string       { return "shocktube" }
func (shocktubeCase) Equation() Equation { return Euler }
func (shocktubeCase) Summary() string {
	return "Euler Riemann problem along x or y: Toro's tests 1-5 or explicit states (exact)"
}

func (shocktubeCase) Params() []Param {
	ps := []Param{
		bounded("nx", Int, "100", 4, 1<<20, "cells in x"),
		bounded("ny", Int, "100", 1, 1<<20, "cells in y"),
		autoTEnd("the output time of the test (0.25 0.15 0.012 0.035 0.035 for tests 1-5; 0.2 for test=0)"),
		bounded("test", Int, "1", 0, 5, "Toro (2009) ch. 4 test 1-5 (states, x0 and time); 0 = explicit states"),
		{Name: "axis", Kind: Choice, Default: "x", Choices: []string{"x", "y"}, Min: Unbounded, Max: Unbounded,
			Doc: "direction of the tube"},
	}
	return append(ps, tubeStates.params([]string{
		"left density", "left normal velocity", "left pressure",
		"right density", "right normal velocity", "right pressure",
		"diaphragm position along the axis, in (0,1)",
	}, "set by test=1..5; give it with test=0")...)
}

// Validate rejects explicit states given together with test=N and a
// diaphragm outside the domain.
func (shocktubeCase) Validate(v Values) error {
	if err := tubeStates.check(v); err != nil {
		return err
	}
	if x0 := v.Float("x0"); !(x0 > 0 && x0 < 1) {
		return fmt.Errorf("parameter x0: %g is outside (0, 1)", x0)
	}
	return nil
}

// Complete sets the states, x0 and (for t_end=0) the final time of test N.
func (shocktubeCase) Complete(v Values) map[string]string { return tubeStates.complete(v) }

// Setup reads the states from the completed values.
func (shocktubeCase) Setup(v Values) (*Problem, error) {
	gamma := v.Float("gamma")
	var tube toroTube
	s := tubeStates.values(v)
	tube.rl, tube.ul, tube.pl, tube.rr, tube.ur, tube.pr, tube.x0 = s[0], s[1], s[2], s[3], s[4], s[5], s[6]
	p := &Problem{
		Eq: Euler, Gamma: gamma, X0: 0, X1: 1, Y0: 0, Y1: 1,
		BC:   [4]Boundary{Transmissive, Transmissive, Transmissive, Transmissive},
		TEnd: v.Float("t_end"),
	}
	alongY := v.Get("axis") == "y"
	// put writes the 1-D state (rho, normal velocity, p) at coordinate s.
	put := func(rho, un, pr float64, w []float64) {
		w[0], w[1], w[2], w[3] = rho, un, 0, pr
		if alongY {
			w[1], w[2] = 0, un
		}
	}
	coord := func(x, y float64) float64 {
		if alongY {
			return y
		}
		return x
	}
	p.Initial = func(x, y float64, w []float64) {
		if coord(x, y) < tube.x0 {
			put(tube.rl, tube.ul, tube.pl, w)
		} else {
			put(tube.rr, tube.ur, tube.pr, w)
		}
	}
	if sol, err := SolveRiemann(gamma, tube.rl, tube.ul, tube.pl, tube.rr, tube.ur, tube.pr); err == nil {
		p.Exact = func(x, y, t float64, w []float64) {
			if t <= 0 {
				p.Initial(x, y, w)
				return
			}
			r, u, pr := sol.Sample((coord(x, y) - tube.x0) / t)
			put(r, u, pr, w)
		}
		p.Breaks = func(t float64) (xs, ys []float64) {
			if alongY {
				return nil, sol.WavePositions(tube.x0, t)
			}
			return sol.WavePositions(tube.x0, t), nil
		}
	}
	p.Functionals = []Functional{
		EntropyFunctional(gamma),
		{Name: "front_s", Doc: "position along the axis of the steepest pressure jump on the middle grid line (a shock)",
			Eval: func(s *State) float64 { return steepestJump(s, alongY, gamma) }},
	}
	return p, nil
}

// steepestJump returns the coordinate along the tube axis of the face with
// the largest pressure jump on the grid line through the middle of the
// domain.
func steepestJump(s *State, alongY bool, gamma float64) float64 {
	n, m := s.NX, s.NY
	if alongY {
		n, m = m, n
	}
	w0, w1 := make([]float64, 4), make([]float64, 4)
	at := func(k int, w []float64) {
		if alongY {
			s.Primitive(m/2, k, w)
		} else {
			s.Primitive(k, m/2, w)
		}
	}
	best, pos := -1.0, math.NaN()
	at(0, w0)
	for k := 1; k < n; k++ {
		at(k, w1)
		if d := math.Abs(w1[3] - w0[3]); d > best {
			best = d
			if alongY {
				pos = s.Y0 + float64(float64(k)*s.DY)
			} else {
				pos = s.X0 + float64(float64(k)*s.DX)
			}
		}
		w0, w1 = w1, w0
	}
	return pos
}
