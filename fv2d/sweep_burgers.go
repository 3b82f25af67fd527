package fv2d

import "math"

// Line kernels of the Burgers equation u_t + (u^2/2)_x = 0 (the flux is the
// same in x and y). Only rho (here: u) is used; mn, mt, en are nil.

// checkBurgers updates res with the new value u of one cell.
func checkBurgers(res *lineResult, speed bool, u float64) {
	if u-u != 0 { // NaN or Inf
		res.bad = true
		return
	}
	if speed {
		if a := math.Abs(u); a > res.sn {
			res.sn = a
		}
	}
}

// burgersGodunov is the first-order Godunov-type scheme, one ghost cell per
// side.
func burgersGodunov(sp *sweepParams, u, _, _, _ []float64) (res lineResult) {
	c, flux, speed := sp.dtdx, sp.bf, sp.speed
	var q float64
	for i := 1; i < len(u); i++ {
		f := flux(u[i-1], u[i])
		if i >= 2 {
			a := u[i-1] - c*(f-q)
			u[i-1] = a
			checkBurgers(&res, speed, a)
		}
		q = f
	}
	res.st = res.sn
	return res
}

// burgersMUSCL is the MUSCL-Hancock scheme (Toro 2009 §14.4): limited
// slopes, face values u -+ du/2 evolved by -dt/(2dx) (f(u_R) - f(u_L)) =
// -dt/(2dx) u du, then the numerical flux. Two ghost cells per side.
func burgersMUSCL(sp *sweepParams, u, _, _, _ []float64) (res lineResult) {
	m := len(u)
	c, h := sp.dtdx, 0.5*sp.dtdx
	flux, lim, speed := sp.bf, sp.lim, sp.speed
	u0, u1 := u[0], u[1]
	var xr, q float64 // evolved right face value of the previous cell; previous flux
	for i := 1; i < m-1; i++ {
		u2 := u[i+1]
		d := lim(u1-u0, u2-u1)
		lo, hi := u1-0.5*d, u1+0.5*d
		e := h * u1 * d // = h (hi^2 - lo^2)/2
		lo -= e
		if i >= 2 {
			f := flux(xr, lo)
			if i >= 3 {
				a := u[i-1] - c*(f-q)
				u[i-1] = a
				checkBurgers(&res, speed, a)
			}
			q = f
		}
		xr = hi - e
		u0, u1 = u1, u2
	}
	res.st = res.sn
	return res
}
