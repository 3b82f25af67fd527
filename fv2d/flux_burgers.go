package fv2d

import "math"

// Products that meet an addition are written float64(x*y): an explicit
// conversion rounds, so the compiler cannot fuse them into one FMA (Go spec,
// "Arithmetic operators"), which would give other bits under GOAMD64=v3 or
// on arm64 than on the default build (docs/speed.md, "The same bits").

// BurgersFlux is a numerical flux of the scalar law u_t + f(u)_x = 0 with
// f(u) = u^2/2 across a face with left state ul and right state ur.
type BurgersFlux func(ul, ur float64) float64

// burgersFluxes is the table of Burgers fluxes: the choices of the flux
// parameter of a Burgers case, in order. To add a flux, write its function
// (a BurgersFlux that neither allocates nor checks its input, with its source
// in the doc comment) and add one entry here: the flux choices of
// CommonParams, the name list and the ByName lookup follow from it.
var burgersFluxes = methods[BurgersFlux]{kind: "Burgers flux", list: []method[BurgersFlux]{
	{"exact", BurgersGodunov, "Godunov flux of the exact Riemann solution (Godunov 1959; LeVeque 2002 §12.2)"},
	{"rusanov", BurgersRusanov, "Rusanov, local Lax-Friedrichs (Rusanov 1961)"},
}}

// BurgersFluxNames are the names BurgersFluxByName knows, in the order of the
// flux parameter's choices.
var BurgersFluxNames = burgersFluxes.names()

// BurgersFluxByName returns the Burgers flux called name: "exact" (the
// Godunov flux) or "rusanov".
func BurgersFluxByName(name string) (BurgersFlux, error) { return burgersFluxes.byName(name) }

// BurgersGodunov is the exact Godunov flux of f(u) = u^2/2 (Godunov 1959;
// LeVeque 2002 §12.2): min of f over [ul, ur] when ul <= ur, max of f over
// [ur, ul] otherwise. A transonic rarefaction (ul < 0 < ur) gives f(0) = 0.
func BurgersGodunov(ul, ur float64) float64 {
	if ul > ur { // shock: f is convex, so its maximum is at an end point
		return 0.5 * max(ul*ul, ur*ur)
	}
	if ul > 0 {
		return 0.5 * ul * ul
	}
	if ur < 0 {
		return 0.5 * ur * ur
	}
	return 0
}

// BurgersRusanov is the Rusanov (local Lax-Friedrichs) flux (Rusanov 1961):
// (f(ul) + f(ur))/2 - max(|ul|, |ur|) (ur - ul)/2.
func BurgersRusanov(ul, ur float64) float64 {
	s := max(math.Abs(ul), math.Abs(ur))
	return float64(0.25*(float64(ul*ul)+float64(ur*ur))) - float64(0.5*s*(ur-ul))
}
