package fv2d

// Cost is an estimate of the work and memory of one run, made without
// running it.
type Cost struct {
	Cells int     // nx * ny
	Steps float64 // estimated time steps
	Bytes int64   // estimated solver memory
}

// Work is Cells * Steps: the estimated number of cell updates.
func (c Cost) Work() float64 { return float64(c.Cells) * c.Steps }

// Estimate returns the cost of the run v. (Placeholder estimate; the solver
// refines it from the initial wave speeds.)
func Estimate(v Values) Cost {
	nx, ny := v.Int("nx"), v.Int("ny")
	n := nx
	if ny > n {
		n = ny
	}
	nv := 4
	return Cost{Cells: nx * ny, Steps: float64(n), Bytes: int64((nx + 4) * (ny + 4) * nv * 8 * 3)}
}
