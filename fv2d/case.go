package fv2d

import (
	"fmt"
	"slices"
	"sort"
	"strings"
	"sync"
)

// Equation selects the conservation law a case solves.
type Equation int

const (
	Burgers Equation = iota // u_t + (u^2/2)_x + (u^2/2)_y = 0; conserved: u
	Euler                   // 2-D Euler, ideal gas; conserved: rho, mx, my, E
)

// Vars returns the names of the conserved variables of e, in storage order.
func (e Equation) Vars() []string {
	if e == Euler {
		return []string{"rho", "mx", "my", "E"}
	}
	return []string{"u"}
}

// PrimVars returns the names of the primitive variables of e (used by
// Problem.Initial/Exact and by field dumps).
func (e Equation) PrimVars() []string {
	if e == Euler {
		return []string{"rho", "u", "v", "p"}
	}
	return []string{"u"}
}

func (e Equation) String() string {
	if e == Euler {
		return "euler"
	}
	return "burgers"
}

// Boundary is the condition on one side of the domain.
type Boundary int

const (
	Periodic     Boundary = iota
	Transmissive          // zero gradient
	Reflective            // solid wall: normal velocity mirrored
)

// Sides of the rectangle, indices into Problem.BC.
const (
	West = iota
	East
	South
	North
)

// Functional is a scalar output of a run (total entropy, a shock position, a
// probe value) that the GCI can be applied to when no exact solution exists.
type Functional struct {
	Name string
	Doc  string
	Eval func(s *State) float64
}

// Problem is what a case sets up from its resolved parameters: the law, the
// domain [X0,X1]x[Y0,Y1], the boundary conditions and the data.
type Problem struct {
	Eq             Equation
	Gamma          float64 // Euler only
	X0, X1, Y0, Y1 float64
	BC             [4]Boundary // West, East, South, North

	// Initial writes the primitive state at (x, y) into w (len = len(Eq.PrimVars())).
	// Initial cell averages are taken of the conserved variables by
	// Gauss-Legendre quadrature over each cell.
	Initial func(x, y float64, w []float64)

	// Exact, if not nil, writes the exact primitive state at (x, y, t) into w.
	// Errors are computed against exact cell averages of the conserved variables.
	Exact func(x, y, t float64, w []float64)

	// Breaks, if not nil, returns the lines x = xs[k] and y = ys[k] (any
	// order) across which Exact(., ., t) or one of its derivatives jumps:
	// shocks, contacts, fan edges. Exact must be smooth between them; the
	// exact cell averages are then integrated piece by piece, to round-off
	// (ExactAverages). The returned slices are not modified.
	Breaks func(t float64) (xs, ys []float64)

	// Source, if not nil, writes S(x, y, t) for each conserved variable into
	// s: the right-hand side of U_t + F_x + G_y = S.
	Source func(x, y, t float64, s []float64)

	// Functionals are evaluated on the final state.
	Functionals []Functional

	// TEnd, if > 0, is the final time of the run; 0 means the t_end
	// parameter. A case whose natural final time depends on its other
	// parameters (shocktube test=N) declares t_end with default 0 ("the
	// case's own time") and sets TEnd here.
	TEnd float64
}

// Case is a named, parameterised problem.
type Case interface {
	Name() string
	Summary() string // one line
	Equation() Equation
	// Params lists the case's own parameters. A parameter that has the name of
	// a common one (t_end, nx, ...) overrides its default or bounds.
	Params() []Param
	// Setup builds the problem from fully resolved parameters.
	Setup(v Values) (*Problem, error)
}

var (
	regMu sync.RWMutex
	reg   = map[string]Case{}
)

// Register adds c to the registry; it panics on a duplicate name.
func Register(c Case) {
	regMu.Lock()
	defer regMu.Unlock()
	if _, dup := reg[c.Name()]; dup {
		panic("fv2d: duplicate case " + c.Name())
	}
	reg[c.Name()] = c
}

// Cases returns every registered case, sorted by name.
func Cases() []Case {
	regMu.RLock()
	defer regMu.RUnlock()
	out := make([]Case, 0, len(reg))
	for _, c := range reg {
		out = append(out, c)
	}
	sort.Slice(out, func(i, j int) bool { return out[i].Name() < out[j].Name() })
	return out
}

// LookupCase returns the case called name or an error listing the known ones.
func LookupCase(name string) (Case, error) {
	regMu.RLock()
	c, ok := reg[name]
	regMu.RUnlock()
	if !ok {
		names := []string{}
		for _, c := range Cases() {
			names = append(names, c.Name())
		}
		return nil, fmt.Errorf("unknown case %q (known: %s)", name, strings.Join(names, " "))
	}
	return c, nil
}

// ParamsOf returns the full parameter list of c: the common scheme
// parameters for its equation, overridden and extended by c.Params().
func ParamsOf(c Case) []Param {
	common := CommonParams(c.Equation())
	idx := map[string]int{}
	for i, p := range common {
		idx[p.Name] = i
	}
	out := append([]Param(nil), common...)
	for _, p := range c.Params() {
		if i, ok := idx[p.Name]; ok {
			out[i] = p
			continue
		}
		out = append(out, p)
	}
	return out
}

func bounded(name string, k Kind, def string, min, max float64, doc string) Param {
	return Param{Name: name, Kind: k, Default: def, Min: min, Max: max, Doc: doc}
}

// CommonParams returns the scheme parameters every case of equation e has.
// The choices of scheme, split and recon are the names of their types
// (config.go); those of limiter and flux are the tables of limiter.go,
// flux_euler.go and flux_burgers.go. ConfigFrom turns them into a Config.
func CommonParams(e Equation) []Param {
	ps := []Param{
		bounded("nx", Int, "64", 4, 1<<20, "cells in x"),
		bounded("ny", Int, "64", 1, 1<<20, "cells in y"),
		{Name: "scheme", Kind: Choice, Default: SchemeMUSCL.String(), Choices: slices.Clone(schemeNames), Min: Unbounded, Max: Unbounded,
			Doc: "godunov: first order; muscl: MUSCL-Hancock, second order"},
		{Name: "limiter", Kind: Choice, Default: "vanleer", Choices: limiters.names(), Min: Unbounded, Max: Unbounded,
			Doc: "slope limiter of the MUSCL reconstruction"},
		{Name: "split", Kind: Choice, Default: SplitStrang.String(), Choices: slices.Clone(splitNames), Min: Unbounded, Max: Unbounded,
			Doc: "strang: X(dt/2) Y(dt) X(dt/2); lie: X(dt) Y(dt)"},
		{Name: "alternate", Kind: Bool, Default: "false", Min: Unbounded, Max: Unbounded,
			Doc: "swap the order of the x and y sweeps every step"},
		{Name: "cfl", Kind: Float, Default: "0.8", Min: 0, Max: 1, MinOpen: true, Doc: "Courant number of each 1-D sweep, in (0, 1]"},
		{Name: "t_end", Kind: Float, Default: "1", Min: 0, Max: Unbounded, Doc: "final time"},
		bounded("threads", Int, "1", 1, 256, "goroutines sharing the rows of a sweep (results bitwise identical)"),
		bounded("max_steps", Int, "1000000", 1, 1e9, "step guard: a run needing more steps fails"),
		bounded("quad", Int, "3", 1, 10, "Gauss-Legendre points per direction for initial and exact cell averages"),
	}
	if e == Euler {
		ps = append(ps,
			Param{Name: "flux", Kind: Choice, Default: "hllc", Choices: eulerFluxes.names(), Min: Unbounded, Max: Unbounded,
				Doc: "numerical flux"},
			Param{Name: "recon", Kind: Choice, Default: ReconPrimitive.String(), Choices: slices.Clone(reconNames), Min: Unbounded, Max: Unbounded,
				Doc: "variables the MUSCL reconstruction limits"},
			Param{Name: "gamma", Kind: Float, Default: "1.4", Min: 1, Max: Unbounded, MinOpen: true, Doc: "ratio of specific heats, > 1"},
		)
	} else {
		ps = append(ps, Param{Name: "flux", Kind: Choice, Default: "exact", Choices: burgersFluxes.names(), Min: Unbounded, Max: Unbounded,
			Doc: "numerical flux: exact Godunov or Rusanov"})
	}
	return ps
}
