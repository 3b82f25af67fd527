package fv2d

// Manufactured-solution cases (method of manufactured solutions: Roache
// 1998; Roy et al., Int. J. Numer. Meth. Fluids 44, 2004; see mms.go). The
// fields are smooth and periodic on the unit square, the source terms are in
// closed form, and the exact solution is the manufactured field itself, so
// errors and observed orders of any scheme setting can be measured.

type burgersMMSCase struct{}

type eulerMMSCase struct{}

func init() {
	Register(burgersMMSCase{})
	Register(eulerMMSCase{})
}

var periodicBox = [4]Boundary{Periodic, Periodic, Periodic, Periodic}

func mmsTEnd() Param {
	return Param{Name: "t_end", Kind: Float, Default: "0.5", Min: 0, Max: Unbounded, Doc: "final time"}
}

func (burgersMMSCase) Name() string       { return "burgers-mms" }
func (burgersMMSCase) Equation() Equation { return Burgers }
func (burgersMMSCase) Summary() string {
	return "manufactured smooth Burgers solution with source on the periodic unit square (Roache 1998)"
}
func (burgersMMSCase) Params() []Param { return []Param{mmsTEnd()} }

func (burgersMMSCase) Setup(v Values) (*Problem, error) {
	return &Problem{
		Eq: Burgers, X0: 0, X1: 1, Y0: 0, Y1: 1, BC: periodicBox,
		Initial: func(x, y float64, w []float64) { mmsBurgersExact(x, y, 0, w) },
		Exact:   mmsBurgersExact,
		Source:  mmsBurgersSource,
		Functionals: []Functional{
			ExtremumFunctional("u_max", "largest cell value of u", 0, true),
		},
	}, nil
}

func (eulerMMSCase) Name() string       { return "euler-mms" }
func (eulerMMSCase) Equation() Equation { return Euler }
func (eulerMMSCase) Summary() string {
	return "manufactured smooth Euler solution with sources on the periodic unit square (Roy et al. 2004)"
}
func (eulerMMSCase) Params() []Param { return []Param{mmsTEnd()} }

func (eulerMMSCase) Setup(v Values) (*Problem, error) {
	gamma := v.Float("gamma")
	return &Problem{
		Eq: Euler, Gamma: gamma, X0: 0, X1: 1, Y0: 0, Y1: 1, BC: periodicBox,
		Initial: func(x, y float64, w []float64) { mmsEulerExact(x, y, 0, w) },
		Exact:   mmsEulerExact,
		Source:  mmsEulerSource(gamma),
		Functionals: []Functional{
			EntropyFunctional(gamma),
			ExtremumFunctional("rho_min", "smallest cell density", 0, false),
		},
	}, nil
}
