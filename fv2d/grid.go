package fv2d

// Products that meet an addition are written float64(x*y): an explicit
// conversion rounds, so the compiler cannot fuse them into one FMA (Go spec,
// "Arithmetic operators"), which would give other bits under GOAMD64=v3 or
// on arm64 than on the default build (docs/speed.md, "The same bits").

// newState allocates the grid of problem p with nx x ny cells and g ghost
// layers on every side: one flat slice per conserved variable.
func newState(p *Problem, nx, ny, g int) *State {
	nv := len(p.Eq.Vars())
	n := (nx + 2*g) * (ny + 2*g)
	s := &State{
		Eq: p.Eq, Gamma: p.Gamma, NX: nx, NY: ny, G: g,
		X0: p.X0, Y0: p.Y0,
		DX: (p.X1 - p.X0) / float64(nx), DY: (p.Y1 - p.Y0) / float64(ny),
		U: make([][]float64, nv),
	}
	for k := range s.U {
		s.U[k] = make([]float64, n)
	}
	return s
}

// Stride is the distance between vertically adjacent cells in State.U.
func (s *State) Stride() int { return s.NX + 2*s.G }

// Primitive writes the primitive state of interior cell (i, j) into w
// (Euler: rho, u, v, p; Burgers: u).
func (s *State) Primitive(i, j int, w []float64) {
	idx := s.Index(i, j)
	if s.Eq == Burgers {
		w[0] = s.U[0][idx]
		return
	}
	r, mx, my, e := s.U[0][idx], s.U[1][idx], s.U[2][idx], s.U[3][idx]
	w[0], w[1], w[2] = r, mx/r, my/r
	w[3] = (s.Gamma - 1) * (e - 0.5*(float64(mx*mx)+float64(my*my))/r)
}

// toConserved converts the primitive state w of equation eq into the
// conserved state c (Euler: rho, rho u, rho v, E = p/(gamma-1) + rho |u|^2/2).
func toConserved(eq Equation, gamma float64, w, c []float64) {
	if eq == Burgers {
		c[0] = w[0]
		return
	}
	r, u, v, p := w[0], w[1], w[2], w[3]
	c[0], c[1], c[2] = r, r*u, r*v
	c[3] = p/(gamma-1) + float64(0.5*r*(float64(u*u)+float64(v*v)))
}

// Clone returns a deep copy of s.
func (s *State) Clone() *State {
	c := *s
	c.U = make([][]float64, len(s.U))
	for k := range s.U {
		c.U[k] = append([]float64(nil), s.U[k]...)
	}
	return &c
}
