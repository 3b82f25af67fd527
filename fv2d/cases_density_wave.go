package fv2d

import "math"

// Products that meet an addition are written float64(x*y): an explicit
// conversion rounds, so the compiler cannot fuse them into one FMA (Go spec,
// "Arithmetic operators"), which would give other bits under GOAMD64=v3 or
// on arm64 than on the default build (docs/speed.md, "The same bits").

// densityWaveCase is a smooth density wave advected by a uniform flow on the
// periodic unit square: rho = 1 + amp sin(2 pi (kx x + ky y)), u, v, p
// uniform. Velocity and pressure stay uniform, so the Euler equations
// reduce to linear advection of rho and the exact solution is
// rho(x - u t, y - v t) (common practice).
type densityWaveCase struct{}

func init() { Register(densityWaveCase{}) }

func (densityWaveCase) Name() string       { return "density-wave" }
func (densityWaveCase) Equation() Equation { return Euler }
func (densityWaveCase) Summary() string {
	return "sine density wave advected by a uniform flow on the periodic unit square (smooth, exact)"
}

func (densityWaveCase) Params() []Param {
	return []Param{
		{Name: "amp", Kind: Float, Default: "0.2", Min: -1, Max: 1, MinOpen: true, MaxOpen: true, Doc: "density amplitude, |amp| < 1"},
		bounded("kx", Int, "1", -64, 64, "wave number in x (periods across the domain)"),
		bounded("ky", Int, "1", -64, 64, "wave number in y"),
		floatParam("u", "1", "uniform x velocity"),
		floatParam("v", "0.5", "uniform y velocity"),
		positiveParam("p", "1", "uniform pressure"),
	}
}

func (densityWaveCase) Setup(v Values) (*Problem, error) {
	gamma, amp := v.Float("gamma"), v.Float("amp")
	kx, ky := 2*math.Pi*float64(v.Int("kx")), 2*math.Pi*float64(v.Int("ky"))
	u, vv, p := v.Float("u"), v.Float("v"), v.Float("p")
	exact := func(x, y, t float64, w []float64) {
		w[0] = 1 + float64(amp*sine(float64(kx*(x-float64(u*t)))+float64(ky*(y-float64(vv*t)))))
		w[1], w[2], w[3] = u, vv, p
	}
	return &Problem{
		Eq: Euler, Gamma: gamma, X0: 0, X1: 1, Y0: 0, Y1: 1,
		BC:      [4]Boundary{Periodic, Periodic, Periodic, Periodic},
		Initial: func(x, y float64, w []float64) { exact(x, y, 0, w) },
		Exact:   exact,
		Functionals: []Functional{
			EntropyFunctional(gamma),
			ProbeFunctional("rho_centre", "density in the cell containing (0.5, 0.5)", 0.5, 0.5, 0),
		},
	}, nil
}
