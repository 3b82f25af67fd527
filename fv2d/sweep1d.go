package fv2d

import "math"

// Products that meet an addition are written float64(x*y): an explicit
// conversion rounds, so the compiler cannot fuse them into one FMA (Go spec,
// "Arithmetic operators"), which would give other bits under GOAMD64=v3 or
// on arm64 than on the default build (docs/speed.md, "The same bits").

// A sweep advances every grid line of one direction by one 1-D
// finite-volume step in conservative form,
//   U_i <- U_i - dt/dx (F_{i+1/2} - F_{i-1/2}),
// line by line. A line kernel gets the conserved variables of one line
// (ghost values included, G at each end) and updates its interior in place.
// It works in passes over the line, each a simple loop over flat arrays of
// the worker's scratch: primitive variables of every cell, reconstructed
// face values, the numerical flux at every face, then the update. Short
// loops without calls through function values keep the processor busy on
// several cells at once; the passes for the default limiter and flux are
// instantiated with the function itself (see sweepParams.slopes), so the
// compiler calls it directly or inlines it.
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
	// The defaults, which get passes of their own: lim is VanLeer, bf is
	// BurgersGodunov, ef is EulerHLLC.
	vanLeer, godunovB, hllc bool
	simd                    bool         // the passes that have one take their SIMD form (sweep_simd.go)
	scr                     *lineScratch // the worker's
}

// lineScratch is a worker's scratch for the passes over one line, four
// arrays (one per line variable) of the longest line each: w the primitive
// variables of the cells, d their slopes and then the left face values, r
// the right face values, f the fluxes (f_i at face i+1/2); and ir, 1/rho of
// the cells, divided once for the primitive variables and the half step.
type lineScratch struct {
	w, d, r, f [4][]float64
	ir         []float64
}

func newLineScratch(n int) *lineScratch {
	s := &lineScratch{ir: make([]float64, n)}
	for k := range 4 {
		s.w[k], s.d[k], s.r[k], s.f[k] = make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n)
	}
	return s
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

// colsKernel updates the interiors of four adjacent columns of m cells in
// place (a y sweep): rho, mn, mt, en start at the first column's ghost
// cell 0, and a column's cells lie stride apart (eulerMUSCLPrimCols).
type colsKernel func(sp *sweepParams, rho, mn, mt, en []float64, stride, m int) lineResult

// cellEuler converts the conserved state of one cell to primitive
// variables.
func cellEuler(gm1, r, m, t, e float64) (u, v, p float64) {
	return primEuler(gm1, r, 1/r, m, t, e)
}

// primEuler is cellEuler given inv = 1/r.
func primEuler(gm1, r, inv, m, t, e float64) (u, v, p float64) {
	u, v = float64(m*inv), float64(t*inv)
	p = float64(gm1 * (e - float64(0.5*r*(float64(u*u)+float64(v*v)))))
	return
}

// checkEuler updates res with the new conserved state of one cell: its
// positivity (rho > 0 and p > 0, i.e. 2 E rho > |m|^2, without a division)
// and, if wanted, its wave speeds |u_n| + a and |u_t| + a.
func checkEuler(res *lineResult, speed bool, gamma, r, m, t, e float64) {
	k2 := float64(m*m) + float64(t*t)
	if !(r > 0 && float64(2*e*r) > k2) {
		res.bad = true
		return
	}
	if speed {
		inv := 1 / r
		a := math.Sqrt(gamma * (gamma - 1) * (e - float64(0.5*k2*inv)) * inv)
		if s := math.Abs(m*inv) + a; s > res.sn {
			res.sn = s
		}
		if s := math.Abs(t*inv) + a; s > res.st {
			res.st = s
		}
	}
}

// primLine sets w to the primitive variables (rho, u_n, u_t, p) and ir to
// 1/rho of the cells of the line (rho, mn, mt, en).
func primLine(simd bool, gm1 float64, rho, mn, mt, en []float64, w *[4][]float64, ir []float64) {
	m := len(rho)
	mn, mt, en, ir = mn[:m], mt[:m], en[:m], ir[:m]
	w0, w1, w2, w3 := w[0][:m], w[1][:m], w[2][:m], w[3][:m]
	start := 0
	if simd {
		start = primLine4(gm1, rho, mn, mt, en, w, ir)
	}
	for i := start; i < m; i++ {
		r := rho[i]
		inv := 1 / r
		w0[i], ir[i] = r, inv
		w1[i], w2[i], w3[i] = primEuler(gm1, r, inv, mn[i], mt[i], en[i])
	}
}

// slopesWith sets d_i = lim(w_i - w_{i-1}, w_{i+1} - w_i) for the cells
// 1 <= i < len(w)-1. Small enough to be inlined, so that a limiter known at
// the call is called directly.
func slopesWith(lim Limiter, w, d []float64) {
	d = d[:len(w)]
	for i := 1; i < len(w)-1; i++ {
		d[i] = lim(w[i]-w[i-1], w[i+1]-w[i])
	}
}

// slopes sets the limited slopes d of w with the sweep's limiter.
func (sp *sweepParams) slopes(w, d []float64) {
	if sp.vanLeer {
		done := 0 // cells 1..done by the SIMD pass
		if sp.simd {
			done = vanLeerSlopes4(w, d)
		}
		slopesWith(VanLeer, w[done:], d[done:])
		return
	}
	slopesWith(sp.lim, w, d)
}

// eulerFaces sets f_i = flux(r_i, l_{i+o}), the flux between element i
// and the next cell o elements on, for lo <= i < hi: in a line (o = 1) the
// flux at face i+1/2 from the right face values r of cell i and the left
// face values l of cell i+1; in the scratch of four columns (o = 4) the same
// for each column. (A flux is too large to be inlined, so a call through
// the function value costs no more than a direct one.)
func (sp *sweepParams) eulerFaces(r, l, f *[4][]float64, o, lo, hi int) {
	flux, gamma, g, direct := sp.ef, sp.gamma, sp.gamma/(sp.gamma-1), sp.hllc
	r0, r1, r2, r3 := r[0][lo:hi], r[1][lo:hi], r[2][lo:hi], r[3][lo:hi]
	n := len(r0)
	r1, r2, r3 = r1[:n], r2[:n], r3[:n]
	l0, l1, l2, l3 := l[0][lo+o:hi+o], l[1][lo+o:hi+o], l[2][lo+o:hi+o], l[3][lo+o:hi+o]
	l0, l1, l2, l3 = l0[:n], l1[:n], l2[:n], l3[:n]
	f0, f1, f2, f3 := f[0][lo:hi], f[1][lo:hi], f[2][lo:hi], f[3][lo:hi]
	f0, f1, f2, f3 = f0[:n], f1[:n], f2[:n], f3[:n]
	start := 0
	if sp.simd && direct {
		start = hllcFaces4(gamma, g, r0, r1, r2, r3, l0, l1, l2, l3, f0, f1, f2, f3)
	}
	if !direct {
		for i := start; i < n; i++ {
			f0[i], f1[i], f2[i], f3[i] = flux(gamma, r0[i], r1[i], r2[i], r3[i], l0[i], l1[i], l2[i], l3[i])
		}
		return
	}
	// The default, HLLC, with gamma/(gamma-1) computed once, in two passes
	// (hllc): the wave speeds and enthalpies go to f, then each face's flux
	// replaces them.
	for i := start; i < n; i++ {
		f0[i], f1[i], f2[i], f3[i] = einfeldtWaves(gamma, g, r0[i], r1[i], r2[i], r3[i], l0[i], l1[i], l2[i], l3[i])
	}
	for i := start; i < n; i++ {
		f0[i], f1[i], f2[i], f3[i] = hllcStar(gamma, r0[i], r1[i], r2[i], r3[i], l0[i], l1[i], l2[i], l3[i], f0[i], f1[i], f2[i], f3[i])
	}
}

// updateEulerLine writes the conservative update
// U_i -= c (F_{i+1/2} - F_{i-1/2}) of the cells lo <= i < hi, with f_i the
// flux at face i+1/2, and checks the new states.
func updateEulerLine(res *lineResult, sp *sweepParams, rho, mn, mt, en []float64, f *[4][]float64, lo, hi int) {
	c := sp.dtdx
	rho, mn, mt, en = rho[lo:hi], mn[lo:hi], mt[lo:hi], en[lo:hi]
	n := len(rho)
	f0, f1, f2, f3 := f[0][lo-1:hi], f[1][lo-1:hi], f[2][lo-1:hi], f[3][lo-1:hi]
	f0, f1, f2, f3 = f0[:n+1], f1[:n+1], f2[:n+1], f3[:n+1]
	start := 0
	if sp.simd {
		var bad bool
		bad, start = updateEulerLine4(c, rho, mn, mt, en, f0, f1, f2, f3)
		res.bad = res.bad || bad
	}
	for i := start; i < n; i++ {
		a, b, d, e := rho[i]-float64(c*(f0[i+1]-f0[i])), mn[i]-float64(c*(f1[i+1]-f1[i])), mt[i]-float64(c*(f2[i+1]-f2[i])), en[i]-float64(c*(f3[i+1]-f3[i]))
		rho[i], mn[i], mt[i], en[i] = a, b, d, e
		if !(a > 0 && float64(2*e*a) > float64(b*b)+float64(d*d)) { // checkEuler's positivity test
			res.bad = true
		}
	}
	if sp.speed && !res.bad {
		start := 0
		if sp.simd {
			res.sn, res.st, start = speedsEuler4(sp.gamma, rho, mn, mt, en)
		}
		for i := start; i < n; i++ {
			checkEuler(res, true, sp.gamma, rho[i], mn[i], mt[i], en[i])
		}
	}
}

// updateEuler writes the conservative update U_k -= c (F_{k+1/2} - F_{k-1/2})
// of cell k, given the flux differences d0..d3, and checks the new state.
func updateEuler(res *lineResult, speed bool, gamma, c float64, rho, mn, mt, en []float64, k int, d0, d1, d2, d3 float64) {
	a, b, d, e := rho[k]-float64(c*d0), mn[k]-float64(c*d1), mt[k]-float64(c*d2), en[k]-float64(c*d3)
	rho[k], mn[k], mt[k], en[k] = a, b, d, e
	checkEuler(res, speed, gamma, a, b, d, e)
}

// eulerGodunov is the first-order Godunov-type scheme (Godunov 1959; Toro
// 2009 §6.2): piecewise-constant data, one ghost cell per side.
func eulerGodunov(sp *sweepParams, rho, mn, mt, en []float64) (res lineResult) {
	m, w := len(rho), &sp.scr.w
	primLine(sp.simd, sp.gamma-1, rho, mn, mt, en, w, sp.scr.ir)
	sp.eulerFaces(w, w, &sp.scr.f, 1, 0, m-1)
	updateEulerLine(&res, sp, rho, mn, mt, en, &sp.scr.f, 1, m-1)
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
	m, scr := len(rho), sp.scr
	primLine(sp.simd, sp.gamma-1, rho, mn, mt, en, &scr.w, scr.ir)
	if sp.vanLeer { // slopes and half step in one pass
		done := 0 // cells 1..done by the SIMD pass
		if sp.simd {
			done = (m - 2) &^ 3
			vanLeerEvolve4(sp.gamma, 0.5*sp.dtdx, &scr.w, scr.ir, &scr.d, &scr.r, 1, 1, 1+done)
		}
		evolveFaces(sp.gamma, 0.5*sp.dtdx, &scr.w, scr.ir, &scr.d, &scr.r, 1, 1+done, m-1, true)
	} else {
		for k := range 4 {
			sp.slopes(scr.w[k][:m], scr.d[k])
		}
		evolveFaces(sp.gamma, 0.5*sp.dtdx, &scr.w, scr.ir, &scr.d, &scr.r, 1, 1, m-1, false)
	}
	sp.eulerFaces(&scr.r, &scr.d, &scr.f, 1, 1, m-2)
	updateEulerLine(&res, sp, rho, mn, mt, en, &scr.f, 2, m-2)
	return res
}

// evolveFaces is the MUSCL-Hancock half step of eulerMUSCLPrim (Toro 2009
// §14.4) for the elements lo <= i < hi of the scratch, whose cells lie o
// elements apart (o = 1 in a line, 4 in four columns): from the primitive
// values w (and ir = 1/rho) and the slopes dW, the face values W -+ dW/2
// evolved by -dt/(2dx) A(W) dW, A the Jacobian of the x flux in
// (rho, u, v, p), p_x/rho taken as p_x (1/rho), h = dt/(2dx). The left face
// values go to d and the right ones to r; where a face density or pressure is
// not positive, both are the cell's values (first order in that cell). With
// vanLeer the slopes are the van Leer slopes of w, found in the same pass
// (they stay in registers); else they are read from d (sweepParams.slopes).
// vanLeerEvolve4 is this pass with van Leer, four elements at a time. The
// cells o before lo and o after hi-1 must exist.
func evolveFaces(g, h float64, w *[4][]float64, ir []float64, d, r *[4][]float64, o, lo, hi int, vanLeer bool) {
	if hi <= lo {
		return
	}
	// the cells, their left and right neighbours: slices of one length
	w0, w1, w2, w3 := w[0][lo:hi], w[1][lo:hi], w[2][lo:hi], w[3][lo:hi]
	n := len(w0)
	w1, w2, w3, ir = w1[:n], w2[:n], w3[:n], ir[lo:hi][:n]
	a0, a1, a2, a3 := w[0][lo-o:hi-o], w[1][lo-o:hi-o], w[2][lo-o:hi-o], w[3][lo-o:hi-o]
	a0, a1, a2, a3 = a0[:n], a1[:n], a2[:n], a3[:n]
	b0, b1, b2, b3 := w[0][lo+o:hi+o], w[1][lo+o:hi+o], w[2][lo+o:hi+o], w[3][lo+o:hi+o]
	b0, b1, b2, b3 = b0[:n], b1[:n], b2[:n], b3[:n]
	d0, d1, d2, d3 := d[0][lo:hi], d[1][lo:hi], d[2][lo:hi], d[3][lo:hi]
	d0, d1, d2, d3 = d0[:n], d1[:n], d2[:n], d3[:n]
	r0, r1, r2, r3 := r[0][lo:hi], r[1][lo:hi], r[2][lo:hi], r[3][lo:hi]
	r0, r1, r2, r3 = r0[:n], r1[:n], r2[:n], r3[:n]
	for i := range n {
		rc, uc, vc, pc := w0[i], w1[i], w2[i], w3[i]
		var dr, du, dv, dp float64
		if vanLeer {
			dr = VanLeer(rc-a0[i], b0[i]-rc)
			du = VanLeer(uc-a1[i], b1[i]-uc)
			dv = VanLeer(vc-a2[i], b2[i]-vc)
			dp = VanLeer(pc-a3[i], b3[i]-pc)
		} else {
			dr, du, dv, dp = d0[i], d1[i], d2[i], d3[i]
		}
		er := float64(h * (float64(uc*dr) + float64(rc*du)))
		eu := float64(h * (float64(uc*du) + float64(dp*ir[i])))
		ev := float64(h * (uc * dv))
		ep := float64(h * (float64(g*pc*du) + float64(uc*dp)))
		lr, lu, lv, lp := rc-float64(0.5*dr)-er, uc-float64(0.5*du)-eu, vc-float64(0.5*dv)-ev, pc-float64(0.5*dp)-ep
		rr, ru, rv, rp := rc+float64(0.5*dr)-er, uc+float64(0.5*du)-eu, vc+float64(0.5*dv)-ev, pc+float64(0.5*dp)-ep
		if !(lr > 0 && lp > 0 && rr > 0 && rp > 0) {
			lr, lu, lv, lp, rr, ru, rv, rp = rc, uc, vc, pc, rc, uc, vc, pc
		}
		d0[i], d1[i], d2[i], d3[i], r0[i], r1[i], r2[i], r3[i] = lr, lu, lv, lp, rr, ru, rv, rp
	}
}

// The y sweep of the default Euler kernels runs four adjacent columns at a
// time in place (eulerMUSCLPrimCols, eulerGodunovCols): a row's four cells
// are contiguous in the state, so the columns are read and written with the
// row stride and need no gather into lines and no scatter back. The scratch
// keeps row j's four values at 4j, and the line passes run on it with the
// neighbouring cell 4 elements away instead of 1: each column sees exactly
// its line kernel's operations. With the SIMD passes a vector is one such
// row of four (sweep_simd.go).

// primCols is primLine on four adjacent columns: the rows j < m of the
// state (row j at j*stride) to the scratch (row j at 4j).
func primCols(simd bool, gm1 float64, rho, mn, mt, en []float64, stride, m int, w *[4][]float64, ir []float64) {
	if simd {
		primCols4(gm1, rho, mn, mt, en, stride, m, w, ir)
		return
	}
	w0, w1, w2, w3, ir := w[0][:4*m], w[1][:4*m], w[2][:4*m], w[3][:4*m], ir[:4*m]
	for j := range m {
		s := j * stride
		r, a, b, e := rho[s:s+4], mn[s:s+4], mt[s:s+4], en[s:s+4]
		x0, x1, x2, x3, xi := w0[4*j:4*j+4], w1[4*j:4*j+4], w2[4*j:4*j+4], w3[4*j:4*j+4], ir[4*j:4*j+4]
		for c := range 4 {
			inv := 1 / r[c]
			x0[c], xi[c] = r[c], inv
			x1[c], x2[c], x3[c] = primEuler(gm1, r[c], inv, a[c], b[c], e[c])
		}
	}
}

// updateCols is updateEulerLine on four adjacent columns, for the rows
// j < rows of the state (row j at j*stride); the fluxes are in the scratch
// layout, f at 4j the face below row j. With sp.speed it finds the wave
// speeds in the same pass (they are only used when no cell is bad).
func updateCols(sp *sweepParams, rho, mn, mt, en []float64, stride, rows int, f *[4][]float64) (res lineResult) {
	if sp.simd {
		return updateCols4(sp, rho, mn, mt, en, stride, rows, f)
	}
	c, gamma, speed := sp.dtdx, sp.gamma, sp.speed
	f0, f1, f2, f3 := f[0][:4*rows+4], f[1][:4*rows+4], f[2][:4*rows+4], f[3][:4*rows+4]
	for j := range rows {
		s, i := j*stride, 4*j
		r, a, b, e := rho[s:s+4], mn[s:s+4], mt[s:s+4], en[s:s+4]
		g0, g1, g2, g3 := f0[i:i+8], f1[i:i+8], f2[i:i+8], f3[i:i+8]
		for k := range 4 {
			r[k], a[k], b[k], e[k] = r[k]-float64(c*(g0[k+4]-g0[k])), a[k]-float64(c*(g1[k+4]-g1[k])), b[k]-float64(c*(g2[k+4]-g2[k])), e[k]-float64(c*(g3[k+4]-g3[k]))
			checkEuler(&res, speed, gamma, r[k], a[k], b[k], e[k])
		}
	}
	if res.bad {
		res.sn, res.st = 0, 0
	}
	return res
}

// eulerMUSCLPrimCols is eulerMUSCLPrim with van Leer on four adjacent
// columns of m cells each, in place: rho, mn, mt, en start at the first
// column's ghost cell 0, and a column's cells lie stride apart. The same
// passes, on the scratch layout of four columns.
func eulerMUSCLPrimCols(sp *sweepParams, rho, mn, mt, en []float64, stride, m int) lineResult {
	scr := sp.scr
	primCols(sp.simd, sp.gamma-1, rho, mn, mt, en, stride, m, &scr.w, scr.ir)
	if sp.simd {
		vanLeerEvolve4(sp.gamma, 0.5*sp.dtdx, &scr.w, scr.ir, &scr.d, &scr.r, 4, 4, 4*(m-1))
	} else {
		evolveFaces(sp.gamma, 0.5*sp.dtdx, &scr.w, scr.ir, &scr.d, &scr.r, 4, 4, 4*(m-1), true)
	}
	sp.eulerFaces(&scr.r, &scr.d, &scr.f, 4, 4, 4*(m-2))
	var f [4][]float64
	for k := range f {
		f[k] = scr.f[k][4:] // from face 1, left of cell 2
	}
	s := 2 * stride
	return updateCols(sp, rho[s:], mn[s:], mt[s:], en[s:], stride, m-4, &f)
}

// eulerGodunovCols is eulerGodunov on four adjacent columns, in the layout
// of eulerMUSCLPrimCols.
func eulerGodunovCols(sp *sweepParams, rho, mn, mt, en []float64, stride, m int) lineResult {
	scr := sp.scr
	primCols(sp.simd, sp.gamma-1, rho, mn, mt, en, stride, m, &scr.w, scr.ir)
	sp.eulerFaces(&scr.w, &scr.w, &scr.f, 4, 0, 4*(m-1))
	return updateCols(sp, rho[stride:], mn[stride:], mt[stride:], en[stride:], stride, m-2, &scr.f)
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
		a0, a1, a2, a3 := rho[i]-float64(0.5*d0), mn[i]-float64(0.5*d1), mt[i]-float64(0.5*d2), en[i]-float64(0.5*d3)
		b0, b1, b2, b3 := rho[i]+float64(0.5*d0), mn[i]+float64(0.5*d1), mt[i]+float64(0.5*d2), en[i]+float64(0.5*d3)
		au, av, ap := cellEuler(gm1, a0, a1, a2, a3)
		bu, bv, bp := cellEuler(gm1, b0, b1, b2, b3)
		fa0, fa1, fa2, fa3 := EulerPhysicalFlux(g, a0, au, av, ap)
		fb0, fb1, fb2, fb3 := EulerPhysicalFlux(g, b0, bu, bv, bp)
		e0, e1, e2, e3 := float64(h*(fb0-fa0)), float64(h*(fb1-fa1)), float64(h*(fb2-fa2)), float64(h*(fb3-fa3))
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

// useSIMD lets the sweeps take the SIMD passes of sweep_simd.go (HLLC faces,
// van Leer slopes and half step, primitive variables, update) where the
// build and the processor allow it (simdHLLC); the tests turn it off to
// hold the two paths bitwise equal.
var useSIMD = simdHLLC

// kernel names the path the solver's sweeps take, for Result.Kernel:
// "avx2" when the SIMD passes run, "avx512" when HLLC also takes eight
// faces at a time, else "portable". All three give the same bits.
func (s *Solver) kernel() string {
	switch {
	case !s.base.simd:
		return "portable"
	case s.base.hllc && hllcWide:
		return "avx512"
	}
	return "avx2"
}
