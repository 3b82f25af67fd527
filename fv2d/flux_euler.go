package fv2d

import "math"

// Products that meet an addition are written float64(x*y): an explicit
// conversion rounds, so the compiler cannot fuse them into one FMA (Go spec,
// "Arithmetic operators"), which would give other bits under GOAMD64=v3 or
// on arm64 than on the default build (docs/speed.md, "The same bits").

// EulerFlux is a numerical flux of the Euler equations of an ideal gas with
// ratio of specific heats gamma, across a face normal to the sweep
// direction. The left and right states are primitive: density r, normal
// velocity u, tangential velocity v, pressure p. It returns the flux of
// (rho, m_normal, m_tangential, E). It allocates nothing and does not check
// its input: a non-physical state (r <= 0, p <= 0) gives NaN or garbage,
// which the solver's state checks report.
type EulerFlux func(gamma, rl, ul, vl, pl, rr, ur, vr, pr float64) (f0, f1, f2, f3 float64)

// eulerFluxes is the table of Euler fluxes: the choices of the flux
// parameter of an Euler case, in order. To add a flux, write its function
// (an EulerFlux that neither allocates nor checks its input, with its source
// in the doc comment) and add one entry here: the flux choices of
// CommonParams, the name list and the ByName lookup follow from it.
// Then run TestEulerShockPosition and TestRandomRiemannPositivity with it.
var eulerFluxes = methods[EulerFlux]{kind: "Euler flux", list: []method[EulerFlux]{
	{"exact", EulerExact, "Godunov flux of the exact Riemann solver (Godunov 1959; Toro 2009 §4.5)"},
	{"hll", EulerHLL, "HLLE: HLL (Harten, Lax, van Leer 1983) with Einfeldt (1988) wave speeds"},
	{"hllc", EulerHLLC, "HLLC (Toro, Spruce, Speares 1994; Toro 2009 §10.4)"},
	{"rusanov", EulerRusanov, "Rusanov, local Lax-Friedrichs (Rusanov 1961)"},
	{"roe", EulerRoe, "Roe (Roe 1981) with the Harten-Hyman (1983) entropy fix"},
}}

// EulerFluxNames are the names EulerFluxByName knows, in the order of the
// flux parameter's choices.
var EulerFluxNames = eulerFluxes.names()

// EulerFluxByName returns the Euler flux called name: "exact" (Godunov flux
// of the exact Riemann solver), "hll" (HLLE), "hllc", "rusanov" or "roe"
// (with the Harten-Hyman entropy fix).
func EulerFluxByName(name string) (EulerFlux, error) { return eulerFluxes.byName(name) }

// EulerPhysicalFlux is the exact flux F(W) of the Euler equations normal to
// a face for the primitive state (r, u, v, p):
// (r u, r u^2 + p, r u v, u (E + p)) with E = p/(gamma-1) + r (u^2 + v^2)/2.
func EulerPhysicalFlux(gamma, r, u, v, p float64) (f0, f1, f2, f3 float64) {
	m := float64(r * u)
	e := p/(gamma-1) + float64(0.5*r*(float64(u*u)+float64(v*v)))
	return m, float64(m*u) + p, float64(m * v), float64(u * (e + p))
}

// EulerRusanov is the Rusanov (local Lax-Friedrichs) flux (Rusanov 1961):
// (F_L + F_R)/2 - s (U_R - U_L)/2 with s = max(|u_L| + a_L, |u_R| + a_R).
func EulerRusanov(gamma, rl, ul, vl, pl, rr, ur, vr, pr float64) (f0, f1, f2, f3 float64) {
	g1 := 1 / (gamma - 1)
	al := math.Sqrt(gamma * pl / rl)
	ar := math.Sqrt(gamma * pr / rr)
	s := max(math.Abs(ul)+al, math.Abs(ur)+ar)
	mul, mur := float64(rl*ul), float64(rr*ur)
	el := float64(pl*g1) + float64(0.5*rl*(float64(ul*ul)+float64(vl*vl)))
	er := float64(pr*g1) + float64(0.5*rr*(float64(ur*ur)+float64(vr*vr)))
	f0 = 0.5 * (mul + mur - float64(s*(rr-rl)))
	f1 = 0.5 * (float64(mul*ul) + pl + float64(mur*ur) + pr - float64(s*(mur-mul)))
	f2 = 0.5 * (float64(mul*vl) + float64(mur*vr) - float64(s*(float64(rr*vr)-float64(rl*vl))))
	f3 = 0.5 * (float64(ul*(el+pl)) + float64(ur*(er+pr)) - float64(s*(er-el)))
	return
}

// EulerExact is the Godunov flux from the exact Riemann solution sampled at
// x/t = 0 (Godunov 1959; Toro 2009 §4.5, §6.2). The tangential velocity is
// passively advected: it is taken from the side the contact comes from, by
// the sign of u* (Toro 2009 §4.8). When the data generate vacuum the vacuum
// solution is sampled (Toro 2009 §4.6).
func EulerExact(gamma, rl, ul, vl, pl, rr, ur, vr, pr float64) (f0, f1, f2, f3 float64) {
	s := solveRiemann(gamma, rl, ul, pl, rr, ur, pr)
	r, u, p := s.Sample(0)
	v := vl
	if s.UStar < 0 || (s.vacuum && s.LeftTail < 0) {
		v = vr
	}
	return EulerPhysicalFlux(gamma, r, u, v, p)
}

// The Roe averages (Roe 1981) weight the left and right states with the
// square roots of their densities: x~ = (sqrt(rho_L) x_L + sqrt(rho_R) x_R) /
// (sqrt(rho_L) + sqrt(rho_R)) for x = u, v and the total enthalpy
// H = (E + p)/rho, rho~ = sqrt(rho_L rho_R), a~^2 = (gamma-1) (H~ - |u~|^2/2).
// Dividing both weights by sqrt(rho_L) gives x~ = x_n w with the sum
// x_n = x_L + s x_R, s = sqrt(rho_R/rho_L), w = 1/(1 + s), and
// rho~ = rho_L s (common practice): one square root instead of two, the
// dearest operation of a face after the division. Likewise
// a~ = a_n w with a_n = sqrt((gamma-1) (H_n (1+s) - (u_n^2 + v_n^2)/2)),
// whose square root need not wait for the division of w.
// The small pieces below are inlined by the compiler, so that the fluxes
// that use them make no calls for them.

// totalEnthalpy is H = g z + (u^2 + v^2)/2 with g = gamma/(gamma-1), given
// z = p/rho, which a flux divides out once per side for H and the sound speed.
func totalEnthalpy(g, z, u, v float64) float64 {
	return float64(g*z) + float64(0.5*(float64(u*u)+float64(v*v)))
}

// sound is the sound speed a = sqrt(gamma z) of an ideal gas, given z = p/rho.
func sound(gamma, z float64) float64 { return math.Sqrt(gamma * z) }

// roeWeights returns s = sqrt(rho_R/rho_L) and w = 1/(1 + s), given
// irl = 1/rho_L, which the flux also needs for p_L/rho_L.
func roeWeights(rr, irl float64) (s, w float64) {
	s = math.Sqrt(rr * irl)
	return s, 1 / (1 + s)
}

// roeSum is x_n = x_L + s x_R, the Roe average of xl and xr times 1 + s.
func roeSum(s, xl, xr float64) float64 { return xl + float64(s*xr) }

// roeSoundSum is a_n = sqrt((gamma-1) (H_n (1+s) - (u_n^2 + v_n^2)/2)), the
// Roe sound speed a~ times 1 + s, from the sums of roeSum.
func roeSoundSum(gm1, s, hn, un, vn float64) float64 {
	return math.Sqrt(gm1 * (float64(hn*(1+s)) - float64(0.5*(float64(un*un)+float64(vn*vn)))))
}

// roeAverage returns the Roe averages rho~, u~, v~, H~, a~ and the left and
// right total enthalpies.
func roeAverage(gamma, rl, ul, vl, pl, rr, ur, vr, pr float64) (rho, u, v, h, a, hl, hr float64) {
	g := gamma / (gamma - 1)
	irl := 1 / rl
	hl, hr = totalEnthalpy(g, pl*irl, ul, vl), totalEnthalpy(g, pr/rr, ur, vr)
	s, w := roeWeights(rr, irl)
	un, vn, hn := roeSum(s, ul, ur), roeSum(s, vl, vr), roeSum(s, hl, hr)
	return rl * s, un * w, vn * w, hn * w, roeSoundSum(gamma-1, s, hn, un, vn) * w, hl, hr
}

// einfeldtWaves returns the HLLE wave speed estimates of Einfeldt (1988,
// SIAM J. Numer. Anal. 25), S_L = min(u_L - a_L, u~ - a~) and
// S_R = max(u_R + a_R, u~ + a~) with the Roe averages u~, a~ and the sound
// speeds a_L, a_R, and the total enthalpies H_L, H_R of the two sides; g is
// gamma/(gamma-1). u~ -+ a~ is taken as (u_n -+ a_n) w.
func einfeldtWaves(gamma, g, rl, ul, vl, pl, rr, ur, vr, pr float64) (sl, sr, hl, hr float64) {
	irl := 1 / rl
	zl, zr := pl*irl, pr/rr
	hl, hr = totalEnthalpy(g, zl, ul, vl), totalEnthalpy(g, zr, ur, vr)
	s, w := roeWeights(rr, irl)
	un, vn, hn := roeSum(s, ul, ur), roeSum(s, vl, vr), roeSum(s, hl, hr)
	an := roeSoundSum(gamma-1, s, hn, un, vn)
	sl = min(ul-sound(gamma, zl), float64((un-an)*w))
	sr = max(ur+sound(gamma, zr), float64((un+an)*w))
	return sl, sr, hl, hr
}

// EulerHLL is the HLL flux (Harten, Lax, van Leer 1983; Toro 2009 §10.3)
// with the wave speeds of Einfeldt (1988), i.e. HLLE:
// F = (S_R F_L - S_L F_R + S_L S_R (U_R - U_L)) / (S_R - S_L) for
// S_L < 0 < S_R, else the upwind physical flux. Positivity preserving under
// the CFL condition (Einfeldt, Munz, Roe, Sjögreen 1991).
func EulerHLL(gamma, rl, ul, vl, pl, rr, ur, vr, pr float64) (f0, f1, f2, f3 float64) {
	sl, sr, hl, hr := einfeldtWaves(gamma, gamma/(gamma-1), rl, ul, vl, pl, rr, ur, vr, pr)
	if sl >= 0 {
		return EulerPhysicalFlux(gamma, rl, ul, vl, pl)
	}
	if sr <= 0 {
		return EulerPhysicalFlux(gamma, rr, ur, vr, pr)
	}
	mul, mur := float64(rl*ul), float64(rr*ur)
	el, er := float64(rl*hl)-pl, float64(rr*hr)-pr // E = rho H - p
	w := 1 / (sr - sl)
	ss := float64(sl * sr)
	f0 = (float64(sr*mul) - float64(sl*mur) + float64(ss*(rr-rl))) * w
	f1 = (float64(sr*(float64(mul*ul)+pl)) - float64(sl*(float64(mur*ur)+pr)) + float64(ss*(mur-mul))) * w
	f2 = (float64(sr*mul*vl) - float64(sl*mur*vr) + float64(ss*(float64(rr*vr)-float64(rl*vl)))) * w
	f3 = (float64(sr*mul*hl) - float64(sl*mur*hr) + float64(ss*(er-el))) * w
	return
}

// EulerHLLC is the HLLC flux (Toro, Spruce, Speares 1994; Toro 2009 §10.4)
// with the Einfeldt (1988) wave speeds S_L, S_R of EulerHLL and the contact
// speed S* of Toro 2009 eq. 10.37. The star states are those of Toro 2009
// eq. 10.39; F = F*_L = F_L + S_L (U*_L - U_L) for S* >= 0, else
// F*_R = F_R + S_R (U*_R - U_R) (eq. 10.38). A stationary contact (u_L = u_R = 0, p_L = p_R) is
// resolved exactly.
func EulerHLLC(gamma, rl, ul, vl, pl, rr, ur, vr, pr float64) (f0, f1, f2, f3 float64) {
	return hllc(gamma, gamma/(gamma-1), rl, ul, vl, pl, rr, ur, vr, pr)
}

// hllc is EulerHLLC given g = gamma/(gamma-1), which a sweep computes once:
// the wave speeds and enthalpies of einfeldtWaves, then hllcStar. A sweep
// runs the two halves as two passes over its faces
// (sweepParams.eulerFaces): each pass is a shorter chain of dependent
// operations than the whole, so the processor works on more faces at once.
func hllc(gamma, g, rl, ul, vl, pl, rr, ur, vr, pr float64) (f0, f1, f2, f3 float64) {
	sl, sr, hl, hr := einfeldtWaves(gamma, g, rl, ul, vl, pl, rr, ur, vr, pr)
	return hllcStar(gamma, rl, ul, vl, pl, rr, ur, vr, pr, sl, sr, hl, hr)
}

// hllcStar is the second half of hllc: the flux, given the wave speeds and
// total enthalpies of einfeldtWaves.
func hllcStar(gamma, rl, ul, vl, pl, rr, ur, vr, pr, sl, sr, hl, hr float64) (f0, f1, f2, f3 float64) {
	if sl >= 0 {
		return EulerPhysicalFlux(gamma, rl, ul, vl, pl)
	}
	if sr <= 0 {
		return EulerPhysicalFlux(gamma, rr, ur, vr, pr)
	}
	ql, qr := float64(rl*(sl-ul)), float64(rr*(sr-ur))   // mass flux through the outer waves
	sn, sd := pr-pl+float64(ul*ql)-float64(ur*qr), ql-qr // S* = sn/sd
	ss := sn / sd
	// The side K of the contact the face lies on: L for S* >= 0, else R.
	r, u, v, p, h, sk, q := rl, ul, vl, pl, hl, sl, ql
	if ss < 0 {
		r, u, v, p, h, sk, q = rr, ur, vr, pr, hr, sr, qr
	}
	// F_K + S_K (U*_K - U_K) (Toro 2009 eqs. 10.38, 10.39). With
	// t = rho*_K/rho_K = (S_K - u)/(S_K - S*) and q = rho (S_K - u):
	// U*_K - U_K = (rho (t-1), rho t S* - m, v rho (t-1), (t-1) (rho H + q S*)),
	// the energy row being eq. 10.39's E (t-1) + rho t (S*-u) (S* + p/q)
	// with rho t (S*-u) = q (t-1). t-1 = (S*-u)/(S_K-S*), taken as
	// (sn - u sd)/(S_K sd - sn) so that its division does not wait for
	// S*'s, vanishes when the contact moves with the state (sn = u sd), and so
	// does U*_K - U_K.
	m := float64(r * u)
	t1 := (sn - float64(u*sd)) / (float64(sk*sd) - sn)
	d0 := float64(r * t1)
	d1 := float64((r+d0)*ss) - m
	d2 := v * d0
	d3 := t1 * (float64(r*h) + float64(q*ss))
	return m + float64(sk*d0), float64(m*u) + p + float64(sk*d1), float64(m*v) + float64(sk*d2), float64(m*h) + float64(sk*d3)
}

// EulerRoe is the Roe flux (Roe 1981, J. Comput. Phys. 43; Toro 2009 §11.2)
// F = (F_L + F_R)/2 - sum_k |lambda_k| alpha_k K_k / 2 over the eigenvalues
// u~ - a~, u~, u~, u~ + a~ of the Roe matrix, with the entropy fix of Harten
// and Hyman (1983, J. Comput. Phys. 50) on the two acoustic waves. Not
// positivity preserving (Einfeldt et al. 1991).
func EulerRoe(gamma, rl, ul, vl, pl, rr, ur, vr, pr float64) (f0, f1, f2, f3 float64) {
	return roeFlux(gamma, rl, ul, vl, pl, rr, ur, vr, pr, true)
}

// roeFlux is EulerRoe, with the Harten-Hyman entropy fix if fix is set.
//
// Harten-Hyman (as in Toro 2009 §11.4.2): an acoustic wave k is a transonic
// rarefaction when lambda_k(U_b) < 0 < lambda_k(U_a), where U_b and U_a are
// the states before and after it in the Roe linearisation (U_L and
// U_L + alpha_1 K_1 for wave 1, U_R - alpha_4 K_4 and U_R for wave 4). The
// wave is then split into a part moving at l_b = lambda_k(U_b) and one at
// l_a = lambda_k(U_a) with the same total speed lambda~, so that its left-
// going share moves at l_b (l_a - lambda~)/(l_a - l_b); in the central form
// this replaces |lambda~| by ((l_a + l_b) lambda~ - 2 l_a l_b) / (l_a - l_b).
func roeFlux(gamma, rl, ul, vl, pl, rr, ur, vr, pr float64, fix bool) (f0, f1, f2, f3 float64) {
	rho, u, v, h, a, hl, hr := roeAverage(gamma, rl, ul, vl, pl, rr, ur, vr, pr)
	dr, du, dv, dp := rr-rl, ur-ul, vr-vl, pr-pl
	ia2 := 1 / (a * a)
	// Wave strengths (Toro 2009 §11.2.2, eqs. 11.68-11.70, with the shear wave).
	a1 := float64(0.5 * (dp - float64(rho*a*du)) * ia2)
	a2 := dr - float64(dp*ia2)
	a3 := rho * dv
	a4 := float64(0.5 * (dp + float64(rho*a*du)) * ia2)
	l1, l2, l4 := u-a, u, u+a
	k1, k4 := math.Abs(l1), math.Abs(l4)
	if fix {
		g1 := gamma - 1
		// Wave 1: from U_L to U_L + a1 K1.
		if lb := ul - math.Sqrt(gamma*pl/rl); lb < 0 {
			r := rl + a1
			m := float64(rl*ul) + float64(a1*(u-a))
			n := float64(rl*vl) + float64(a1*v)
			e := float64(rl*hl) - pl + float64(a1*(h-float64(u*a)))
			if la := (m - math.Sqrt(gamma*g1*(float64(e*r)-float64(0.5*(float64(m*m)+float64(n*n)))))) / r; la > 0 {
				k1 = (float64((la+lb)*l1) - float64(2*la*lb)) / (la - lb)
			}
		}
		// Wave 4: from U_R - a4 K4 to U_R.
		if la := ur + math.Sqrt(gamma*pr/rr); la > 0 {
			r := rr - a4
			m := float64(rr*ur) - float64(a4*(u+a))
			n := float64(rr*vr) - float64(a4*v)
			e := float64(rr*hr) - pr - float64(a4*(h+float64(u*a)))
			if lb := (m + math.Sqrt(gamma*g1*(float64(e*r)-float64(0.5*(float64(m*m)+float64(n*n)))))) / r; lb < 0 {
				k4 = (float64((la+lb)*l4) - float64(2*la*lb)) / (la - lb)
			}
		}
	}
	k2 := math.Abs(l2)
	w1, w2, w3, w4 := float64(k1*a1), float64(k2*a2), float64(k2*a3), float64(k4*a4)
	// Eigenvectors K1 = (1, u-a, v, h-ua), K2 = (1, u, v, (u^2+v^2)/2),
	// K3 = (0, 0, 1, v), K4 = (1, u+a, v, h+ua).
	d0 := w1 + w2 + w4
	d1 := float64(w1*(u-a)) + float64(w2*u) + float64(w4*(u+a))
	d2 := float64((w1+w2+w4)*v) + w3
	d3 := float64(w1*(h-float64(u*a))) + float64(w2*0.5*(float64(u*u)+float64(v*v))) + float64(w3*v) + float64(w4*(h+float64(u*a)))
	mul, mur := float64(rl*ul), float64(rr*ur)
	f0 = 0.5 * (mul + mur - d0)
	f1 = 0.5 * (float64(mul*ul) + pl + float64(mur*ur) + pr - d1)
	f2 = 0.5 * (float64(mul*vl) + float64(mur*vr) - d2)
	f3 = 0.5 * (float64(mul*hl) + float64(mur*hr) - d3)
	return
}
