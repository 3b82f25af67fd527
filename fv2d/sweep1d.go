package fv2d

import "math"

// A sweep advances every grid line of one direction by one 1-D
// finite-volume step in conservative form,
//   U_i <- U_i - dt/dx (F_{i+1/2} - F_{i-1/2}),
// line by line. A line kernel gets the conserved variables of one line
// (ghost values included, G at each end) and updates its interior in place
// in a single pass: it converts each cell to primitive variables once,
// reconstructs, evolves the face values, calls the numerical flux at each
// face and writes each cell as soon as its two face fluxes are known. The
// cells of the window it still reads lie ahead of the cell it writes, so the
// in-place update reads only old values.
//
// For Euler the line variables are (rho, m_normal, m_tangential, E): the
// x sweep passes (rho, mx, my, E), the y sweep (rho, my, mx, E).

// sweepParams are the settings of one sweep, the same for every line.
type sweepParams struct {
	dtdx  float64 // dt/dx of this sweep (dt/2/dx for a Strang half step)
	gamma float64
	speed bool // also return the wave-speed maxima of the updated cells
	ef    EulerFlux
	bf    BurgersFlux
	lim   Limiter
}

// lineResult is what a kernel reports about the cells it updated: the
// largest |u_n| + a and |u_t| + a (Burgers: |u|, both), and whether any
// updated cell is non-physical (rho or p not > 0, NaN, Inf).
type lineResult struct {
	sn, st float64
	bad    bool
}

// lineKernel updates the interior of one line in place.
type lineKernel func(sp *sweepParams, rho, mn, mt, en []float64) lineResult

// cellEuler converts the conserved state of one cell to primitive
// variables.
func cellEuler(gm1, r, m, t, e float64) (u, v, p float64) {
	inv := 1 / r
	u, v = m*inv, t*inv
	p = gm1 * (e - 0.5*r*(u*u+v*v))
	return
}

// checkEuler updates res with the new conserved state of one cell: its
// positivity (rho > 0 and p > 0, i.e. 2 E rho > |m|^2, without a division)
// and, if wanted, its wave speeds |u_n| + a and |u_t| + a.
func checkEuler(res *lineResult, speed bool, gamma, r, m, t, e float64) {
	k2 := m*m + t*t
	if !(r > 0 && 2*e*r > k2) {
		res.bad = true
		return
	}
	if speed {
		inv := 1 / r
		a := math.Sqrt(gamma * (gamma - 1) * (e - 0.5*k2*inv) * inv)
		if s := math.Abs(m*inv) + a; s > res.sn {
			res.sn = s
		}
		if s := math.Abs(t*inv) + a; s > res.st {
			res.st = s
		}
	}
}

// updateEuler writes the conservative update U_k -= c (F_{k+1/2} - F_{k-1/2})
// of cell k, given the flux differences d0..d3, and checks the new state.
func updateEuler(res *lineResult, speed bool, gamma, c float64, rho, mn, mt, en []float64, k int, d0, d1, d2, d3 float64) {
	a, b, d, e := rho[k]-c*d0, mn[k]-c*d1, mt[k]-c*d2, en[k]-c*d3
	rho[k], mn[k], mt[k], en[k] = a, b, d, e
	checkEuler(res, speed, gamma, a, b, d, e)
}

// eulerGodunov is the first-order Godunov-type scheme (Godunov 1959; Toro
// 2009 §6.2): piecewise-constant data, one ghost cell per side.
func eulerGodunov(sp *sweepParams, rho, mn, mt, en []float64) (res lineResult) {
	m := len(rho)
	mn, mt, en = mn[:m], mt[:m], en[:m]
	g, gm1, c := sp.gamma, sp.gamma-1, sp.dtdx
	flux, speed := sp.ef, sp.speed
	r0 := rho[0]
	u0, v0, p0 := cellEuler(gm1, r0, mn[0], mt[0], en[0])
	var q0, q1, q2, q3 float64 // flux at the previous face
	for i := 1; i < m; i++ {
		r1 := rho[i]
		u1, v1, p1 := cellEuler(gm1, r1, mn[i], mt[i], en[i])
		f0, f1, f2, f3 := flux(g, r0, u0, v0, p0, r1, u1, v1, p1)
		if i >= 2 { // both faces of cell i-1 known
			updateEuler(&res, speed, g, c, rho, mn, mt, en, i-1, f0-q0, f1-q1, f2-q2, f3-q3)
		}
		q0, q1, q2, q3 = f0, f1, f2, f3
		r0, u0, v0, p0 = r1, u1, v1, p1
	}
	return res
}

// eulerMUSCLPrim is the MUSCL-Hancock scheme in primitive variables (Toro
// 2009 §14.4): limited slopes of W = (rho, u_n, u_t, p), face values
// W -+ dW/2 evolved over dt/2 with the quasi-linear form W_t + A(W) W_x = 0,
//
//	rho' = u rho_x + rho u_x, u' = u u_x + p_x/rho, v' = u v_x,
//	p' = gamma p u_x + u p_x,
//
// then the numerical flux at each face. Two ghost cells per side.
func eulerMUSCLPrim(sp *sweepParams, rho, mn, mt, en []float64) (res lineResult) {
	m := len(rho)
	mn, mt, en = mn[:m], mt[:m], en[:m]
	g, gm1, c, h := sp.gamma, sp.gamma-1, sp.dtdx, 0.5*sp.dtdx
	flux, lim, speed := sp.ef, sp.lim, sp.speed
	r0 := rho[0]
	u0, v0, p0 := cellEuler(gm1, r0, mn[0], mt[0], en[0])
	r1 := rho[1]
	u1, v1, p1 := cellEuler(gm1, r1, mn[1], mt[1], en[1])
	var (
		xr, xu, xv, xp float64 // evolved right face value of the previous cell
		q0, q1, q2, q3 float64 // flux at the previous face
	)
	for i := 1; i < m-1; i++ {
		r2 := rho[i+1]
		u2, v2, p2 := cellEuler(gm1, r2, mn[i+1], mt[i+1], en[i+1])
		dr := lim(r1-r0, r2-r1)
		du := lim(u1-u0, u2-u1)
		dv := lim(v1-v0, v2-v1)
		dp := lim(p1-p0, p2-p1)
		// half-step evolution: W - dt/(2dx) A(W) dW
		er := h * (u1*dr + r1*du)
		eu := h * (u1*du + dp/r1)
		ev := h * (u1 * dv)
		ep := h * (g*p1*du + u1*dp)
		lr, lu, lv, lp := r1-0.5*dr-er, u1-0.5*du-eu, v1-0.5*dv-ev, p1-0.5*dp-ep
		rr, ru, rv, rp := r1+0.5*dr-er, u1+0.5*du-eu, v1+0.5*dv-ev, p1+0.5*dp-ep
		if !(lr > 0 && lp > 0 && rr > 0 && rp > 0) { // positivity fallback: first order in this cell
			lr, lu, lv, lp = r1, u1, v1, p1
			rr, ru, rv, rp = r1, u1, v1, p1
		}
		if i >= 2 { // face i-1/2
			f0, f1, f2, f3 := flux(g, xr, xu, xv, xp, lr, lu, lv, lp)
			if i >= 3 { // both faces of cell i-1 known
				updateEuler(&res, speed, g, c, rho, mn, mt, en, i-1, f0-q0, f1-q1, f2-q2, f3-q3)
			}
			q0, q1, q2, q3 = f0, f1, f2, f3
		}
		xr, xu, xv, xp = rr, ru, rv, rp
		r0, u0, v0, p0 = r1, u1, v1, p1
		r1, u1, v1, p1 = r2, u2, v2, p2
	}
	return res
}

// eulerMUSCLCons is the MUSCL-Hancock scheme in conserved variables (Toro
// 2009 §14.4.1): limited slopes of U, face values U -+ dU/2 evolved by
// -dt/(2dx) (F(U_R) - F(U_L)), converted to primitive for the numerical flux;
// with the same first-order fallback as eulerMUSCLPrim. Limiting conserved
// variables is less robust than limiting primitive ones: near strong
// rarefactions the face pressure E - |m|^2/(2 rho) can lose positivity.
func eulerMUSCLCons(sp *sweepParams, rho, mn, mt, en []float64) (res lineResult) {
	m := len(rho)
	mn, mt, en = mn[:m], mt[:m], en[:m]
	g, gm1, c, h := sp.gamma, sp.gamma-1, sp.dtdx, 0.5*sp.dtdx
	flux, lim, speed := sp.ef, sp.lim, sp.speed
	var (
		xr, xu, xv, xp float64 // evolved right face value (primitive) of the previous cell
		q0, q1, q2, q3 float64
	)
	for i := 1; i < m-1; i++ {
		d0 := lim(rho[i]-rho[i-1], rho[i+1]-rho[i])
		d1 := lim(mn[i]-mn[i-1], mn[i+1]-mn[i])
		d2 := lim(mt[i]-mt[i-1], mt[i+1]-mt[i])
		d3 := lim(en[i]-en[i-1], en[i+1]-en[i])
		a0, a1, a2, a3 := rho[i]-0.5*d0, mn[i]-0.5*d1, mt[i]-0.5*d2, en[i]-0.5*d3
		b0, b1, b2, b3 := rho[i]+0.5*d0, mn[i]+0.5*d1, mt[i]+0.5*d2, en[i]+0.5*d3
		au, av, ap := cellEuler(gm1, a0, a1, a2, a3)
		bu, bv, bp := cellEuler(gm1, b0, b1, b2, b3)
		fa0, fa1, fa2, fa3 := EulerPhysicalFlux(g, a0, au, av, ap)
		fb0, fb1, fb2, fb3 := EulerPhysicalFlux(g, b0, bu, bv, bp)
		e0, e1, e2, e3 := h*(fb0-fa0), h*(fb1-fa1), h*(fb2-fa2), h*(fb3-fa3)
		a0, a1, a2, a3 = a0-e0, a1-e1, a2-e2, a3-e3
		b0, b1, b2, b3 = b0-e0, b1-e1, b2-e2, b3-e3
		lr, rr := a0, b0
		lu, lv, lp := cellEuler(gm1, a0, a1, a2, a3)
		ru, rv, rp := cellEuler(gm1, b0, b1, b2, b3)
		if !(au == au && bu == bu && lr > 0 && lp > 0 && rr > 0 && rp > 0) { // positivity fallback: first order in this cell
			lr, rr = rho[i], rho[i]
			lu, lv, lp = cellEuler(gm1, rho[i], mn[i], mt[i], en[i])
			ru, rv, rp = lu, lv, lp
		}
		if i >= 2 {
			f0, f1, f2, f3 := flux(g, xr, xu, xv, xp, lr, lu, lv, lp)
			if i >= 3 {
				updateEuler(&res, speed, g, c, rho, mn, mt, en, i-1, f0-q0, f1-q1, f2-q2, f3-q3)
			}
			q0, q1, q2, q3 = f0, f1, f2, f3
		}
		xr, xu, xv, xp = rr, ru, rv, rp
	}
	return res
}
