package fv2d

// Manufactured-solution cases (method of manufactured solutions: Roache
// 1998; Roy et al., Int. J. Numer. Meth. Fluids 44, 2004; see mms.go). The
// fields are smooth and periodic on the unit square, the source terms are in
// closed form, and the exact solution is the manufactured field itself, so
// errors and observed orders of any scheme setting can be measured.

// mmsCase is burgers-mms (eq = Burgers) or euler-mms (eq = Euler).
type mmsCase struct{ eq Equation }

func init() {
	Register(mmsCase{Burgers})
	Register(mmsCase{Euler})
}

var periodicBox = [4]Boundary{Periodic, Periodic, Periodic, Periodic}

func (c mmsCase) Name() string       { return c.eq.String() + "-mms" }
func (c mmsCase) Equation() Equation { return c.eq }
func (c mmsCase) Summary() string {
	if c.eq == Euler {
		return "manufactured smooth Euler solution with sources on the periodic unit square (Roy et al. 2004)"
	}
	return "manufactured smooth Burgers solution with source on the periodic unit square (Roache 1998)"
}

func (mmsCase) Params() []Param {
	return []Param{{Name: "t_end", Kind: Float, Default: "0.5", Min: 0, Max: Unbounded, Doc: "final time"}}
}

func (c mmsCase) Setup(v Values) (*Problem, error) {
	p := &Problem{Eq: c.eq, X0: 0, X1: 1, Y0: 0, Y1: 1, BC: periodicBox}
	if c.eq == Burgers {
		p.Exact, p.Source = mmsBurgersExact, mmsBurgersSource
		p.Functionals = []Functional{ExtremumFunctional("u_max", "largest cell value of u", 0, true)}
	} else {
		p.Gamma = v.Float("gamma")
		p.Exact, p.Source = mmsEulerExact, mmsEulerSource(p.Gamma)
		p.Functionals = []Functional{
			EntropyFunctional(p.Gamma),
			ExtremumFunctional("rho_min", "smallest cell density", 0, false),
		}
	}
	exact := p.Exact
	p.Initial = func(x, y float64, w []float64) { exact(x, y, 0, w) }
	return p, nil
}
