package fv2d

import "math"

// Products that meet an addition are written float64(x*y): an explicit
// conversion rounds, so the compiler cannot fuse them into one FMA (Go spec,
// "Arithmetic operators"), which would give other bits under GOAMD64=v3 or
// on arm64 than on the default build (docs/speed.md, "The same bits").

// The exponential, logarithm and power of the cases and the exact Riemann
// solver. The standard library's give other bits on other targets:
// math.Exp is assembly on amd64, with fused multiply-adds where the
// processor has FMA whatever GOAMD64 says, and other assembly on arm64;
// math.Log is assembly on amd64 and Go on arm64, where the compiler fuses
// it; math.Pow calls both. These give the same bits on every target and
// processor, and on amd64 processors with FMA (x86-64 since about 2013)
// exactly math.Exp's, math.Log's and math.Pow's for normal arguments, so
// that switching to them changed no result there (docs/references.md §19).
// Where the method asks for a fused multiply-add they call math.FMA, which
// rounds once on every target.

// Constants of exponential: ln 2 in two parts, the first with trailing
// zero bits so that k ln2Hi is exact for the k in range, 1/ln 2, the
// argument above which math.Exp on amd64 returns +Inf, and the Taylor
// coefficients 1/8!, ..., 1/2!, 1 of (e^r - 1)/r, highest power first.
const (
	expLn2Hi = 0.69314718055966295651160180568695068359375
	expLn2Lo = 0.28235290563031577122588448175013436025525412068e-12
	expLog2E = 1.4426950408889634073599246810018920
	expMax   = 7.09782712893384e+02
)

var expCoef = [...]float64{
	2.4801587301587301587e-5,
	1.9841269841269841270e-4,
	1.3888888888888888889e-3,
	8.3333333333333333333e-3,
	4.1666666666666666667e-2,
	1.6666666666666666667e-1,
	0.5,
	1,
}

// exponential is e^x, by the method of Shibata (2010): x = k ln 2 + r with
// k the integer nearest x/ln 2, |r| <= ln(2)/2; e^(r/16) - 1 from its
// Taylor polynomial; then four squarings, each as y <- y (y + 2), which
// takes e^(r/16) - 1 to e^r - 1 without forming e^(r/16) itself; and
// e^x = 2^k e^r.
func exponential(x float64) float64 {
	switch {
	case math.IsNaN(x) || math.IsInf(x, 1):
		return x
	case x > expMax:
		return math.Inf(1)
	}
	kf := math.RoundToEven(x * expLog2E)
	if kf < -1075 { // e^x < 2^-1075: 0 (this is also -Inf)
		return 0
	}
	r := math.FMA(-kf, expLn2Hi, x)
	r = math.FMA(-kf, expLn2Lo, r)
	r *= 0.0625
	p := expCoef[0]
	for _, c := range expCoef[1:] {
		p = math.FMA(p, r, c)
	}
	y := float64(r * p)
	for range 3 {
		y = float64(y * (y + 2))
	}
	y = math.FMA(y, y+2, 1)
	switch k := int(kf); {
	case k < -1022: // subnormal: scale by 2^(k+1022), exact, then by 2^-1022
		return y * math.Float64frombits(uint64(k+2045)<<52) * 0x1p-1022
	case k > 1023: // math.Exp on amd64 returns +Inf here (x > 709.43), wrongly
		return float64(y*0x1p1023) * 2 // rounded: the compiler makes z*2 into z+z, and would fuse
	default:
		return y * math.Float64frombits(uint64(k+1023)<<52)
	}
}

// Constants of logarithm: ln 2 in two parts, the first with trailing zero
// bits so that k logLn2Hi is exact, and the coefficients of the polynomial
// in s^2 of logarithm's remainder (fdlibm's e_log.c, Lg1 ... Lg7).
const (
	logLn2Hi = 6.93147180369123816490e-01
	logLn2Lo = 1.90821492927058770002e-10
	logL1    = 6.666666666666735130e-01
	logL2    = 3.999999999940941908e-01
	logL3    = 2.857142874366239149e-01
	logL4    = 2.222219843214978396e-01
	logL5    = 1.818357216161805012e-01
	logL6    = 1.531383769920937332e-01
	logL7    = 1.479819860511658591e-01
)

// logarithm is ln x, by the method of fdlibm's e_log.c (Sun Microsystems
// 1993): x = 2^k (1 + f) with sqrt(2)/2 < 1 + f <= sqrt(2), s = f/(2 + f),
// ln(1 + f) = 2s + s R(s^2) written as f - (f^2/2 - s (f^2/2 + R)), and
// ln x = k ln 2 + ln(1 + f) with ln 2 in two parts.
func logarithm(x float64) float64 {
	switch {
	case math.IsNaN(x) || math.IsInf(x, 1):
		return x
	case x < 0:
		return math.NaN()
	case x == 0:
		return math.Inf(-1)
	}
	f1, ki := math.Frexp(x)
	k := float64(ki)
	if f1 <= math.Sqrt2/2 { // <= as amd64's math.Log; fdlibm has <
		k--
		f1 += f1
	}
	f := f1 - 1
	s := f / (2 + f)
	s2 := s * s
	s4 := s2 * s2
	t1 := float64(s2 * (logL1 + float64(s4*(logL3+float64(s4*(logL5+float64(s4*logL7)))))))
	t2 := float64(s4 * (logL2 + float64(s4*(logL4+float64(s4*logL6)))))
	R := t1 + t2
	hfsq := float64(0.5 * f * f)
	return float64(k*logLn2Hi) - ((hfsq - (float64(s*(hfsq+R)) + float64(k*logLn2Lo))) - f)
}

// power is x^y. Where math.Pow would call math.Exp and math.Log (x > 0
// finite, |y| finite and not an integer or 1/2, x != 1) it takes the same
// steps with exponential and logarithm: y = n + g with n an integer and
// |g| <= 1/2, x^y = e^(g ln x) x^n, and x^n by binary powering (Knuth, The
// Art of Computer Programming vol. 2, §4.6.3) of x = m 2^e with the powers
// of two kept apart. Elsewhere it is math.Pow, whose other paths multiply,
// divide and take square roots only, and give the same bits everywhere.
func power(x, y float64) float64 {
	n, g := math.Modf(math.Abs(y))
	if g == 0 || math.IsNaN(g) || !(x > 0) || math.IsInf(x, 1) || x == 1 || y == 0.5 || y == -0.5 || n >= 1<<63 {
		return math.Pow(x, y)
	}
	if g > 0.5 {
		g--
		n++
	}
	a, ae := exponential(g*logarithm(x)), 0
	m, e := math.Frexp(x)
	for i := int64(n); i != 0; i >>= 1 {
		if e < -1<<12 || 1<<12 < e { // ae is already out of range: Ldexp gives 0 or +Inf
			ae += e
			break
		}
		if i&1 == 1 {
			a *= m
			ae += e
		}
		m = float64(m * m)
		e <<= 1
		if m < 0.5 {
			m += m
			e--
		}
	}
	if y < 0 {
		a, ae = 1/a, -ae
	}
	return math.Ldexp(a, ae)
}
