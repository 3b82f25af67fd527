//go:build goexperiment.simd && amd64

package fv2d

import "simd/archsimd"

// The passes of the default Euler sweeps (primitive variables, van Leer
// slopes and the MUSCL-Hancock half step, HLLC faces, the update and its
// checks) four cells or faces at a time, with AVX2 (Go's simd/archsimd,
// built with GOEXPERIMENT=simd), along a row for the x sweep and across
// four columns in place for the y sweep; HLLC eight at a time where the
// processor has AVX-512. Each is its portable pass lane by lane: the same
// operations in the same order, each rounded once (no fused multiply-add;
// division and square root are correctly rounded), so it gives the portable
// bits for any finite input. Branches become selects: hllc4 computes the
// star flux in every lane, and the physical fluxes of the left and right
// states only when some lane needs one.

// simdHLLC reports whether this processor runs the SIMD passes (AVX2).
var simdHLLC = archsimd.X86.AVX2()

// hllcWide lets hllcFaces4 take eight faces at a time (hllc8, AVX-512)
// where the processor has it; the tests turn it off to check both widths.
var hllcWide = archsimd.X86.AVX512()

type vec4 = archsimd.Float64x4

// load4 and store4 move s[i:i+4] from and to a vector, through an array
// pointer: one bounds check, where a slice load also masks its pointer.
func load4(s []float64, i int) vec4     { return archsimd.LoadFloat64x4((*[4]float64)(s[i : i+4])) }
func store4(x vec4, s []float64, i int) { x.Store((*[4]float64)(s[i : i+4])) }
func bcast4(x float64) vec4             { return archsimd.BroadcastFloat64x4(x) }

// hllcFaces4 sets f = hllc(r_i, l_i) for the first len(r0) &^ 3 faces and
// returns their number; the slices are of one length. With AVX-512
// (hllcWide) it takes them eight at a time as far as it can.
func hllcFaces4(gamma, g float64, r0, r1, r2, r3, l0, l1, l2, l3, f0, f1, f2, f3 []float64) int {
	n := len(r0) &^ 3
	i := 0
	if hllcWide {
		i = hllcFaces8(gamma, g, r0, r1, r2, r3, l0, l1, l2, l3, f0, f1, f2, f3)
	}
	k := hllcConsts{gamma: bcast4(gamma), g: bcast4(g), gm1: bcast4(gamma - 1),
		half: bcast4(0.5), one: bcast4(1), zero: bcast4(0)}
	for ; i < n; i += 4 {
		a, b, c, d := k.hllc4(load4(r0, i), load4(r1, i), load4(r2, i), load4(r3, i),
			load4(l0, i), load4(l1, i), load4(l2, i), load4(l3, i))
		store4(a, f0, i)
		store4(b, f1, i)
		store4(c, f2, i)
		store4(d, f3, i)
	}
	// Leave no dirty upper halves of the vector registers: the scalar
	// passes that follow would otherwise pay for them on every instruction.
	archsimd.ClearAVXUpperBits()
	return n
}

// hllcConsts are the constants of hllc4, broadcast once per pass.
type hllcConsts struct{ gamma, g, gm1, half, one, zero vec4 }

// physFlux4 is EulerPhysicalFlux lane by lane.
func (k *hllcConsts) physFlux4(r, u, v, p vec4) (f0, f1, f2, f3 vec4) {
	m := r.Mul(u)
	e := p.Div(k.gm1).Add(k.half.Mul(r).Mul(u.Mul(u).Add(v.Mul(v))))
	return m, m.Mul(u).Add(p), m.Mul(v), u.Mul(e.Add(p))
}

// hllc4 is hllc lane by lane, both halves (einfeldtWaves, hllcStar) in one
// pass: four or eight faces per instruction already keep the divider busy.
// The comments name hllc's steps.
func (k *hllcConsts) hllc4(rl, ul, vl, pl, rr, ur, vr, pr vec4) (f0, f1, f2, f3 vec4) {
	// p/rho, total enthalpies, Roe weights and averages, Roe sound speed
	irl := k.one.Div(rl)
	zl, zr := pl.Mul(irl), pr.Div(rr)
	hl := k.g.Mul(zl).Add(k.half.Mul(ul.Mul(ul).Add(vl.Mul(vl))))
	hr := k.g.Mul(zr).Add(k.half.Mul(ur.Mul(ur).Add(vr.Mul(vr))))
	s := rr.Mul(irl).Sqrt()
	w := k.one.Div(k.one.Add(s))
	un, vn, hn := ul.Add(s.Mul(ur)), vl.Add(s.Mul(vr)), hl.Add(s.Mul(hr))
	an := k.gm1.Mul(hn.Mul(k.one.Add(s)).Sub(k.half.Mul(un.Mul(un).Add(vn.Mul(vn))))).Sqrt()
	// Einfeldt speeds
	al, ar := k.gamma.Mul(zl).Sqrt(), k.gamma.Mul(zr).Sqrt()
	sl, sr := ul.Sub(al).Min(un.Sub(an).Mul(w)), ur.Add(ar).Max(un.Add(an).Mul(w))
	// star flux on the side K of the contact
	ql, qr := rl.Mul(sl.Sub(ul)), rr.Mul(sr.Sub(ur))
	sn, sd := pr.Sub(pl).Add(ul.Mul(ql)).Sub(ur.Mul(qr)), ql.Sub(qr)
	ss := sn.Div(sd)
	right := ss.Less(k.zero)
	r, uk, vk, p := rr.Merge(rl, right), ur.Merge(ul, right), vr.Merge(vl, right), pr.Merge(pl, right)
	hk, sk, q := hr.Merge(hl, right), sr.Merge(sl, right), qr.Merge(ql, right)
	m := r.Mul(uk)
	t1 := sn.Sub(uk.Mul(sd)).Div(sk.Mul(sd).Sub(sn))
	d0 := r.Mul(t1)
	d1 := r.Add(d0).Mul(ss).Sub(m)
	d2 := vk.Mul(d0)
	d3 := t1.Mul(r.Mul(hk).Add(q.Mul(ss)))
	f0 = m.Add(sk.Mul(d0))
	f1 = m.Mul(uk).Add(p).Add(sk.Mul(d1))
	f2 = m.Mul(vk).Add(sk.Mul(d2))
	f3 = m.Mul(hk).Add(sk.Mul(d3))
	// supersonic faces: the upwind physical flux (S_L >= 0 left, else
	// S_R <= 0 right), computed only when a lane needs it
	toLeft, toRight := sl.GreaterEqual(k.zero), sr.LessEqual(k.zero)
	if toRight.ToBits() != 0 {
		g0, g1, g2, g3 := k.physFlux4(rr, ur, vr, pr)
		f0, f1, f2, f3 = g0.Merge(f0, toRight), g1.Merge(f1, toRight), g2.Merge(f2, toRight), g3.Merge(f3, toRight)
	}
	if toLeft.ToBits() != 0 {
		g0, g1, g2, g3 := k.physFlux4(rl, ul, vl, pl)
		f0, f1, f2, f3 = g0.Merge(f0, toLeft), g1.Merge(f1, toLeft), g2.Merge(f2, toLeft), g3.Merge(f3, toLeft)
	}
	return f0, f1, f2, f3
}

// hllc8 and its helpers are hllc4 on eight lanes (AVX-512 Float64x8),
// line for line: eight faces per instruction where the processor has
// 512-bit vectors. HLLC, a chain of divisions and square roots, is about
// half of a step; the other passes stay at four lanes.

type vec8 = archsimd.Float64x8

func load8(s []float64, i int) vec8     { return archsimd.LoadFloat64x8((*[8]float64)(s[i : i+8])) }
func store8(x vec8, s []float64, i int) { x.Store((*[8]float64)(s[i : i+8])) }
func bcast8(x float64) vec8             { return archsimd.BroadcastFloat64x8(x) }

// hllcFaces8 is hllcFaces4 eight faces at a time, for the first
// len(r0) &^ 7 faces, which it returns.
func hllcFaces8(gamma, g float64, r0, r1, r2, r3, l0, l1, l2, l3, f0, f1, f2, f3 []float64) int {
	n := len(r0) &^ 7
	k := hllcConsts8{gamma: bcast8(gamma), g: bcast8(g), gm1: bcast8(gamma - 1),
		half: bcast8(0.5), one: bcast8(1), zero: bcast8(0)}
	for i := 0; i < n; i += 8 {
		a, b, c, d := k.hllc8(load8(r0, i), load8(r1, i), load8(r2, i), load8(r3, i),
			load8(l0, i), load8(l1, i), load8(l2, i), load8(l3, i))
		store8(a, f0, i)
		store8(b, f1, i)
		store8(c, f2, i)
		store8(d, f3, i)
	}
	archsimd.ClearAVXUpperBits()
	return n
}

type hllcConsts8 struct{ gamma, g, gm1, half, one, zero vec8 }

func (k *hllcConsts8) physFlux8(r, u, v, p vec8) (f0, f1, f2, f3 vec8) {
	m := r.Mul(u)
	e := p.Div(k.gm1).Add(k.half.Mul(r).Mul(u.Mul(u).Add(v.Mul(v))))
	return m, m.Mul(u).Add(p), m.Mul(v), u.Mul(e.Add(p))
}

func (k *hllcConsts8) hllc8(rl, ul, vl, pl, rr, ur, vr, pr vec8) (f0, f1, f2, f3 vec8) {
	// p/rho, total enthalpies, Roe weights and averages, Roe sound speed
	irl := k.one.Div(rl)
	zl, zr := pl.Mul(irl), pr.Div(rr)
	hl := k.g.Mul(zl).Add(k.half.Mul(ul.Mul(ul).Add(vl.Mul(vl))))
	hr := k.g.Mul(zr).Add(k.half.Mul(ur.Mul(ur).Add(vr.Mul(vr))))
	s := rr.Mul(irl).Sqrt()
	w := k.one.Div(k.one.Add(s))
	un, vn, hn := ul.Add(s.Mul(ur)), vl.Add(s.Mul(vr)), hl.Add(s.Mul(hr))
	an := k.gm1.Mul(hn.Mul(k.one.Add(s)).Sub(k.half.Mul(un.Mul(un).Add(vn.Mul(vn))))).Sqrt()
	// Einfeldt speeds
	al, ar := k.gamma.Mul(zl).Sqrt(), k.gamma.Mul(zr).Sqrt()
	sl, sr := ul.Sub(al).Min(un.Sub(an).Mul(w)), ur.Add(ar).Max(un.Add(an).Mul(w))
	// star flux on the side K of the contact
	ql, qr := rl.Mul(sl.Sub(ul)), rr.Mul(sr.Sub(ur))
	sn, sd := pr.Sub(pl).Add(ul.Mul(ql)).Sub(ur.Mul(qr)), ql.Sub(qr)
	ss := sn.Div(sd)
	right := ss.Less(k.zero)
	r, uk, vk, p := rr.Merge(rl, right), ur.Merge(ul, right), vr.Merge(vl, right), pr.Merge(pl, right)
	hk, sk, q := hr.Merge(hl, right), sr.Merge(sl, right), qr.Merge(ql, right)
	m := r.Mul(uk)
	t1 := sn.Sub(uk.Mul(sd)).Div(sk.Mul(sd).Sub(sn))
	d0 := r.Mul(t1)
	d1 := r.Add(d0).Mul(ss).Sub(m)
	d2 := vk.Mul(d0)
	d3 := t1.Mul(r.Mul(hk).Add(q.Mul(ss)))
	f0 = m.Add(sk.Mul(d0))
	f1 = m.Mul(uk).Add(p).Add(sk.Mul(d1))
	f2 = m.Mul(vk).Add(sk.Mul(d2))
	f3 = m.Mul(hk).Add(sk.Mul(d3))
	// supersonic faces: the upwind physical flux
	toLeft, toRight := sl.GreaterEqual(k.zero), sr.LessEqual(k.zero)
	if toRight.ToBits() != 0 {
		g0, g1, g2, g3 := k.physFlux8(rr, ur, vr, pr)
		f0, f1, f2, f3 = g0.Merge(f0, toRight), g1.Merge(f1, toRight), g2.Merge(f2, toRight), g3.Merge(f3, toRight)
	}
	if toLeft.ToBits() != 0 {
		g0, g1, g2, g3 := k.physFlux8(rl, ul, vl, pl)
		f0, f1, f2, f3 = g0.Merge(f0, toLeft), g1.Merge(f1, toLeft), g2.Merge(f2, toLeft), g3.Merge(f3, toLeft)
	}
	return f0, f1, f2, f3
}

// The passes below work on vectors of four lanes in two layouts. In a line
// of the x sweep the four lanes are four neighbouring cells; the next cell
// of a lane is one element on (o = 1). In a y sweep over four adjacent
// columns (the *Cols4 kernels) the lanes are the four columns: the state's
// vector of row j is the four x-neighbours of that row, contiguous in
// memory, so the columns are read and written in place with no gather, and
// the scratch keeps row j at 4j (o = 4). Either way one lane runs its line's
// portable passes.

// vanLeer4 is VanLeer lane by lane.
func vanLeer4(two, zero, a, b vec4) vec4 {
	ab := a.Mul(b)
	return zero.Merge(two.Mul(ab).Div(a.Add(b)), ab.LessEqual(zero))
}

// vanLeerSlopes4 is the van Leer part of slopesWith four cells at a time:
// d_i = VanLeer(w_i - w_{i-1}, w_{i+1} - w_i) for the cells 1 <= i < 1+n
// with n = (len(w)-2) &^ 3, which it returns.
func vanLeerSlopes4(w, d []float64) int {
	n := (len(w) - 2) &^ 3
	two, zero := bcast4(2), bcast4(0)
	for i := 1; i < 1+n; i += 4 {
		wc := load4(w, i)
		store4(vanLeer4(two, zero, wc.Sub(load4(w, i-1)), load4(w, i+1).Sub(wc)), d, i)
	}
	archsimd.ClearAVXUpperBits()
	return n
}

// vanLeerEvolve4 is evolveFaces with van Leer slopes, for the vectors at
// lo, lo+4, ..., < hi of the scratch (cells o elements apart): the slopes of the four variables stay in registers, and the left
// face values go to d, the right ones to r. w, ir, d and r are of one
// layout; the cells o before lo and o after the last one must exist.
func vanLeerEvolve4(g, h float64, w *[4][]float64, ir []float64, d, r *[4][]float64, o, lo, hi int) {
	gv, hv, half, two, zero := bcast4(g), bcast4(h), bcast4(0.5), bcast4(2), bcast4(0)
	w0, w1, w2, w3 := w[0], w[1], w[2], w[3]
	for i := lo; i < hi; i += 4 {
		rc, uc, vc, pc := load4(w0, i), load4(w1, i), load4(w2, i), load4(w3, i)
		dr := vanLeer4(two, zero, rc.Sub(load4(w0, i-o)), load4(w0, i+o).Sub(rc))
		du := vanLeer4(two, zero, uc.Sub(load4(w1, i-o)), load4(w1, i+o).Sub(uc))
		dv := vanLeer4(two, zero, vc.Sub(load4(w2, i-o)), load4(w2, i+o).Sub(vc))
		dp := vanLeer4(two, zero, pc.Sub(load4(w3, i-o)), load4(w3, i+o).Sub(pc))
		// evolveFaces's half step, W - dt/(2dx) A(W) dW
		er := hv.Mul(uc.Mul(dr).Add(rc.Mul(du)))
		eu := hv.Mul(uc.Mul(du).Add(dp.Mul(load4(ir, i))))
		ev := hv.Mul(uc.Mul(dv))
		ep := hv.Mul(gv.Mul(pc).Mul(du).Add(uc.Mul(dp)))
		lr, lu := rc.Sub(half.Mul(dr)).Sub(er), uc.Sub(half.Mul(du)).Sub(eu)
		lv, lp := vc.Sub(half.Mul(dv)).Sub(ev), pc.Sub(half.Mul(dp)).Sub(ep)
		rr, ru := rc.Add(half.Mul(dr)).Sub(er), uc.Add(half.Mul(du)).Sub(eu)
		rv, rp := vc.Add(half.Mul(dv)).Sub(ev), pc.Add(half.Mul(dp)).Sub(ep)
		// positivity fallback: first order where a face density or
		// pressure is not positive
		ok := lr.Greater(zero).And(lp.Greater(zero)).And(rr.Greater(zero)).And(rp.Greater(zero))
		store4(lr.Merge(rc, ok), d[0], i)
		store4(lu.Merge(uc, ok), d[1], i)
		store4(lv.Merge(vc, ok), d[2], i)
		store4(lp.Merge(pc, ok), d[3], i)
		store4(rr.Merge(rc, ok), r[0], i)
		store4(ru.Merge(uc, ok), r[1], i)
		store4(rv.Merge(vc, ok), r[2], i)
		store4(rp.Merge(pc, ok), r[3], i)
	}
	archsimd.ClearAVXUpperBits()
}

// primConsts are the constants of prim4.
type primConsts struct{ gm1, half, one vec4 }

// prim4 is primEuler lane by lane, with inv = 1/r.
func (k primConsts) prim4(r, m, t, e vec4) (inv, u, v, p vec4) {
	inv = k.one.Div(r)
	u, v = m.Mul(inv), t.Mul(inv)
	p = k.gm1.Mul(e.Sub(k.half.Mul(r).Mul(u.Mul(u).Add(v.Mul(v)))))
	return
}

// primLine4 is primLine four cells at a time, for the cells i < n with
// n = len(rho) &^ 3, which it returns.
func primLine4(gm1 float64, rho, mn, mt, en []float64, w *[4][]float64, ir []float64) int {
	n := len(rho) &^ 3
	k := primConsts{bcast4(gm1), bcast4(0.5), bcast4(1)}
	for i := 0; i < n; i += 4 {
		r := load4(rho, i)
		inv, u, v, p := k.prim4(r, load4(mn, i), load4(mt, i), load4(en, i))
		store4(r, w[0], i)
		store4(u, w[1], i)
		store4(v, w[2], i)
		store4(p, w[3], i)
		store4(inv, ir, i)
	}
	archsimd.ClearAVXUpperBits()
	return n
}

// primCols4 is primLine on four adjacent columns: the rows j < m of the
// state (row j at j*stride) to the scratch (row j at 4j).
func primCols4(gm1 float64, rho, mn, mt, en []float64, stride, m int, w *[4][]float64, ir []float64) {
	k := primConsts{bcast4(gm1), bcast4(0.5), bcast4(1)}
	for j := 0; j < m; j++ {
		s, i := j*stride, 4*j
		r := load4(rho, s)
		inv, u, v, p := k.prim4(r, load4(mn, s), load4(mt, s), load4(en, s))
		store4(r, w[0], i)
		store4(u, w[1], i)
		store4(v, w[2], i)
		store4(p, w[3], i)
		store4(inv, ir, i)
	}
	archsimd.ClearAVXUpperBits()
}

// updateConsts are the constants of update4 and speeds4.
type updateConsts struct{ c, two, gg, half, one, zero vec4 }

func newUpdateConsts(c, gamma float64) updateConsts {
	return updateConsts{bcast4(c), bcast4(2), bcast4(gamma * (gamma - 1)), bcast4(0.5), bcast4(1), bcast4(0)}
}

// update4 is the update of updateEulerLine lane by lane, U - c (F_+ - F_-),
// with checkEuler's positivity test of the new state (true where it passes).
func (k *updateConsts) update4(r, m, t, e, f0m, f0p, f1m, f1p, f2m, f2p, f3m, f3p vec4) (a, b, d, q vec4, ok archsimd.Mask64x4) {
	a = r.Sub(k.c.Mul(f0p.Sub(f0m)))
	b = m.Sub(k.c.Mul(f1p.Sub(f1m)))
	d = t.Sub(k.c.Mul(f2p.Sub(f2m)))
	q = e.Sub(k.c.Mul(f3p.Sub(f3m)))
	return a, b, d, q, a.Greater(k.zero).And(k.two.Mul(q).Mul(a).Greater(b.Mul(b).Add(d.Mul(d))))
}

// speeds4 is the wave-speed part of checkEuler lane by lane: sn and st,
// each lane's largest |u_n| + a and |u_t| + a so far, take the cell's where
// it is greater (as checkEuler does).
func (k *updateConsts) speeds4(r, m, t, e vec4, sn, st *vec4) {
	k2 := m.Mul(m).Add(t.Mul(t))
	inv := k.one.Div(r)
	a := k.gg.Mul(e.Sub(k.half.Mul(k2).Mul(inv))).Mul(inv).Sqrt()
	u, v := m.Mul(inv), t.Mul(inv)
	s := u.Max(k.zero.Sub(u)).Add(a) // |u| + a
	*sn = s.Merge(*sn, s.Greater(*sn))
	s = v.Max(k.zero.Sub(v)).Add(a)
	*st = s.Merge(*st, s.Greater(*st))
}

// maxLanes returns the largest lane of sn and of st.
func maxLanes(sn, st vec4) (float64, float64) {
	var bn, bt [4]float64
	sn.Store(&bn)
	st.Store(&bt)
	archsimd.ClearAVXUpperBits()
	return max(bn[0], bn[1], bn[2], bn[3]), max(bt[0], bt[1], bt[2], bt[3])
}

// updateEulerLine4 is the update and positivity test of updateEulerLine
// four cells at a time, for the cells i < n with n = len(rho) &^ 3, which it
// returns with whether any of them failed the test; f0..f3 start at the
// face left of cell 0.
func updateEulerLine4(c float64, rho, mn, mt, en []float64, f0, f1, f2, f3 []float64) (bad bool, n int) {
	n = len(rho) &^ 3
	k := newUpdateConsts(c, 0)
	ok := k.zero.Equal(k.zero) // all lanes true
	for i := 0; i < n; i += 4 {
		a, b, d, e, oki := k.update4(load4(rho, i), load4(mn, i), load4(mt, i), load4(en, i),
			load4(f0, i), load4(f0, i+1), load4(f1, i), load4(f1, i+1),
			load4(f2, i), load4(f2, i+1), load4(f3, i), load4(f3, i+1))
		store4(a, rho, i)
		store4(b, mn, i)
		store4(d, mt, i)
		store4(e, en, i)
		ok = ok.And(oki)
	}
	archsimd.ClearAVXUpperBits()
	return ok.ToBits() != 0xf, n
}

// speedsEuler4 is the wave-speed part of checkEuler four cells at a time:
// the largest |u_n| + a and |u_t| + a of the cells i < n with
// n = len(rho) &^ 3, which it returns with them.
func speedsEuler4(gamma float64, rho, mn, mt, en []float64) (sn, st float64, n int) {
	n = len(rho) &^ 3
	k := newUpdateConsts(0, gamma)
	an, at := k.zero, k.zero
	for i := 0; i < n; i += 4 {
		k.speeds4(load4(rho, i), load4(mn, i), load4(mt, i), load4(en, i), &an, &at)
	}
	sn, st = maxLanes(an, at)
	return sn, st, n
}

// updateCols4 is updateEulerLine on four adjacent columns, for the rows
// j < rows of the state (row j at j*stride); the fluxes are in the scratch
// layout, f at 4j the face below row j. With sp.speed it finds the wave
// speeds in the same pass (they are only used when no cell is bad).
func updateCols4(sp *sweepParams, rho, mn, mt, en []float64, stride, rows int, f *[4][]float64) (res lineResult) {
	k := newUpdateConsts(sp.dtdx, sp.gamma)
	f0, f1, f2, f3 := f[0], f[1], f[2], f[3]
	ok := k.zero.Equal(k.zero) // all lanes true
	an, at := k.zero, k.zero
	for j := 0; j < rows; j++ {
		s, i := j*stride, 4*j
		a, b, d, e, oki := k.update4(load4(rho, s), load4(mn, s), load4(mt, s), load4(en, s),
			load4(f0, i), load4(f0, i+4), load4(f1, i), load4(f1, i+4),
			load4(f2, i), load4(f2, i+4), load4(f3, i), load4(f3, i+4))
		store4(a, rho, s)
		store4(b, mn, s)
		store4(d, mt, s)
		store4(e, en, s)
		ok = ok.And(oki)
		if sp.speed {
			k.speeds4(a, b, d, e, &an, &at)
		}
	}
	res.bad = ok.ToBits() != 0xf
	archsimd.ClearAVXUpperBits()
	if sp.speed && !res.bad {
		res.sn, res.st = maxLanes(an, at)
	}
	return res
}
