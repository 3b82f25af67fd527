package fv2d

import "math"

// Products that meet an addition are written float64(x*y): an explicit
// conversion rounds, so the compiler cannot fuse them into one FMA (Go spec,
// "Arithmetic operators"), which would give other bits under GOAMD64=v3 or
// on arm64 than on the default build (docs/speed.md, "The same bits").

// The limiters and fluxes use Go's built-in min and max, not math.Min and
// math.Max: both give the same bits (NaN wins, -0 < +0), but the built-ins
// compile to branch-free instructions on amd64 where math.Min is a call; a
// branch on which of two nearly equal slopes or speeds is smaller is
// mispredicted half the time.

// Limiter is a slope limiter of the MUSCL reconstruction: from the backward
// difference a = w_i - w_{i-1} and the forward difference b = w_{i+1} - w_i
// it returns the limited slope (times dx) of cell i. Every limiter here is
// zero when a b <= 0 (an extremum), symmetric in a and b, and stays inside
// the second-order TVD region of Sweby (1984), between minmod and superbee.
type Limiter func(a, b float64) float64

// limiters is the table of slope limiters: the choices of the limiter
// parameter, in order. To add a limiter, write its function below (a Limiter
// with its source in the doc comment) and add one entry here: the limiter
// choices of CommonParams, limiterNames and LimiterByName follow from it.
// Then give its classical phi(r) form to TestLimitersSwebyForms.
var limiters = methods[Limiter]{kind: "limiter", list: []method[Limiter]{
	{"minmod", Minmod, "minmod (Roe 1986): the lower edge of Sweby's TVD region"},
	{"vanleer", VanLeer, "harmonic mean of the slopes (van Leer 1974)"},
	{"mc", MonotonizedCentral, "monotonized central (van Leer 1977)"},
	{"superbee", Superbee, "superbee (Roe 1985): the upper edge of Sweby's TVD region"},
}}

// limiterNames are the choices of the limiter parameter.
var limiterNames = limiters.names()

// LimiterByName returns the limiter called name.
func LimiterByName(name string) (Limiter, error) { return limiters.byName(name) }

// Minmod returns the argument of smaller modulus when a and b have the same
// sign, else 0 (Roe 1986; the lower edge of Sweby's TVD region).
func Minmod(a, b float64) float64 {
	if a*b <= 0 {
		return 0
	}
	if math.Abs(a) < math.Abs(b) {
		return a
	}
	return b
}

// VanLeer is the harmonic mean 2ab/(a+b) when a b > 0, else 0 (van Leer
// 1974, J. Comput. Phys. 14).
func VanLeer(a, b float64) float64 {
	ab := float64(a * b)
	if ab <= 0 {
		return 0
	}
	return 2 * ab / (a + b)
}

// MonotonizedCentral is the monotonized central slope
// sign(a) min(2|a|, 2|b|, |a+b|/2) when a b > 0, else 0 (van Leer 1977,
// J. Comput. Phys. 23).
func MonotonizedCentral(a, b float64) float64 {
	if a*b <= 0 {
		return 0
	}
	c := 0.5 * (a + b)
	m := min(2*math.Abs(a), 2*math.Abs(b))
	if math.Abs(c) < m {
		return c
	}
	return math.Copysign(m, a)
}

// Superbee is sign(a) max(min(2|a|, |b|), min(|a|, 2|b|)) when a b > 0,
// else 0 (Roe 1985; the upper edge of Sweby's TVD region).
func Superbee(a, b float64) float64 {
	if a*b <= 0 {
		return 0
	}
	aa, bb := math.Abs(a), math.Abs(b)
	return math.Copysign(max(min(2*aa, bb), min(aa, 2*bb)), a)
}
