package fv2d

import "fmt"

// Assessment is how a final field is judged: the domain totals of the
// conserved variables at the start and the end, the error norms against the
// exact cell averages (when the case has an exact solution) and the case's
// functionals, each keyed by name.
type Assessment struct {
	Totals      map[string]Total
	Errors      map[string]Norms
	Functionals map[string]float64
}

// Assess judges final, the conserved cell averages of problem p at time
// final.T, whoever computed them: Run calls it on fv2d's own final state,
// and the runner of an outside program on the field that program wrote, so
// both are judged by the same code. initial holds the domain totals of the
// initial cell averages (State.Totals), one per conserved variable. Errors
// are taken against ExactAverages with quad Gauss-Legendre points per
// direction, using threads goroutines. final may have any number of ghost
// layers; it is not changed.
func Assess(p *Problem, initial []float64, final *State, quad, threads int) Assessment {
	vars := final.Eq.Vars()
	a := Assessment{Totals: map[string]Total{}}
	for k, tot := range final.Totals() {
		a.Totals[vars[k]] = Total{Initial: initial[k], Final: tot}
	}
	if p.Exact != nil {
		ex := ExactAverages(p, final, quad, threads)
		a.Errors = map[string]Norms{}
		for k, n := range errorNorms(final, ex) {
			a.Errors[vars[k]] = n
		}
	}
	if len(p.Functionals) > 0 {
		a.Functionals = map[string]float64{}
		for _, f := range p.Functionals {
			a.Functionals[f.Name] = f.Eval(final)
		}
	}
	return a
}

// SetUp looks up the case of v and builds its problem, refusing an empty
// domain and, for Euler, gamma <= 1.
func SetUp(v Values) (*Problem, error) {
	c, err := LookupCase(v.Case)
	if err != nil {
		return nil, err
	}
	p, err := c.Setup(v)
	if err != nil {
		return nil, fmt.Errorf("case %s: %w", v.Case, err)
	}
	if !(p.X1 > p.X0) || !(p.Y1 > p.Y0) {
		return nil, fmt.Errorf("case %s: empty domain [%g,%g]x[%g,%g]", v.Case, p.X0, p.X1, p.Y0, p.Y1)
	}
	if p.Eq == Euler && !(p.Gamma > 1) {
		return nil, fmt.Errorf("case %s: gamma = %g, want > 1", v.Case, p.Gamma)
	}
	return p, nil
}

// NewGrid returns a state of p on nx x ny cells with no ghost layers, all
// values zero, at time 0: the layout of a field read from a file.
func NewGrid(p *Problem, nx, ny int) *State { return newState(p, nx, ny, 0) }

// InitialAverages returns the initial conserved cell averages of p on nx x
// ny cells (no ghost layers), by the tensor Gauss-Legendre rule with quad
// points per direction: the same averaging fv2d's own runs start from.
func InitialAverages(p *Problem, nx, ny, quad, threads int) *State {
	s := newState(p, nx, ny, 0)
	cellAverages(s, newCellRule(quad, s.DX, s.DY), threads, p.Initial)
	return s
}

// FinalTime is the final time of a run of p with resolved values v: the
// problem's own TEnd when it sets one, else the t_end parameter.
func FinalTime(p *Problem, v Values) float64 {
	if p.TEnd > 0 {
		return p.TEnd
	}
	return v.Float("t_end")
}

// String names a boundary condition as in the docs: periodic, transmissive
// or reflective.
func (b Boundary) String() string {
	switch b {
	case Periodic:
		return "periodic"
	case Transmissive:
		return "transmissive"
	case Reflective:
		return "reflective"
	}
	return fmt.Sprintf("boundary(%d)", int(b))
}
