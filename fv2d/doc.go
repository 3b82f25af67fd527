// Package fv2d is a dimension-split finite-volume solver for the 2-D Burgers
// equation and the 2-D Euler equations of an ideal gas on a uniform Cartesian
// grid: U_t + F(U)_x + G(U)_y = S, every update in conservative
// flux-difference form. It imports nothing of NATS or bbolt and can be used
// as a library.
package fv2d
