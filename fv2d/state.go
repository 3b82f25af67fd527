package fv2d

// Products that meet an addition are written float64(x*y): an explicit
// conversion rounds, so the compiler cannot fuse them into one FMA (Go spec,
// "Arithmetic operators"), which would give other bits under GOAMD64=v3 or
// on arm64 than on the default build (docs/speed.md, "The same bits").

// State is the solution on the grid: one flat slice per conserved variable,
// (NX+2G) x (NY+2G) values each, x running fastest, G ghost layers on every
// side. Interior cell (i, j), 0 <= i < NX, 0 <= j < NY, is at index
// (j+G)*(NX+2G) + (i+G).
type State struct {
	Eq     Equation
	Gamma  float64
	NX, NY int
	G      int
	X0, Y0 float64
	DX, DY float64
	T      float64
	U      [][]float64
}

// Index returns the flat index of interior cell (i, j).
func (s *State) Index(i, j int) int { return (j+s.G)*(s.NX+2*s.G) + i + s.G }

// At returns conserved variable k of interior cell (i, j).
func (s *State) At(k, i, j int) float64 { return s.U[k][s.Index(i, j)] }

// Center returns the centre of cell (i, j).
func (s *State) Center(i, j int) (x, y float64) {
	return s.X0 + float64((float64(i)+0.5)*s.DX), s.Y0 + float64((float64(j)+0.5)*s.DY)
}

// SetPrimitive stores the primitive state w (Euler: rho, u, v, p; Burgers:
// u) in interior cell (i, j) as conserved variables (Euler: rho, rho u,
// rho v, E = p/(gamma-1) + rho |u|^2/2, with s.Gamma): the inverse of
// Primitive. It checks nothing: a non-physical w gives a non-physical cell.
func (s *State) SetPrimitive(i, j int, w []float64) {
	var c [4]float64
	toConserved(s.Eq, s.Gamma, w, c[:len(s.U)])
	idx := s.Index(i, j)
	for k := range s.U {
		s.U[k][idx] = c[k]
	}
}
