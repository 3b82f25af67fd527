package fv2d

import (
	"fmt"
	"strings"
)

// Scheme is the spatial scheme of a run (parameter scheme).
type Scheme int

const (
	SchemeGodunov Scheme = iota // first order: piecewise constant states
	SchemeMUSCL                 // MUSCL-Hancock, second order (van Leer 1979)
)

// Split is the dimensional splitting of a step (parameter split).
type Split int

const (
	SplitStrang Split = iota // X(dt/2) Y(dt) X(dt/2), second order (Strang 1968)
	SplitLie                 // X(dt) Y(dt), first order
)

// Recon is the set of variables the MUSCL reconstruction of an Euler run
// limits (parameter recon).
type Recon int

const (
	ReconPrimitive Recon = iota // rho, u, v, p
	ReconConserved              // rho, mx, my, E
)

// The choices of the scheme, split and recon parameters, indexed by value:
// the one place these names are written.
var (
	schemeNames = []string{SchemeGodunov: "godunov", SchemeMUSCL: "muscl"}
	splitNames  = []string{SplitStrang: "strang", SplitLie: "lie"}
	reconNames  = []string{ReconPrimitive: "primitive", ReconConserved: "conserved"}
)

func (s Scheme) String() string { return enumName(schemeNames, int(s)) }
func (s Split) String() string  { return enumName(splitNames, int(s)) }
func (r Recon) String() string  { return enumName(reconNames, int(r)) }

func enumName(names []string, i int) string {
	if i < 0 || i >= len(names) {
		return fmt.Sprintf("%d?", i)
	}
	return names[i]
}

// enumValue returns the index of name in names, or an error naming the
// parameter and its choices.
func enumValue(param string, names []string, name string) (int, error) {
	for i, n := range names {
		if n == name {
			return i, nil
		}
	}
	return 0, fmt.Errorf("parameter %s: %q is not one of %s", param, name, strings.Join(names, ", "))
}

// Config is the scheme of one run: the common parameters of CommonParams,
// typed, with the named flux and limiter looked up. Cases read their own
// parameters from Values; the solver and Estimate read these.
type Config struct {
	Eq      Equation // the case's law: selects the flux table
	NX, NY  int      // cells
	Scheme  Scheme
	Limiter Limiter // slope limiter of the MUSCL reconstruction
	// LimiterName and FluxName are the table names of Limiter and of the
	// flux, for the kernels that compile the defaults in.
	LimiterName, FluxName string
	Split                 Split
	Alternate             bool    // swap the order of the x and y sweeps every step
	CFL                   float64 // Courant number of each 1-D sweep
	TEnd                  float64 // the t_end parameter (a problem's own TEnd overrides it)
	Threads               int
	MaxSteps              int // step guard
	Quad                  int // Gauss-Legendre points per direction of cell averages

	EulerFlux   EulerFlux   // Eq == Euler
	Recon       Recon       // Eq == Euler
	BurgersFlux BurgersFlux // Eq == Burgers
}

// ConfigFrom returns the typed scheme of the resolved run v. It fails only
// when v is not a run of a registered case (Resolve has checked every
// value).
func ConfigFrom(v Values) (Config, error) {
	c, err := LookupCase(v.Case)
	if err != nil {
		return Config{}, err
	}
	return configFor(v, c.Equation())
}

// configFor returns the scheme of v for a problem of law eq.
func configFor(v Values, eq Equation) (Config, error) {
	cfg := Config{
		Eq: eq, NX: v.Int("nx"), NY: v.Int("ny"),
		Alternate: v.Bool("alternate"), CFL: v.Float("cfl"), TEnd: v.Float("t_end"),
		Threads: v.Int("threads"), MaxSteps: v.Int("max_steps"), Quad: v.Int("quad"),
	}
	scheme, err := enumValue("scheme", schemeNames, v.Get("scheme"))
	if err != nil {
		return Config{}, err
	}
	split, err := enumValue("split", splitNames, v.Get("split"))
	if err != nil {
		return Config{}, err
	}
	cfg.Scheme, cfg.Split = Scheme(scheme), Split(split)
	cfg.LimiterName, cfg.FluxName = v.Get("limiter"), v.Get("flux")
	if cfg.Limiter, err = limiters.byName(cfg.LimiterName); err != nil {
		return Config{}, err
	}
	if eq == Euler {
		recon, err := enumValue("recon", reconNames, v.Get("recon"))
		if err != nil {
			return Config{}, err
		}
		cfg.Recon = Recon(recon)
		if cfg.EulerFlux, err = eulerFluxes.byName(cfg.FluxName); err != nil {
			return Config{}, err
		}
		return cfg, nil
	}
	if cfg.BurgersFlux, err = burgersFluxes.byName(cfg.FluxName); err != nil {
		return Config{}, err
	}
	return cfg, nil
}
