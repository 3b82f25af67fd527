package report

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"fvsweep/fv2d"
	"fvsweep/sweep/field"
	"fvsweep/sweep/plots"
)

// SnapshotVars lists the variables SnapshotField can show for a snapshot
// of the given conserved variables: those, and for Euler the primitive
// velocities and pressure.
func SnapshotVars(conserved []string) []string {
	out := slices.Clone(conserved)
	if slices.Equal(conserved, fv2d.Euler.Vars()) {
		out = append(out, "u", "v", "p")
	}
	return out
}

// SnapshotField extracts variable name from a decoded snapshot (conserved
// variables, interior cells, x fastest) as a plots.Field, and, when the
// problem has an exact solution, that variable's exact value at the
// snapshot's time as a function of (x, y). prob may be nil (no exact
// solution); the Euler pressure then assumes gamma = 1.4 (air, common
// practice), since a snapshot does not record gamma. An unknown name is an
// error listing the available ones.
func SnapshotField(h field.Header, data [][]float32, name string, prob *fv2d.Problem) (plots.Field, func(x, y float64) float64, error) {
	avail := SnapshotVars(h.Vars)
	if !slices.Contains(avail, name) {
		return plots.Field{}, nil, fmt.Errorf("variable %q not in the snapshot (have %s)", name, strings.Join(avail, ", "))
	}
	x0, y0 := h.X0, h.Y0
	x1, y1 := x0+float64(h.NX)*h.DX, y0+float64(h.NY)*h.DY
	euler := slices.Equal(h.Vars, fv2d.Euler.Vars())
	gamma := 1.4
	if prob != nil && prob.Gamma > 1 {
		gamma = prob.Gamma
	}
	var f plots.Field
	if k := slices.Index(h.Vars, name); k >= 0 {
		f = plots.FromFloat32(name, h.NX, h.NY, x0, x1, y0, y1, data[k])
	} else { // a primitive variable of Euler from the conserved ones
		f = plots.Field{Name: name, NX: h.NX, NY: h.NY, X0: x0, X1: x1, Y0: y0, Y1: y1, V: make([]float64, h.NX*h.NY)}
		for i := range f.V {
			u := [4]float64{float64(data[0][i]), float64(data[1][i]), float64(data[2][i]), float64(data[3][i])}
			f.V[i] = eulerPrimitive(u, name, gamma)
		}
	}
	if prob == nil || prob.Exact == nil {
		return f, nil, nil
	}
	np := len(prob.Eq.PrimVars())
	exact := func(x, y float64) float64 {
		w := make([]float64, np)
		prob.Exact(x, y, h.T, w)
		if !euler {
			return w[0]
		}
		rho, u, v, p := w[0], w[1], w[2], w[3]
		switch name {
		case "rho":
			return rho
		case "mx":
			return rho * u
		case "my":
			return rho * v
		case "E":
			return p/(gamma-1) + 0.5*rho*(u*u+v*v)
		case "u":
			return u
		case "v":
			return v
		case "p":
			return p
		}
		return math.NaN()
	}
	return f, exact, nil
}

// eulerPrimitive returns u, v or p of the conserved state (rho, mx, my, E)
// of an ideal gas: p = (gamma - 1) (E - (mx^2 + my^2) / (2 rho)).
func eulerPrimitive(c [4]float64, name string, gamma float64) float64 {
	rho, mx, my, e := c[0], c[1], c[2], c[3]
	switch name {
	case "u":
		return mx / rho
	case "v":
		return my / rho
	case "p":
		return (gamma - 1) * (e - 0.5*(mx*mx+my*my)/rho)
	}
	return math.NaN()
}
