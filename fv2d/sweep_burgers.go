package fv2d

import "math"

// Products that meet an addition are written float64(x*y): an explicit
// conversion rounds, so the compiler cannot fuse them into one FMA (Go spec,
// "Arithmetic operators"), which would give other bits under GOAMD64=v3 or
// on arm64 than on the default build (docs/speed.md, "The same bits").

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

// burgersFacesWith sets f_i = flux(r_i, l_{i+1}), the flux at face i+1/2,
// for 0 <= i < len(f). Small enough to be inlined, so that a flux known at
// the call is called directly (and inlined).
func burgersFacesWith(flux BurgersFlux, r, l, f []float64) {
	r, l = r[:len(f)], l[1:len(f)+1]
	for i := range f {
		f[i] = flux(r[i], l[i])
	}
}

// burgersFaces sets the fluxes f_i at faces i+1/2, lo <= i < hi, with the
// sweep's flux.
func (sp *sweepParams) burgersFaces(r, l, f []float64, lo, hi int) {
	if sp.godunovB {
		burgersFacesWith(BurgersGodunov, r[lo:], l[lo:], f[lo:hi])
		return
	}
	burgersFacesWith(sp.bf, r[lo:], l[lo:], f[lo:hi])
}

// updateBurgersLine writes the conservative update
// u_i -= c (f_{i+1/2} - f_{i-1/2}) of the cells lo <= i < hi, with f_i the
// flux at face i+1/2, and checks the new values.
func updateBurgersLine(res *lineResult, speed bool, c float64, u, f []float64, lo, hi int) {
	u, f = u[lo:hi], f[lo-1:hi]
	f = f[:len(u)+1]
	for i := range u {
		a := u[i] - float64(c*(f[i+1]-f[i]))
		u[i] = a
		checkBurgers(res, speed, a)
	}
	res.st = res.sn
}

// burgersGodunov is the first-order Godunov-type scheme, one ghost cell per
// side.
func burgersGodunov(sp *sweepParams, u, _, _, _ []float64) (res lineResult) {
	m, f := len(u), sp.scr.f[0]
	sp.burgersFaces(u, u, f, 0, m-1)
	updateBurgersLine(&res, sp.speed, sp.dtdx, u, f, 1, m-1)
	return res
}

// burgersMUSCL is the MUSCL-Hancock scheme (Toro 2009 §14.4): limited
// slopes, face values u -+ du/2 evolved by -dt/(2dx) (f(u_R) - f(u_L)) =
// -dt/(2dx) u du, then the numerical flux. Two ghost cells per side.
func burgersMUSCL(sp *sweepParams, u, _, _, _ []float64) (res lineResult) {
	m, h := len(u), 0.5*sp.dtdx
	d, r, f := sp.scr.d[0][:m], sp.scr.r[0][:m], sp.scr.f[0]
	sp.slopes(u, d)
	for i := 1; i < m-1; i++ { // the left face value replaces the slope
		lo, hi := u[i]-float64(0.5*d[i]), u[i]+float64(0.5*d[i])
		e := float64(h * u[i] * d[i]) // = h (hi^2 - lo^2)/2
		d[i], r[i] = lo-e, hi-e
	}
	sp.burgersFaces(r, d, f, 1, m-2)
	updateBurgersLine(&res, sp.speed, sp.dtdx, u, f, 2, m-2)
	return res
}
