package field

import (
	"fmt"
	"math"
)

// Cells is a field of named variables on an NX x NY grid as files outside
// fvsweep hold it: Data[k][j*NX+i] is variable Names[k] of cell (i, j),
// x fastest. Names may start with "x", "y" (the cell centre).
type Cells struct {
	Names  []string
	NX, NY int
	Data   [][]float64
}

// MaxVars bounds the number of variables (columns) of a field file.
const MaxVars = 16

// NewCells returns zeroed cells of the given names on nx x ny.
func NewCells(names []string, nx, ny int) *Cells {
	c := &Cells{Names: names, NX: nx, NY: ny, Data: make([][]float64, len(names))}
	for k := range c.Data {
		c.Data[k] = make([]float64, nx*ny)
	}
	return c
}

// Var returns the values of variable name, nil if there is none.
func (c *Cells) Var(name string) []float64 {
	for k, n := range c.Names {
		if n == name {
			return c.Data[k]
		}
	}
	return nil
}

// CheckCentres checks the x and y columns, when c has them, against the
// centres of the grid with lower-left corner (x0, y0) and spacings dx, dy:
// each must lie within a thousandth of a cell of its centre. The error
// names the first cell that does not.
func (c *Cells) CheckCentres(x0, y0, dx, dy float64) error {
	xs, ys := c.Var("x"), c.Var("y")
	if xs == nil && ys == nil {
		return nil
	}
	if xs == nil || ys == nil {
		return fmt.Errorf("field: x and y come together or not at all")
	}
	for j := 0; j < c.NY; j++ {
		yc := y0 + (float64(j)+0.5)*dy
		for i := 0; i < c.NX; i++ {
			xc := x0 + (float64(i)+0.5)*dx
			x, y := xs[j*c.NX+i], ys[j*c.NX+i]
			if !(math.Abs(x-xc) <= 1e-3*dx) || !(math.Abs(y-yc) <= 1e-3*dy) {
				return fmt.Errorf("cell (%d,%d): x, y = %g, %g is not its centre %g, %g (rows run x fastest, then y)", i, j, x, y, xc, yc)
			}
		}
	}
	return nil
}

// WithCentres returns c with columns x and y of the grid's cell centres
// put first (c's own data is shared, not copied).
func (c *Cells) WithCentres(x0, y0, dx, dy float64) *Cells {
	xs, ys := make([]float64, c.NX*c.NY), make([]float64, c.NX*c.NY)
	for j := 0; j < c.NY; j++ {
		for i := 0; i < c.NX; i++ {
			xs[j*c.NX+i], ys[j*c.NX+i] = x0+(float64(i)+0.5)*dx, y0+(float64(j)+0.5)*dy
		}
	}
	return &Cells{Names: append([]string{"x", "y"}, c.Names...), NX: c.NX, NY: c.NY, Data: append([][]float64{xs, ys}, c.Data...)}
}

// checkShape refuses a grid or a variable list that no field file may have.
func checkShape(names []string, nx, ny int) error {
	if nx < 1 || ny < 1 || nx > 1<<20 || ny > 1<<20 || nx*ny > 1<<28 {
		return fmt.Errorf("field: grid %dx%d out of range", nx, ny)
	}
	if len(names) < 1 || len(names) > MaxVars {
		return fmt.Errorf("field: %d variables, want 1 to %d", len(names), MaxVars)
	}
	seen := map[string]bool{}
	for _, n := range names {
		if !validName(n) {
			return fmt.Errorf("field: variable name %q: want letters, digits and '_', starting with a letter, at most 32", n)
		}
		if seen[n] {
			return fmt.Errorf("field: variable %s named twice", n)
		}
		seen[n] = true
	}
	return nil
}

func validName(s string) bool {
	if len(s) == 0 || len(s) > 32 {
		return false
	}
	for i, r := range s {
		letter := r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z'
		if !letter && (i == 0 || !(r >= '0' && r <= '9' || r == '_')) {
			return false
		}
	}
	return true
}
