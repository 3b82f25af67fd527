package fv2d

import "math"

// Products that meet an addition are written float64(x*y): an explicit
// conversion rounds, so the compiler cannot fuse them into one FMA (Go spec,
// "Arithmetic operators"), which would give other bits under GOAMD64=v3 or
// on arm64 than on the default build (docs/speed.md, "The same bits").

// The sine and cosine of the cases and the manufactured solutions. The
// standard library's are compiled with the rest of the program, so they fuse
// multiplications and additions wherever the target allows (GOAMD64=v3,
// arm64) and give other bits there; these do not, and on amd64 at the
// default level they give exactly math.Sin's and math.Cos's bits.
//
// The method is that of the Cephes library's sin.c (Moshier 1989, "Methods
// and Programs for Mathematical Functions"): x is reduced to
// z = x - k pi/4 with k even, |z| <= pi/4, by subtracting k pi/4 in three
// parts (Cody and Waite 1980), and sin z, cos z are polynomials in z^2 with
// Cephes' coefficients (docs/references.md §17).

// trigReduceMax bounds the arguments the three-part reduction is accurate
// for (2^29); beyond it the standard library's functions are used.
const trigReduceMax = 1 << 29

// pi/4 in three parts, the first two with trailing zero bits so that
// k*part is exact for the k of trigReduceMax.
const (
	pio4a = 7.85398125648498535156e-1
	pio4b = 3.77489470793079817668e-8
	pio4c = 2.69515142907905952645e-15
)

// Coefficients of sin z = z + z^3 P(z^2) and cos z = 1 - z^2/2 + z^4 Q(z^2)
// on |z| <= pi/4, highest power first (Cephes sin.c).
var (
	sinCoef = [...]float64{
		1.58962301576546568060e-10,
		-2.50507477628578072866e-8,
		2.75573136213857245213e-6,
		-1.98412698295895385996e-4,
		8.33333333332211858878e-3,
		-1.66666666666666307295e-1,
	}
	cosCoef = [...]float64{
		-1.13585365213876817300e-11,
		2.08757008419747316778e-9,
		-2.75573141792967388112e-7,
		2.48015872888517045348e-5,
		-1.38888888888730564116e-3,
		4.16666666666665929218e-2,
	}
)

// horner evaluates c[0] x^5 + c[1] x^4 + ... + c[5].
func horner(c *[6]float64, x float64) float64 {
	p := float64(c[0] * x)
	for _, k := range c[1:5] {
		p = float64((p + k) * x)
	}
	return p + c[5]
}

// octant reduces x >= 0 (below trigReduceMax) to x = q pi/2 + z with
// |z| <= pi/4 and returns q mod 4 and z.
func octant(x float64) (q uint64, z float64) {
	// Rounded too: ppc64, riscv64 and loong64 convert a value >= 2^63 to
	// uint64 by subtracting 2^63 first, which they would fuse.
	k := uint64(float64(x * (4 / math.Pi)))
	k += k & 1 // the nearest even multiple of pi/4
	y := float64(k)
	z = ((x - float64(y*pio4a)) - float64(y*pio4b)) - float64(y*pio4c)
	return (k >> 1) & 3, z
}

// sinPoly and cosPoly are sin z and cos z for |z| <= pi/4.
func sinPoly(z, zz float64) float64 { return z + float64(float64(z*zz)*horner(&sinCoef, zz)) }
func cosPoly(zz float64) float64 {
	return 1.0 - float64(0.5*zz) + float64(float64(zz*zz)*horner(&cosCoef, zz))
}

// sine is sin x: math.Sin's bits on amd64 at the default GOAMD64 level, and
// the same bits on every target.
func sine(x float64) float64 {
	s, _ := sincos(x)
	return s
}

// cosine is cos x, as sine is sin x.
func cosine(x float64) float64 {
	_, c := sincos(x)
	return c
}

// sincos returns sin x and cos x.
func sincos(x float64) (s, c float64) {
	switch {
	case x == 0:
		return x, 1
	case math.IsNaN(x) || math.IsInf(x, 0):
		return math.NaN(), math.NaN()
	case math.Abs(x) >= trigReduceMax:
		return math.Sin(x), math.Cos(x) // not reached by any case: phases are O(100)
	}
	neg := x < 0
	q, z := octant(math.Abs(x))
	zz := float64(z * z)
	sz, cz := sinPoly(z, zz), cosPoly(zz)
	// sin and cos of q pi/2 + z, q = 0..3
	switch q {
	case 1:
		s, c = cz, -sz
	case 2:
		s, c = -sz, -cz
	case 3:
		s, c = -cz, sz
	default:
		s, c = sz, cz
	}
	if neg {
		s = -s
	}
	return s, c
}
