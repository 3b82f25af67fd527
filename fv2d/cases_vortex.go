package fv2d

import "math"

// Products that meet an addition are written float64(x*y): an explicit
// conversion rounds, so the compiler cannot fuse them into one FMA (Go spec,
// "Arithmetic operators"), which would give other bits under GOAMD64=v3 or
// on arm64 than on the default build (docs/speed.md, "The same bits").

// vortexCase is the isentropic vortex of Shu (1998, NASA/CR-97-206253) and
// Yee, Sandham & Djomehri (1999, J. Comput. Phys. 150): a smooth exact
// solution of the 2-D Euler equations, the free stream (rho, u, v, p) =
// (1, u_inf, v_inf, 1) carrying the vortex
//
//	du = -beta/(2 pi) exp((1-r^2)/2) (y - yc),  dv = beta/(2 pi) exp((1-r^2)/2) (x - xc),
//	T = 1 - (gamma-1) beta^2/(8 gamma pi^2) exp(1-r^2),  rho = T^(1/(gamma-1)),  p = rho^gamma,
//
// on the periodic domain [0,10]^2, centred at (5,5) at t = 0. The exact
// solution is the initial state advected with (u_inf, v_inf); the distance
// to the centre is taken to its nearest periodic image. The default t_end = 2
// moves the vortex by (2, 2) (a full period is t = 10 with the default
// free stream).
type vortexCase struct{}

func init() { Register(vortexCase{}) }

func (vortexCase) Name() string       { return "vortex" }
func (vortexCase) Equation() Equation { return Euler }
func (vortexCase) Summary() string {
	return "isentropic vortex advected on the periodic square [0,10]^2 (Shu 1998; smooth, exact)"
}

func (vortexCase) Params() []Param {
	return []Param{
		{Name: "t_end", Kind: Float, Default: "2", Min: 0, Max: Unbounded, Doc: "final time (10 = one period with u_inf = v_inf = 1)"},
		positiveParam("beta", "5", "vortex strength"),
		floatParam("u_inf", "1", "free-stream x velocity"),
		floatParam("v_inf", "1", "free-stream y velocity"),
	}
}

func (vortexCase) Setup(v Values) (*Problem, error) {
	gamma, beta := v.Float("gamma"), v.Float("beta")
	uinf, vinf := v.Float("u_inf"), v.Float("v_inf")
	const L, xc, yc = 10.0, 5.0, 5.0
	amp := beta / (2 * math.Pi)
	tamp := (gamma - 1) * beta * beta / (8 * gamma * math.Pi * math.Pi)
	state := func(dx, dy float64, w []float64) {
		r2 := float64(dx*dx) + float64(dy*dy)
		e := exponential(0.5 * (1 - r2))
		T := 1 - float64(tamp*e*e)
		rho := power(T, 1/(gamma-1))
		w[0], w[1], w[2], w[3] = rho, uinf-float64(amp*e*dy), vinf+float64(amp*e*dx), rho*T // p = rho^gamma = rho T
	}
	exact := func(x, y, t float64, w []float64) {
		state(nearestImage(x-xc-float64(uinf*t), L), nearestImage(y-yc-float64(vinf*t), L), w)
	}
	return &Problem{
		Eq: Euler, Gamma: gamma, X0: 0, X1: L, Y0: 0, Y1: L,
		BC:      [4]Boundary{Periodic, Periodic, Periodic, Periodic},
		Initial: func(x, y float64, w []float64) { exact(x, y, 0, w) },
		Exact:   exact,
		Functionals: []Functional{
			EntropyFunctional(gamma),
			ExtremumFunctional("rho_min", "smallest cell density (vortex core)", 0, false),
		},
	}, nil
}

// nearestImage maps d to its periodic image of period L in [-L/2, L/2).
func nearestImage(d, L float64) float64 {
	return d - float64(L*math.Floor(d/L+0.5))
}
