package fv2d

import "math"

// Products that meet an addition are written float64(x*y): an explicit
// conversion rounds, so the compiler cannot fuse them into one FMA (Go spec,
// "Arithmetic operators"), which would give other bits under GOAMD64=v3 or
// on arm64 than on the default build (docs/speed.md, "The same bits").

// Manufactured solutions (P. J. Roache, Verification and Validation in
// Computational Science and Engineering, Hermosa 1998, ch. 3; C. J. Roy,
// C. C. Nelson, T. M. Smith, C. C. Ober, "Verification of Euler/Navier-Stokes
// codes using the method of manufactured solutions", Int. J. Numer. Meth.
// Fluids 44, 2004): choose smooth fields, put them through the operator
// U_t + F(U)_x + G(U)_y and solve with the result as the source S, so that
// the chosen fields are the exact solution. Every field here is a constant
// plus travelling sine waves with several wave numbers and frequencies, so
// that no term of the equations vanishes, periodic on the unit square. The
// source terms are written in closed form: analytic derivatives of the waves
// combined by the product rule; nothing is differentiated numerically.

// mmsWave is a sin(kx x + ky y + w t + phase).
type mmsWave struct{ a, kx, ky, w, phase float64 }

// mmsField is c0 + the sum of its waves.
type mmsField struct {
	c0    float64
	waves []mmsWave
}

// at returns the field f and its derivatives f_x, f_y, f_t at (x, y, t).
func (f mmsField) at(x, y, t float64) (v, vx, vy, vt float64) {
	v = f.c0
	for _, w := range f.waves {
		s, c := sincos(float64(w.kx*x) + float64(w.ky*y) + float64(w.w*t) + w.phase)
		v += float64(w.a * s)
		vx += float64(w.a * w.kx * c)
		vy += float64(w.a * w.ky * c)
		vt += float64(w.a * w.w * c)
	}
	return v, vx, vy, vt
}

const twoPi = 2 * math.Pi

// mmsBurgersU is the manufactured Burgers field: positive everywhere
// (0.55 <= u <= 1.45), so the flux has no sonic point.
var mmsBurgersU = mmsField{c0: 1, waves: []mmsWave{
	{a: 0.2, kx: twoPi, ky: 0, w: 1.3, phase: 0},
	{a: 0.15, kx: 0, ky: 2 * twoPi, w: -0.9, phase: 0.4},
	{a: 0.1, kx: twoPi, ky: twoPi, w: 0.7, phase: 1.1},
}}

// mmsEulerFields are the manufactured primitive fields rho, u, v, p of the
// Euler case: rho in [0.55, 1.45], p in [1.1, 1.9], u in [0.45, 0.95],
// v in [0.28, 0.72], each with its own wave numbers in x and y and its own
// frequencies (in the manner of Roy et al. 2004).
var mmsEulerFields = [4]mmsField{
	{c0: 1, waves: []mmsWave{ // rho
		{a: 0.2, kx: twoPi, w: 0.8},
		{a: 0.15, ky: 2 * twoPi, w: -0.5, phase: 0.3},
		{a: 0.1, kx: twoPi, ky: twoPi, w: 1.1, phase: 0.7},
	}},
	{c0: 0.7, waves: []mmsWave{ // u
		{a: 0.15, kx: 2 * twoPi, w: 0.6, phase: 1.2},
		{a: 0.1, ky: twoPi, w: -1.0, phase: 0.2},
	}},
	{c0: 0.5, waves: []mmsWave{ // v
		{a: 0.1, kx: twoPi, w: -0.7, phase: 0.9},
		{a: 0.12, ky: 2 * twoPi, w: 0.4, phase: 2.0},
	}},
	{c0: 1.5, waves: []mmsWave{ // p
		{a: 0.2, kx: twoPi, ky: -twoPi, w: 0.9, phase: 0.5},
		{a: 0.2, ky: twoPi, w: -0.6, phase: 1.4},
	}},
}

// mmsBurgersExact writes the manufactured u at (x, y, t) into w.
func mmsBurgersExact(x, y, t float64, w []float64) {
	w[0], _, _, _ = mmsBurgersU.at(x, y, t)
}

// mmsBurgersSource writes S = u_t + u u_x + u u_y, the residual of
// u_t + (u^2/2)_x + (u^2/2)_y for the manufactured u, into s.
func mmsBurgersSource(x, y, t float64, s []float64) {
	u, ux, uy, ut := mmsBurgersU.at(x, y, t)
	s[0] = ut + float64(u*(ux+uy))
}

// mmsEulerExact writes the manufactured primitive state (rho, u, v, p) into w.
func mmsEulerExact(x, y, t float64, w []float64) {
	for k := range mmsEulerFields {
		w[k], _, _, _ = mmsEulerFields[k].at(x, y, t)
	}
}

// mmsEulerSource returns the source of the Euler equations of an ideal gas
// with ratio of specific heats gamma for the manufactured fields: with
// E = p/(gamma-1) + rho q/2, q = u^2 + v^2 and H = E + p,
//
//	S_rho = rho_t + (rho u)_x + (rho v)_y
//	S_mx  = (rho u)_t + (rho u^2 + p)_x + (rho u v)_y
//	S_my  = (rho v)_t + (rho u v)_x + (rho v^2 + p)_y
//	S_E   = E_t + (u H)_x + (v H)_y
//
// each expanded by the product rule into the fields and their analytic
// first derivatives.
func mmsEulerSource(gamma float64) func(x, y, t float64, s []float64) {
	gm1 := gamma - 1
	return func(x, y, t float64, s []float64) {
		r, rx, ry, rt := mmsEulerFields[0].at(x, y, t)
		u, ux, uy, ut := mmsEulerFields[1].at(x, y, t)
		v, vx, vy, vt := mmsEulerFields[2].at(x, y, t)
		p, px, py, pt := mmsEulerFields[3].at(x, y, t)

		// Mass fluxes rho u, rho v and their derivatives.
		mu, mux, muy, mut := r*u, float64(rx*u)+float64(r*ux), float64(ry*u)+float64(r*uy), float64(rt*u)+float64(r*ut)
		mv, mvx, mvy, mvt := r*v, float64(rx*v)+float64(r*vx), float64(ry*v)+float64(r*vy), float64(rt*v)+float64(r*vt)

		s[0] = rt + mux + mvy
		// (rho u^2)_x = (mu u)_x, (rho u v)_y = (mu v)_y, ...
		s[1] = mut + (float64(mux*u) + float64(mu*ux) + px) + (float64(muy*v) + float64(mu*vy))
		s[2] = mvt + (float64(mvx*u) + float64(mv*ux)) + (float64(mvy*v) + float64(mv*vy) + py)

		q2 := 0.5 * (float64(u*u) + float64(v*v))
		E := p/gm1 + float64(r*q2)
		Ex := px/gm1 + float64(rx*q2) + float64(r*(float64(u*ux)+float64(v*vx)))
		Ey := py/gm1 + float64(ry*q2) + float64(r*(float64(u*uy)+float64(v*vy)))
		Et := pt/gm1 + float64(rt*q2) + float64(r*(float64(u*ut)+float64(v*vt)))
		H, Hx, Hy := E+p, Ex+px, Ey+py
		s[3] = Et + (float64(ux*H) + float64(u*Hx)) + (float64(vy*H) + float64(v*Hy))
	}
}
