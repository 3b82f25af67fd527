// Package verify is the grid-convergence maths: observed orders of accuracy,
// least-squares order fits, the grid convergence index, order verdicts and
// local (cell by cell) observed orders on nested grids.
// It is pure computation on numbers and imports only the standard library
// and gonum.
package verify
