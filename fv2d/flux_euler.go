package fv2d

import (
	"fmt"
	"math"
	"strings"
)

// EulerFlux is a numerical flux of the Euler equations of an ideal gas with
// ratio of specific heats gamma, across a face normal to the sweep
// direction. The left and right states are primitive: density r, normal
// velocity u, tangential velocity v, pressure p. It returns the flux of
// (rho, m_normal, m_tangential, E). It allocates nothing and does not check
// its input: a non-physical state (r <= 0, p <= 0) gives NaN or garbage,
// which the solver's state checks report.
type EulerFlux func(gamma, rl, ul, vl, pl, rr, ur, vr, pr float64) (f0, f1, f2, f3 float64)

// EulerFluxNames are the names EulerFluxByName knows, in the order of the
// flux parameter's choices.
var EulerFluxNames = []string{"rusanov"}

// EulerFluxByName returns the Euler flux called name.
func EulerFluxByName(name string) (EulerFlux, error) {
	switch name {
	case "rusanov":
		return EulerRusanov, nil
	}
	return nil, fmt.Errorf("unknown Euler flux %q (known: %s)", name, joinNames(EulerFluxNames))
}

func joinNames(names []string) string { return strings.Join(names, " ") }

// EulerPhysicalFlux is the exact flux F(W) of the Euler equations normal to
// a face for the primitive state (r, u, v, p):
// (r u, r u^2 + p, r u v, u (E + p)) with E = p/(gamma-1) + r (u^2 + v^2)/2.
func EulerPhysicalFlux(gamma, r, u, v, p float64) (f0, f1, f2, f3 float64) {
	m := r * u
	e := p/(gamma-1) + 0.5*r*(u*u+v*v)
	return m, m*u + p, m * v, u * (e + p)
}

// EulerRusanov is the Rusanov (local Lax-Friedrichs) flux (Rusanov 1961):
// (F_L + F_R)/2 - s (U_R - U_L)/2 with s = max(|u_L| + a_L, |u_R| + a_R).
func EulerRusanov(gamma, rl, ul, vl, pl, rr, ur, vr, pr float64) (f0, f1, f2, f3 float64) {
	g1 := 1 / (gamma - 1)
	al := math.Sqrt(gamma * pl / rl)
	ar := math.Sqrt(gamma * pr / rr)
	s := math.Max(math.Abs(ul)+al, math.Abs(ur)+ar)
	mul, mur := rl*ul, rr*ur
	el := pl*g1 + 0.5*rl*(ul*ul+vl*vl)
	er := pr*g1 + 0.5*rr*(ur*ur+vr*vr)
	f0 = 0.5 * (mul + mur - s*(rr-rl))
	f1 = 0.5 * (mul*ul + pl + mur*ur + pr - s*(mur-mul))
	f2 = 0.5 * (mul*vl + mur*vr - s*(rr*vr-rl*vl))
	f3 = 0.5 * (ul*(el+pl) + ur*(er+pr) - s*(er-el))
	return
}
