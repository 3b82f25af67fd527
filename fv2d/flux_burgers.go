package fv2d

import (
	"fmt"
	"math"
	"strings"
)

// BurgersFlux is a numerical flux of the scalar law u_t + f(u)_x = 0 with
// f(u) = u^2/2 across a face with left state ul and right state ur.
type BurgersFlux func(ul, ur float64) float64

// BurgersFluxNames are the names BurgersFluxByName knows, in the order of the
// flux parameter's choices.
var BurgersFluxNames = []string{"exact", "rusanov"}

// BurgersFluxByName returns the Burgers flux called name: "exact" (the
// Godunov flux) or "rusanov".
func BurgersFluxByName(name string) (BurgersFlux, error) {
	switch name {
	case "exact":
		return BurgersGodunov, nil
	case "rusanov":
		return BurgersRusanov, nil
	}
	return nil, fmt.Errorf("unknown Burgers flux %q (known: %s)", name, strings.Join(BurgersFluxNames, " "))
}

// BurgersGodunov is the exact Godunov flux of f(u) = u^2/2 (Godunov 1959;
// LeVeque 2002 §12.2): min of f over [ul, ur] when ul <= ur, max of f over
// [ur, ul] otherwise. A transonic rarefaction (ul < 0 < ur) gives f(0) = 0.
func BurgersGodunov(ul, ur float64) float64 {
	if ul > ur { // shock: f is convex, so its maximum is at an end point
		return 0.5 * math.Max(ul*ul, ur*ur)
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
	s := math.Max(math.Abs(ul), math.Abs(ur))
	return 0.25*(ul*ul+ur*ur) - 0.5*s*(ur-ul)
}
