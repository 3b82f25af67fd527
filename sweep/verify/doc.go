// Package verify is the grid-convergence maths: observed orders of accuracy,
// least-squares order fits, the grid convergence index, order verdicts and
// local observed orders on nested grids (cell by cell, or per window fitted
// over several grids).
// It is pure computation on numbers and imports only the standard library
// (its tests check it against gonum).
package verify
