package fv2d

import (
	"math"
	"math/rand/v2"
	"testing"
)

// expArgs are arguments for the exponential tests: the whole range in
// random steps, dense near 0 and over the vortex's [-24.5, 0.5], the ends
// of the range (subnormal results, overflow), and special values.
func expArgs() []float64 {
	rng := rand.New(rand.NewPCG(5, 6))
	xs := []float64{0, math.Copysign(0, -1), 1, -1, 0.5, -0.5, 1e-300, -1e-300, math.Ln2, -math.Ln2,
		709.4, 709.43, 709.5, expMax, -708.39, -708.4, -744.4, -745.1, -745.13, -745.2, -800, -1e300}
	for range 200000 {
		xs = append(xs, -745.2+rng.Float64()*(709.43+745.2), 2*rng.Float64()-1, -24.5+25*rng.Float64(), -745.2+rng.Float64()*40)
	}
	for k := -1075; k <= 1024; k++ { // ln 2 multiples, where the reduction changes k
		x := float64(k) * math.Ln2
		xs = append(xs, x, math.Nextafter(x, math.Inf(1)), math.Nextafter(x, math.Inf(-1)))
	}
	return xs
}

// logArgs are positive normal arguments for the logarithm tests: random
// bits of every exponent, values near 1, powers of two and sqrt(2)/2 times
// them (where the reduction changes k), and the extremes.
func logArgs() []float64 {
	rng := rand.New(rand.NewPCG(7, 8))
	xs := []float64{1, math.SmallestNonzeroFloat64 * (1 << 52), math.MaxFloat64, math.E, 0.5, 2, math.Sqrt2, math.Sqrt2 / 2}
	for range 400000 {
		b := rng.Uint64()&(1<<63-1) | 1<<52 // positive, exponent field not 0
		if b>>52 == 0x7FF {
			b &^= 1 << 62
		}
		xs = append(xs, math.Float64frombits(b), 1+(rng.Float64()-0.5)/8)
	}
	for e := -1021; e <= 1023; e++ {
		for _, m := range []float64{1, math.Sqrt2 / 2} {
			x := math.Ldexp(m, e)
			xs = append(xs, x, math.Nextafter(x, 0), math.Nextafter(x, math.Inf(1)))
		}
	}
	return xs
}

// powArgs are (x, y) pairs for the power tests: the vortex's T^2.5 and the
// exact solver's (p/pK)^((gamma-1)/(2 gamma)) for gamma = 1.4 and 5/3,
// random x over many decades with random y, and integer, half and
// special exponents.
func powArgs() [][2]float64 {
	rng := rand.New(rand.NewPCG(9, 10))
	var xy [][2]float64
	for range 100000 {
		x := math.Pow(10, 12*rng.Float64()-6)
		xy = append(xy, [2]float64{rng.Float64(), 2.5}, [2]float64{x, 0.5 * 0.4 / 1.4}, [2]float64{x, 1 / (0.5 * 0.4 / 1.4)},
			[2]float64{x, 0.5 * (2.0 / 3) / (5.0 / 3)}, [2]float64{x, 20*rng.Float64() - 10},
			[2]float64{math.Pow(10, 600*rng.Float64()-300), 4*rng.Float64() - 2})
	}
	for _, y := range []float64{0, 1, -1, 2, 3, -3, 0.5, -0.5, 1.5, 1e20, math.Inf(1), math.Inf(-1), math.NaN()} {
		for _, x := range []float64{0, math.Copysign(0, -1), 1, -1, 2, -2, 0.3, math.Inf(1), math.Inf(-1), math.NaN()} {
			xy = append(xy, [2]float64{x, y})
		}
	}
	return xy
}

// ulps is the distance of a and b in units in the last place of b.
func ulps(a, b float64) float64 {
	if a == b || math.IsNaN(a) && math.IsNaN(b) {
		return 0
	}
	return math.Abs(a-b) / (math.Nextafter(math.Abs(b), math.Inf(1)) - math.Abs(b))
}

// TestExpLogAgainstStd holds exponential, logarithm and power close to Go's
// math.Exp, math.Log and math.Pow (independent library), which differ from
// them in the last bits on targets other than amd64 and on processors
// without FMA, and checks the special values documented for those
// functions. The tolerances, in units in the last place: exponential errs
// by up to about 1.4 ulp (the four squarings amplify the rounding of the
// polynomial; docs/references.md §19) and math.Exp by under 1, so 3;
// logarithm and math.Log by under 1 each, so 2; a power x^y = e^(g ln x)
// x^n carries the error of ln x times |g| <= 1/2 and that of the binary
// powering in each of the two, so 8 + |ln x|.
func TestExpLogAgainstStd(t *testing.T) {
	bad := 0
	check := func(name string, x, y, got, want, tol float64) {
		t.Helper()
		if ulps(got, want) > tol {
			if bad++; bad <= 10 {
				t.Errorf("%s(%v, %v) = %v, math %v (%g ulp)", name, x, y, got, want, ulps(got, want))
			}
		}
	}
	for _, x := range expArgs() {
		if x > 709.43 && x <= expMax {
			continue // math.Exp returns +Inf on amd64: below
		}
		check("exp", x, 0, exponential(x), math.Exp(x), 3)
	}
	for _, x := range logArgs() {
		check("log", x, 0, logarithm(x), math.Log(x), 2)
	}
	for _, xy := range powArgs() {
		check("pow", xy[0], xy[1], power(xy[0], xy[1]), math.Pow(xy[0], xy[1]), 8+math.Abs(math.Log(xy[0])))
	}
	// e^x just below the overflow threshold is finite: e^709.75 =
	// e^709 e^0.75 (law; each of math.Exp's within 1 ulp, so the product
	// within 3).
	if got, want := exponential(709.75), math.Exp(709)*math.Exp(0.75); math.IsInf(got, 0) || ulps(got, want) > 3 {
		t.Errorf("exp(709.75) = %v, want %v", got, want)
	}
	for _, c := range []struct {
		name      string
		got, want float64
	}{
		{"exp(+Inf)", exponential(math.Inf(1)), math.Inf(1)},
		{"exp(-Inf)", exponential(math.Inf(-1)), 0},
		{"exp(710)", exponential(710), math.Inf(1)},
		{"exp(-746)", exponential(-746), 0},
		{"log(0)", logarithm(0), math.Inf(-1)},
		{"log(+Inf)", logarithm(math.Inf(1)), math.Inf(1)},
		{"log(1)", logarithm(1), 0},
	} {
		if c.got != c.want {
			t.Errorf("%s = %v, want %v", c.name, c.got, c.want)
		}
	}
	for _, v := range []float64{exponential(math.NaN()), logarithm(math.NaN()), logarithm(-1)} {
		if !math.IsNaN(v) {
			t.Errorf("got %v, want NaN", v)
		}
	}
	if bad > 0 {
		t.Errorf("%d arguments out of tolerance", bad)
	}
}
