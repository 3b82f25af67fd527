package fv2d

import (
	"fmt"
	"math"
	"strings"
)

// Limiter is a slope limiter of the MUSCL reconstruction: from the backward
// difference a = w_i - w_{i-1} and the forward difference b = w_{i+1} - w_i
// it returns the limited slope (times dx) of cell i. Every limiter here is
// zero when a b <= 0 (an extremum), symmetric in a and b, and stays inside
// the second-order TVD region of Sweby (1984), between minmod and superbee.
type Limiter func(a, b float64) float64

// limiterNames are the choices of the limiter parameter.
var limiterNames = []string{"minmod", "vanleer", "mc", "superbee"}

// LimiterByName returns the limiter called name.
func LimiterByName(name string) (Limiter, error) {
	switch name {
	case "minmod":
		return Minmod, nil
	case "vanleer":
		return VanLeer, nil
	case "mc":
		return MonotonizedCentral, nil
	case "superbee":
		return Superbee, nil
	}
	return nil, fmt.Errorf("unknown limiter %q (known: %s)", name, strings.Join(limiterNames, " "))
}

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
	ab := a * b
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
	m := math.Min(2*math.Abs(a), 2*math.Abs(b))
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
	return math.Copysign(math.Max(math.Min(2*aa, bb), math.Min(aa, 2*bb)), a)
}
