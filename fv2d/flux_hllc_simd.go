//go:build goexperiment.simd && amd64

package fv2d

import "simd/archsimd"

// The HLLC face pass four faces at a time, with AVX2 (Go's simd/archsimd,
// built with GOEXPERIMENT=simd). hllc4 is hllc (flux_euler.go) lane by lane:
// the same operations in the same order, each rounded once (no fused
// multiply-add; division and square root are correctly rounded), so it
// gives hllc's bits for any finite input. The branches of hllc become
// selects: every lane computes the star flux, and the physical fluxes of the
// left and right states when some lane needs one.

// simdHLLC reports whether this processor runs hllcFaces4 (AVX2).
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
	// total enthalpies, Roe weights and averages, Roe sound speed
	hl := k.g.Mul(pl).Div(rl).Add(k.half.Mul(ul.Mul(ul).Add(vl.Mul(vl))))
	hr := k.g.Mul(pr).Div(rr).Add(k.half.Mul(ur.Mul(ur).Add(vr.Mul(vr))))
	wl, wr := rl.Sqrt(), rr.Sqrt()
	w := k.one.Div(wl.Add(wr))
	u := wl.Mul(ul).Add(wr.Mul(ur)).Mul(w)
	v := wl.Mul(vl).Add(wr.Mul(vr)).Mul(w)
	h := wl.Mul(hl).Add(wr.Mul(hr)).Mul(w)
	a := k.gm1.Mul(h.Sub(k.half.Mul(u.Mul(u).Add(v.Mul(v))))).Sqrt()
	// Einfeldt speeds
	al, ar := k.gamma.Mul(pl).Div(rl).Sqrt(), k.gamma.Mul(pr).Div(rr).Sqrt()
	sl, sr := ul.Sub(al).Min(u.Sub(a)), ur.Add(ar).Max(u.Add(a))
	// star flux on the side K of the contact
	ql, qr := rl.Mul(sl.Sub(ul)), rr.Mul(sr.Sub(ur))
	ss := pr.Sub(pl).Add(ul.Mul(ql)).Sub(ur.Mul(qr)).Div(ql.Sub(qr))
	left := ss.GreaterEqual(k.zero) // hllc: ss < 0 takes the right side
	r, uk, vk, p := rl.Merge(rr, left), ul.Merge(ur, left), vl.Merge(vr, left), pl.Merge(pr, left)
	hk, sk, q := hl.Merge(hr, left), sl.Merge(sr, left), ql.Merge(qr, left)
	m := r.Mul(uk)
	e := r.Mul(hk).Sub(p)
	t := sk.Sub(uk).Div(sk.Sub(ss))
	t1 := t.Sub(k.one)
	d0 := r.Mul(t1)
	rt := r.Mul(t)
	d1 := rt.Mul(ss).Sub(m)
	d2 := vk.Mul(d0)
	d3 := e.Mul(t1).Add(rt.Mul(ss.Sub(uk)).Mul(ss.Add(p.Div(q))))
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
