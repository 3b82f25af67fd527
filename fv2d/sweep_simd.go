//go:build goexperiment.simd && amd64

package fv2d

import "simd/archsimd"

// The passes of the default Euler sweep that take most of its time (the
// HLLC faces, the van Leer slopes, the MUSCL-Hancock half step) four cells
// or faces at a time, with AVX2 (Go's simd/archsimd, built with
// GOEXPERIMENT=simd). Each is its portable pass lane by lane: the same
// operations in the same order, each rounded once (no fused multiply-add;
// division and square root are correctly rounded), so it gives the portable
// bits for any finite input. Branches become selects: hllc4 computes the
// star flux in every lane, and the physical fluxes of the left and right
// states only when some lane needs one.

// simdHLLC reports whether this processor runs the SIMD passes (AVX2).
var simdHLLC = archsimd.X86.AVX2()

type vec4 = archsimd.Float64x4

func load4(s []float64) vec4 { return archsimd.LoadFloat64x4Slice(s) }
func bcast4(x float64) vec4  { return archsimd.BroadcastFloat64x4(x) }

// hllcFaces4 sets f = hllc(r_i, l_i) for the first len(r0) &^ 3 faces and
// returns their number; the slices are of one length.
func hllcFaces4(gamma, g float64, r0, r1, r2, r3, l0, l1, l2, l3, f0, f1, f2, f3 []float64) int {
	n := len(r0) &^ 3
	k := hllcConsts{gamma: bcast4(gamma), g: bcast4(g), gm1: bcast4(gamma - 1),
		half: bcast4(0.5), one: bcast4(1), zero: bcast4(0)}
	for i := 0; i < n; i += 4 {
		a, b, c, d := k.hllc4(load4(r0[i:]), load4(r1[i:]), load4(r2[i:]), load4(r3[i:]),
			load4(l0[i:]), load4(l1[i:]), load4(l2[i:]), load4(l3[i:]))
		a.StoreSlice(f0[i:])
		b.StoreSlice(f1[i:])
		c.StoreSlice(f2[i:])
		d.StoreSlice(f3[i:])
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

// hllc4 is hllc lane by lane; the comments name hllc's steps.
func (k *hllcConsts) hllc4(rl, ul, vl, pl, rr, ur, vr, pr vec4) (f0, f1, f2, f3 vec4) {
	// p/rho, total enthalpies, Roe weights and averages, Roe sound speed
	zl, zr := pl.Div(rl), pr.Div(rr)
	hl := k.g.Mul(zl).Add(k.half.Mul(ul.Mul(ul).Add(vl.Mul(vl))))
	hr := k.g.Mul(zr).Add(k.half.Mul(ur.Mul(ur).Add(vr.Mul(vr))))
	wl, wr := rl.Sqrt(), rr.Sqrt()
	w := k.one.Div(wl.Add(wr))
	u := wl.Mul(ul).Add(wr.Mul(ur)).Mul(w)
	v := wl.Mul(vl).Add(wr.Mul(vr)).Mul(w)
	h := wl.Mul(hl).Add(wr.Mul(hr)).Mul(w)
	a := k.gm1.Mul(h.Sub(k.half.Mul(u.Mul(u).Add(v.Mul(v))))).Sqrt()
	// Einfeldt speeds
	al, ar := k.gamma.Mul(zl).Sqrt(), k.gamma.Mul(zr).Sqrt()
	sl, sr := ul.Sub(al).Min(u.Sub(a)), ur.Add(ar).Max(u.Add(a))
	// star flux on the side K of the contact
	ql, qr := rl.Mul(sl.Sub(ul)), rr.Mul(sr.Sub(ur))
	ss := pr.Sub(pl).Add(ul.Mul(ql)).Sub(ur.Mul(qr)).Div(ql.Sub(qr))
	right := ss.Less(k.zero)
	r, uk, vk, p := rr.Merge(rl, right), ur.Merge(ul, right), vr.Merge(vl, right), pr.Merge(pl, right)
	hk, sk, q := hr.Merge(hl, right), sr.Merge(sl, right), qr.Merge(ql, right)
	m := r.Mul(uk)
	t1 := ss.Sub(uk).Div(sk.Sub(ss))
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

// vanLeerSlopes4 is the van Leer part of slopesWith four cells at a time:
// d_i = VanLeer(w_i - w_{i-1}, w_{i+1} - w_i) for the cells 1 <= i < 1+n
// with n = (len(w)-2) &^ 3, which it returns.
func vanLeerSlopes4(w, d []float64) int {
	n := (len(w) - 2) &^ 3
	two, zero := bcast4(2), bcast4(0)
	for i := 1; i < 1+n; i += 4 {
		wc := load4(w[i:])
		a, b := wc.Sub(load4(w[i-1:])), load4(w[i+1:]).Sub(wc)
		ab := a.Mul(b)
		q := two.Mul(ab).Div(a.Add(b))
		zero.Merge(q, ab.LessEqual(zero)).StoreSlice(d[i:])
	}
	archsimd.ClearAVXUpperBits()
	return n
}

// evolvePrim4 is evolvePrim four cells at a time, for the cells
// 1 <= i < 1+n with n = (m-2) &^ 3, which it returns.
func evolvePrim4(g, h float64, w *[4][]float64, ir []float64, d, r *[4][]float64, m int) int {
	n := (m - 2) &^ 3
	gv, hv, half, zero := bcast4(g), bcast4(h), bcast4(0.5), bcast4(0)
	for i := 1; i < 1+n; i += 4 {
		rc, uc, vc, pc := load4(w[0][i:]), load4(w[1][i:]), load4(w[2][i:]), load4(w[3][i:])
		dr, du, dv, dp := load4(d[0][i:]), load4(d[1][i:]), load4(d[2][i:]), load4(d[3][i:])
		er := hv.Mul(uc.Mul(dr).Add(rc.Mul(du)))
		eu := hv.Mul(uc.Mul(du).Add(dp.Mul(load4(ir[i:]))))
		ev := hv.Mul(uc.Mul(dv))
		ep := hv.Mul(gv.Mul(pc).Mul(du).Add(uc.Mul(dp)))
		lr, lu := rc.Sub(half.Mul(dr)).Sub(er), uc.Sub(half.Mul(du)).Sub(eu)
		lv, lp := vc.Sub(half.Mul(dv)).Sub(ev), pc.Sub(half.Mul(dp)).Sub(ep)
		rr, ru := rc.Add(half.Mul(dr)).Sub(er), uc.Add(half.Mul(du)).Sub(eu)
		rv, rp := vc.Add(half.Mul(dv)).Sub(ev), pc.Add(half.Mul(dp)).Sub(ep)
		// positivity fallback: first order where a face density or
		// pressure is not positive
		ok := lr.Greater(zero).And(lp.Greater(zero)).And(rr.Greater(zero)).And(rp.Greater(zero))
		lr.Merge(rc, ok).StoreSlice(d[0][i:])
		lu.Merge(uc, ok).StoreSlice(d[1][i:])
		lv.Merge(vc, ok).StoreSlice(d[2][i:])
		lp.Merge(pc, ok).StoreSlice(d[3][i:])
		rr.Merge(rc, ok).StoreSlice(r[0][i:])
		ru.Merge(uc, ok).StoreSlice(r[1][i:])
		rv.Merge(vc, ok).StoreSlice(r[2][i:])
		rp.Merge(pc, ok).StoreSlice(r[3][i:])
	}
	archsimd.ClearAVXUpperBits()
	return n
}

// primLine4 is primLine four cells at a time, for the cells i < n with
// n = len(rho) &^ 3, which it returns.
func primLine4(gm1 float64, rho, mn, mt, en []float64, w *[4][]float64, ir []float64) int {
	n := len(rho) &^ 3
	gv, half, one := bcast4(gm1), bcast4(0.5), bcast4(1)
	for i := 0; i < n; i += 4 {
		r := load4(rho[i:])
		inv := one.Div(r)
		u, v := load4(mn[i:]).Mul(inv), load4(mt[i:]).Mul(inv)
		p := gv.Mul(load4(en[i:]).Sub(half.Mul(r).Mul(u.Mul(u).Add(v.Mul(v)))))
		r.StoreSlice(w[0][i:])
		u.StoreSlice(w[1][i:])
		v.StoreSlice(w[2][i:])
		p.StoreSlice(w[3][i:])
		inv.StoreSlice(ir[i:])
	}
	archsimd.ClearAVXUpperBits()
	return n
}

// updateEulerLine4 is the update and positivity test of updateEulerLine
// four cells at a time, for the cells i < n with n = len(rho) &^ 3, which it
// returns with whether any of them failed the test; f0..f3 start at the
// face left of cell 0.
func updateEulerLine4(c float64, rho, mn, mt, en []float64, f0, f1, f2, f3 []float64) (bad bool, n int) {
	n = len(rho) &^ 3
	cv, two, zero := bcast4(c), bcast4(2), bcast4(0)
	ok := zero.Equal(zero) // all lanes true
	for i := 0; i < n; i += 4 {
		a := load4(rho[i:]).Sub(cv.Mul(load4(f0[i+1:]).Sub(load4(f0[i:]))))
		b := load4(mn[i:]).Sub(cv.Mul(load4(f1[i+1:]).Sub(load4(f1[i:]))))
		d := load4(mt[i:]).Sub(cv.Mul(load4(f2[i+1:]).Sub(load4(f2[i:]))))
		e := load4(en[i:]).Sub(cv.Mul(load4(f3[i+1:]).Sub(load4(f3[i:]))))
		a.StoreSlice(rho[i:])
		b.StoreSlice(mn[i:])
		d.StoreSlice(mt[i:])
		e.StoreSlice(en[i:])
		ok = ok.And(a.Greater(zero)).And(two.Mul(e).Mul(a).Greater(b.Mul(b).Add(d.Mul(d))))
	}
	archsimd.ClearAVXUpperBits()
	return ok.ToBits() != 0xf, n
}

// speedsEuler4 is the wave-speed part of checkEuler four cells at a time:
// the largest |u_n| + a and |u_t| + a of the cells i < n with
// n = len(rho) &^ 3, which it returns with them. Each lane keeps its
// maximum as checkEuler does (a new value wins only if greater).
func speedsEuler4(gamma float64, rho, mn, mt, en []float64) (sn, st float64, n int) {
	n = len(rho) &^ 3
	gg, half, one, zero := bcast4(gamma*(gamma-1)), bcast4(0.5), bcast4(1), bcast4(0)
	an, at := zero, zero
	for i := 0; i < n; i += 4 {
		r, m, t := load4(rho[i:]), load4(mn[i:]), load4(mt[i:])
		k2 := m.Mul(m).Add(t.Mul(t))
		inv := one.Div(r)
		a := gg.Mul(load4(en[i:]).Sub(half.Mul(k2).Mul(inv))).Mul(inv).Sqrt()
		u, v := m.Mul(inv), t.Mul(inv)
		s := u.Max(zero.Sub(u)).Add(a) // |u| + a
		an = s.Merge(an, s.Greater(an))
		s = v.Max(zero.Sub(v)).Add(a)
		at = s.Merge(at, s.Greater(at))
	}
	var bn, bt [4]float64
	an.Store(&bn)
	at.Store(&bt)
	archsimd.ClearAVXUpperBits()
	for k := range 4 {
		sn, st = max(sn, bn[k]), max(st, bt[k])
	}
	return sn, st, n
}
