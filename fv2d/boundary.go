package fv2d

// Ghost cells are filled from the interior before each sweep, in the
// direction of that sweep only (dimension splitting never reads corner
// ghosts). Every rule is written in conserved variables:
//   periodic:     ghost -1-k = interior n-1-k (and mirrored at the other end)
//   transmissive: ghost = the adjacent interior cell (zero gradient)
//   reflective:   ghost -1-k = interior k with the normal momentum negated
//                 (solid wall; for Burgers the odd reflection u -> -u).

// fillGhostsX fills the west and east ghost cells of the interior rows
// j0 <= j < j1. It reads those rows only, so workers can fill their own
// rows at once.
func (s *State) fillGhostsX(west, east Boundary, j0, j1 int) {
	g, nx, stride := s.G, s.NX, s.Stride()
	for k, q := range s.U {
		sign := s.reflectSign(k, 0)
		for j := j0; j < j1; j++ {
			row := q[(j+g)*stride : (j+g+1)*stride]
			fillLine(row, g, nx, 1, west, east, sign)
		}
	}
}

// fillGhostsY fills the south and north ghost cells of the interior
// columns i0 <= i < i1. It reads those columns only, so workers can fill
// their own columns at once.
func (s *State) fillGhostsY(south, north Boundary, i0, i1 int) {
	g, ny, stride := s.G, s.NY, s.Stride()
	for k, q := range s.U {
		sign := s.reflectSign(k, 1)
		for l := 0; l < g; l++ {
			lo := q[(g-1-l)*stride+g+i0 : (g-1-l)*stride+g+i1] // ghost row -1-l
			hi := q[(g+ny+l)*stride+g+i0 : (g+ny+l)*stride+g+i1]
			fillRow(lo, q, stride, g, l, ny, i0, south, sign, false)
			fillRow(hi, q, stride, g, l, ny, i0, north, sign, true)
		}
	}
}

// fillRow fills ghost row l (0 = next to the interior) on the south
// (top=false) or north side, from interior column i0 on, from the interior
// rows of q.
func fillRow(dst, q []float64, stride, g, l, ny, i0 int, bc Boundary, sign float64, top bool) {
	var src int // interior row index (0-based) to copy from
	switch bc {
	case Periodic:
		src = ny - 1 - l
		if top {
			src = l
		}
	case Transmissive:
		src = 0
		if top {
			src = ny - 1
		}
	case Reflective:
		src = l
		if top {
			src = ny - 1 - l
		}
	}
	row := q[(src+g)*stride+g+i0 : (src+g)*stride+g+i0+len(dst)]
	if bc == Reflective && sign < 0 {
		for i, x := range row {
			dst[i] = -x
		}
		return
	}
	copy(dst, row)
}

// fillLine fills the g ghost values at both ends of a line of n interior
// values spaced by step (line[g*step] is the first interior value).
func fillLine(line []float64, g, n, step int, lo, hi Boundary, sign float64) {
	at := func(i int) int { return (i + g) * step }
	for l := 0; l < g; l++ {
		gl, gh := at(-1-l), at(n+l)
		switch lo {
		case Periodic:
			line[gl] = line[at(n-1-l)]
		case Transmissive:
			line[gl] = line[at(0)]
		case Reflective:
			line[gl] = sign * line[at(l)]
		}
		switch hi {
		case Periodic:
			line[gh] = line[at(l)]
		case Transmissive:
			line[gh] = line[at(n-1)]
		case Reflective:
			line[gh] = sign * line[at(n-1-l)]
		}
	}
}

// reflectSign is -1 for the variable k that a wall normal to direction dir
// (0 = x, 1 = y) mirrors with a change of sign: the normal momentum, or for
// Burgers u itself (the odd reflection u -> -u); 1 for the others.
func (s *State) reflectSign(k, dir int) float64 {
	if (s.Eq == Burgers && k == 0) || (s.Eq == Euler && k == 1+dir) {
		return -1
	}
	return 1
}
