package fv2d

import "fmt"

// quadrantsCase is a four-quadrant Riemann problem of the 2-D Euler
// equations on [0,1]^2 with transmissive sides: constant states in the
// quadrants around (xc, yc). config selects a configuration of Lax & Liu
// (1998, SIAM J. Sci. Comput. 19, "Solution of two-dimensional Riemann
// problems of gas dynamics by positive schemes"; states recalled from
// memory) and Complete writes its states into the resolved values;
// config=0 takes the states from the explicit parameters. There is
// no exact solution: the case reports functionals only. Configurations 3
// and 12 are symmetric under the reflection x <-> y (with u <-> v).
type quadrantsCase struct{}

func init() { Register(quadrantsCase{}) }

// quadConfig holds the primitive states (rho, u, v, p) of the quadrants
// NE, NW, SW, SE (Lax & Liu's 1, 2, 3, 4) and the output time.
type quadConfig struct {
	s [16]float64
	t float64
}

var quadConfigs = map[int]quadConfig{
	3: {[16]float64{ // four shocks
		1.5, 0, 0, 1.5,
		0.5323, 1.206, 0, 0.3,
		0.138, 1.206, 1.206, 0.029,
		0.5323, 0, 1.206, 0.3}, 0.3},
	6: {[16]float64{ // four contact discontinuities (vortex sheets)
		1, 0.75, -0.5, 1,
		2, 0.75, 0.5, 1,
		1, -0.75, 0.5, 1,
		3, -0.75, -0.5, 1}, 0.3},
	12: {[16]float64{ // two shocks, two contacts
		0.5313, 0, 0, 0.4,
		1, 0.7276, 0, 1,
		0.8, 0, 0, 1,
		1, 0, 0.7276, 1}, 0.25},
}

var quadStates = func() presetStates {
	ps := presetStates{selector: "config", preset: func(n int) ([]float64, float64) {
		c, ok := quadConfigs[n]
		if n == 0 || !ok {
			return nil, 0.25
		}
		return c.s[:], c.t
	}}
	c := quadConfigs[3]
	for q, quad := range []string{"ne", "nw", "sw", "se"} {
		for k, name := range []string{"rho", "u", "v", "p"} {
			ps.names = append(ps.names, name+"_"+quad)
			ps.defaults = append(ps.defaults, c.s[4*q+k])
		}
	}
	return ps
}()

func (quadrantsCase) Name() string       { return "quadrants" }
func (quadrantsCase) Equation() Equation { return Euler }
func (quadrantsCase) Summary() string {
	return "four-quadrant 2-D Riemann problem (Lax & Liu 1998 configurations 3, 6, 12 or explicit states)"
}

func (quadrantsCase) Params() []Param {
	ps := []Param{
		bounded("nx", Int, "200", 4, 1<<20, "cells in x"),
		bounded("ny", Int, "200", 1, 1<<20, "cells in y"),
		autoTEnd("the output time of the configuration (0.3, 0.3, 0.25 for 3, 6, 12; 0.25 for config=0)"),
		bounded("config", Int, "3", 0, 12, "Lax & Liu (1998) configuration 3, 6 or 12; 0 = explicit states"),
		{Name: "xc", Kind: Float, Default: "0.5", Min: 0, Max: 1, MinOpen: true, MaxOpen: true, Doc: "x of the quadrant corner"},
		{Name: "yc", Kind: Float, Default: "0.5", Min: 0, Max: 1, MinOpen: true, MaxOpen: true, Doc: "y of the quadrant corner"},
	}
	docs := make([]string, len(quadStates.names))
	for i, n := range quadStates.names {
		docs[i] = fmt.Sprintf("%s in quadrant %s", map[byte]string{'r': "density", 'u': "x velocity", 'v': "y velocity", 'p': "pressure"}[n[0]], n[len(n)-2:])
	}
	return append(ps, quadStates.params(docs, "set by config=3, 6, 12; give it with config=0")...)
}

// Validate accepts the known configurations only and rejects explicit
// states given together with one.
func (quadrantsCase) Validate(v Values) error {
	if n := v.Int("config"); n != 0 {
		if _, ok := quadConfigs[n]; !ok {
			return fmt.Errorf("parameter config: %d is not one of 0, 3, 6, 12", n)
		}
	}
	return quadStates.check(v)
}

// Complete sets the states and (for t_end=0) the final time of config N.
func (quadrantsCase) Complete(v Values) map[string]string { return quadStates.complete(v) }

// Setup reads the states from the completed values.
func (quadrantsCase) Setup(v Values) (*Problem, error) {
	gamma := v.Float("gamma")
	var cfg quadConfig
	copy(cfg.s[:], quadStates.values(v))
	xc, yc := v.Float("xc"), v.Float("yc")
	p := &Problem{
		Eq: Euler, Gamma: gamma, X0: 0, X1: 1, Y0: 0, Y1: 1,
		BC:   [4]Boundary{Transmissive, Transmissive, Transmissive, Transmissive},
		TEnd: v.Float("t_end"),
		Initial: func(x, y float64, w []float64) {
			q := 0 // NE
			switch {
			case x < xc && y >= yc:
				q = 1
			case x < xc && y < yc:
				q = 2
			case x >= xc && y < yc:
				q = 3
			}
			copy(w, cfg.s[4*q:4*q+4])
		},
		Functionals: []Functional{
			EntropyFunctional(gamma),
			ExtremumFunctional("rho_max", "largest cell density", 0, true),
			ProbeFunctional("rho_centre", "density in the cell containing (xc, yc)", xc, yc, 0),
		},
	}
	return p, nil
}
