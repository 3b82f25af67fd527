package fv2d

import (
	"fmt"
	"math"
)

// Products that meet an addition are written float64(x*y): an explicit
// conversion rounds, so the compiler cannot fuse them into one FMA (Go spec,
// "Arithmetic operators"), which would give other bits under GOAMD64=v3 or
// on arm64 than on the default build (docs/speed.md, "The same bits").

// WaveKind is the kind of a non-linear wave of the Euler Riemann problem.
type WaveKind int

const (
	Shock       WaveKind = iota + 1 // p* > p_K
	Rarefaction                     // p* <= p_K (a fan, possibly of zero width)
)

func (k WaveKind) String() string {
	switch k {
	case Shock:
		return "shock"
	case Rarefaction:
		return "rarefaction"
	}
	return "wave?"
}

// RiemannSolution is the exact solution of the Riemann problem of the 1-D
// Euler equations of an ideal gas (Toro 2009, ch. 4): a left wave, a contact
// moving at UStar and a right wave, with the star region between them.
//
// For a shock, Head and Tail of that side are both the shock speed; for a
// rarefaction, Head is the speed of the fan edge next to the undisturbed
// state and Tail the edge next to the star region. Vacuum solutions are not
// represented: SolveRiemann reports an error for them.
type RiemannSolution struct {
	Gamma                float64
	RhoL, UL, PL, AL     float64 // left state and its sound speed
	RhoR, UR, PR, AR     float64 // right state and its sound speed
	PStar, UStar         float64
	RhoStarL, RhoStarR   float64
	Left, Right          WaveKind
	LeftHead, LeftTail   float64 // wave speeds of the left wave
	RightHead, RightTail float64 // wave speeds of the right wave
	Iterations           int     // Newton iterations taken for p*
	vacuum               bool    // vacuum generated (only inside the exact flux)
}

// Riemann solver tolerances: Newton stops when the relative change of p*
// falls below riemannTol; as it converges quadratically, the last iterate
// is then accurate to round-off. riemannMaxIter bounds the iterations (the
// iteration converges monotonically from the left of the root, Toro 2009
// §4.3.1, so the bound is not reached on valid data; it guards against NaN).
const (
	riemannTol     = 1e-9
	riemannMaxIter = 60
)

// SolveRiemann solves the Riemann problem with left state (rl, ul, pl) and
// right state (rr, ur, pr) for an ideal gas with ratio of specific heats
// gamma: p* by Newton's method on Toro's pressure function f(p) = f_L(p) +
// f_R(p) + u_R - u_L (Toro 2009 §4.3), then u* and the star densities (§4.4).
// It returns an error for non-positive or non-finite density or pressure, for
// gamma <= 1, and when the data generate vacuum (pressure positivity
// condition, Toro 2009 eq. 4.40: 2(a_L + a_R)/(gamma-1) <= u_R - u_L).
func SolveRiemann(gamma, rl, ul, pl, rr, ur, pr float64) (RiemannSolution, error) {
	if !(gamma > 1) || math.IsInf(gamma, 0) {
		return RiemannSolution{}, fmt.Errorf("riemann: gamma = %g, want a finite value > 1", gamma)
	}
	for _, q := range [...]struct {
		name string
		v    float64
	}{{"rho_l", rl}, {"p_l", pl}, {"rho_r", rr}, {"p_r", pr}} {
		if !(q.v > 0) || math.IsInf(q.v, 0) {
			return RiemannSolution{}, fmt.Errorf("riemann: %s = %g, want a finite value > 0", q.name, q.v)
		}
	}
	if math.IsNaN(ul) || math.IsInf(ul, 0) || math.IsNaN(ur) || math.IsInf(ur, 0) {
		return RiemannSolution{}, fmt.Errorf("riemann: velocities u_l = %g, u_r = %g, want finite values", ul, ur)
	}
	s := solveRiemann(gamma, rl, ul, pl, rr, ur, pr)
	if s.vacuum {
		return RiemannSolution{}, fmt.Errorf("riemann: data generate vacuum: u_r - u_l = %g >= 2(a_l + a_r)/(gamma-1) = %g",
			ur-ul, 2*(s.AL+s.AR)/(gamma-1))
	}
	return s, nil
}

// pressureFn is Toro's f_K(p) and its derivative for the side with state
// (rK, pK, aK) (Toro 2009 eqs. 4.6, 4.7, 4.37): shock branch for p > pK,
// rarefaction branch otherwise, where it also returns r = (p/pK)^z,
// z = (gamma-1)/(2 gamma) (0 on the shock branch).
func pressureFn(gamma, p, rK, pK, aK float64) (f, df, r float64) {
	if p > pK {
		A := 2 / ((gamma + 1) * rK)
		B := float64((gamma - 1) / (gamma + 1) * pK)
		q := math.Sqrt(A / (p + B))
		return (p - pK) * q, q * (1 - 0.5*(p-pK)/(p+B)), 0
	}
	r = powPos(p/pK, 0.5*(gamma-1)/gamma)
	f = 2 * aK / (gamma - 1) * (r - 1)
	df = r / (rK * aK) * pK / p // (p/pK)^(-(gamma+1)/(2 gamma)) / (rK aK)
	return f, df, r
}

// powPos returns x^y for x > 0 as exp(y log x): a few ulps, several times
// faster than math.Pow, which the exact flux would spend most of its time in.
// exponential and logarithm give the same bits on every target.
func powPos(x, y float64) float64 { return exponential(y * logarithm(x)) }

// powFan returns x^n for x >= 0 and n = 2/(gamma-1), by repeated
// multiplication when n is a small integer up to round-off (gamma = 1.4:
// n = 5; 5/3: 3), else as powPos; 0^n = 0.
func powFan(x, n float64) float64 {
	if k := math.Round(n); math.Abs(n-k) < 1e-12 && k >= 1 && k <= 16 {
		y, b := 1.0, x
		for m := int(k); m > 0; m >>= 1 {
			if m&1 == 1 {
				y *= b
			}
			b *= b
		}
		return y
	}
	if x <= 0 {
		return 0
	}
	return powPos(x, n)
}

// guessPressure is the adaptive initial guess for p* of Toro 2009 §9.5.1:
// the primitive-variable (PVRS) value when the pressure ratio is small and it
// lies between p_L and p_R, else the two-rarefaction (TRRS) value if it lies
// below both, else the two-shock (TSRS) value.
func guessPressure(gamma, rl, ul, pl, al, rr, ur, pr, ar float64) float64 {
	pmin, pmax := math.Min(pl, pr), math.Max(pl, pr)
	ppv := math.Max(0, float64(0.5*(pl+pr))-float64(0.125*(ur-ul)*(rl+rr)*(al+ar)))
	if pmax/pmin < 2 && pmin <= ppv && ppv <= pmax {
		return ppv
	}
	if ppv < pmin {
		z := 0.5 * (gamma - 1) / gamma
		num := al + ar - float64(0.5*(gamma-1)*(ur-ul))
		den := al/powPos(pl, z) + ar/powPos(pr, z)
		return powPos(num/den, 1/z)
	}
	gL := math.Sqrt(2 / ((gamma + 1) * rl) / (ppv + float64((gamma-1)/(gamma+1)*pl)))
	gR := math.Sqrt(2 / ((gamma + 1) * rr) / (ppv + float64((gamma-1)/(gamma+1)*pr)))
	return math.Max(0, (float64(gL*pl)+float64(gR*pr)-(ur-ul))/(gL+gR))
}

// solveRiemann is SolveRiemann without input checks; on vacuum generation it
// returns a solution with vacuum set (sampled as Toro 2009 §4.6).
func solveRiemann(gamma, rl, ul, pl, rr, ur, pr float64) RiemannSolution {
	s := RiemannSolution{Gamma: gamma, RhoL: rl, UL: ul, PL: pl, RhoR: rr, UR: ur, PR: pr}
	s.AL = math.Sqrt(gamma * pl / rl)
	s.AR = math.Sqrt(gamma * pr / rr)
	du := ur - ul
	g1 := gamma - 1
	if 2*(s.AL+s.AR)/g1 <= du {
		// Vacuum between two rarefactions (Toro 2009 §4.6).
		s.vacuum = true
		s.Left, s.Right = Rarefaction, Rarefaction
		s.LeftHead, s.LeftTail = ul-s.AL, ul+2*s.AL/g1
		s.RightHead, s.RightTail = ur+s.AR, ur-2*s.AR/g1
		return s
	}

	// Newton's method, safeguarded by the bracket [lo, hi] of the root:
	// f(0) < 0 without vacuum, f is increasing and concave (Toro 2009 §4.3.1).
	lo, hi := 0.0, math.Inf(1)
	p := guessPressure(gamma, rl, ul, pl, s.AL, rr, ur, pr, s.AR)
	if !(p > 0) {
		p = 1e-8 * math.Min(pl, pr)
	}
	var fl, fr, rL, rR float64
	for s.Iterations = 1; ; s.Iterations++ {
		var dfl, dfr float64
		fl, dfl, rL = pressureFn(gamma, p, rl, pl, s.AL)
		fr, dfr, rR = pressureFn(gamma, p, rr, pr, s.AR)
		f := fl + fr + du
		if f == 0 || s.Iterations == riemannMaxIter {
			break
		}
		if f < 0 {
			lo = p
		} else {
			hi = p
		}
		pn := p - f/(dfl+dfr)
		if dp := pn - p; math.Abs(dp) <= riemannTol*(pn+p) {
			if (pn > pl) != (p > pl) || (pn > pr) != (p > pr) {
				// The last step crossed p_K: the other branch of f_K holds
				// at pn, so evaluate it there instead of extrapolating.
				p = pn
				fl, _, rL = pressureFn(gamma, p, rl, pl, s.AL)
				fr, _, rR = pressureFn(gamma, p, rr, pr, s.AR)
				break
			}
			// Converged: carry f_K and r_K to pn to first order (the error,
			// O(dp^2), is below round-off).
			fl += float64(dfl * dp)
			fr += float64(dfr * dp)
			c := 1 + 0.5*g1/gamma*dp/p
			rL *= c
			rR *= c
			p = pn
			break
		}
		switch {
		case pn > lo && pn < hi:
		case math.IsInf(hi, 1): // cannot happen in exact arithmetic (concavity)
			pn = 2 * p
		default: // Newton overshot below the root: bisect the bracket
			pn = 0.5 * (lo + hi)
		}
		p = pn
	}
	s.PStar = p
	s.UStar = float64(0.5*(ul+ur)) + float64(0.5*(fr-fl)) // Toro 2009 eq. 4.9

	// Star densities and wave speeds (Toro 2009 §4.4, §4.5). On a
	// rarefaction side (p/p_K)^(1/gamma) = r_K^n with n = 2/(gamma-1), and
	// the sound speed behind the fan is a_K r_K.
	gr := g1 / (gamma + 1)
	z := 0.5 * g1 / gamma
	n := 2 / g1
	if p > pl {
		s.Left = Shock
		q := p / pl
		s.RhoStarL = rl * (q + gr) / (float64(gr*q) + 1)
		sl := ul - float64(s.AL*math.Sqrt(float64((gamma+1)/(2*gamma)*q)+z))
		s.LeftHead, s.LeftTail = sl, sl
	} else {
		s.Left = Rarefaction
		s.RhoStarL = rl * powFan(rL, n)
		s.LeftHead = ul - s.AL
		s.LeftTail = s.UStar - float64(s.AL*rL)
	}
	if p > pr {
		s.Right = Shock
		q := p / pr
		s.RhoStarR = rr * (q + gr) / (float64(gr*q) + 1)
		sr := ur + float64(s.AR*math.Sqrt(float64((gamma+1)/(2*gamma)*q)+z))
		s.RightHead, s.RightTail = sr, sr
	} else {
		s.Right = Rarefaction
		s.RhoStarR = rr * powFan(rR, n)
		s.RightHead = ur + s.AR
		s.RightTail = s.UStar + float64(s.AR*rR)
	}
	return s
}

// Star returns the star-region pressure and velocity and the densities left
// and right of the contact.
func (s RiemannSolution) Star() (pstar, ustar, rhoStarL, rhoStarR float64) {
	return s.PStar, s.UStar, s.RhoStarL, s.RhoStarR
}

// WavePositions returns, for the Riemann problem with its discontinuity at x0
// at time 0, where its solution is not smooth at time t: x0 + S t for each
// wave speed S, left to right: the head and tail of a rarefaction (Toro 2009
// §4.5, eqs. 4.55 and 4.62, head S_H = u_K -+ a_K, tail S_T = u* -+ a*_K),
// each shock once (eqs. 4.52 and 4.59) and the contact, u* (§4.4). Between
// two positions the solution is constant or, inside a fan, smooth (eqs.
// 4.56 and 4.63). For t <= 0 it returns x0 alone.
func (s RiemannSolution) WavePositions(x0, t float64) []float64 {
	if t <= 0 {
		return []float64{x0}
	}
	var speeds []float64
	if s.Left == Shock {
		speeds = append(speeds, s.LeftHead)
	} else {
		speeds = append(speeds, s.LeftHead, s.LeftTail)
	}
	if !s.vacuum {
		speeds = append(speeds, s.UStar)
	}
	if s.Right == Shock {
		speeds = append(speeds, s.RightHead)
	} else {
		speeds = append(speeds, s.RightTail, s.RightHead)
	}
	for i, v := range speeds {
		speeds[i] = x0 + float64(v*t)
	}
	return speeds
}

// Waves returns the kinds of the left and right waves.
func (s RiemannSolution) Waves() (left, right WaveKind) { return s.Left, s.Right }

// Sample returns the self-similar solution at xi = (x - x0)/t (Toro 2009
// §4.5). At a discontinuity (xi equal to a shock or contact speed) it returns
// the state on its left side. xi = ±Inf (t = 0) gives the initial data; xi
// must not be NaN.
func (s RiemannSolution) Sample(xi float64) (rho, u, p float64) {
	if s.vacuum {
		switch {
		case xi <= s.LeftTail:
			return s.sampleLeftFan(xi)
		case xi >= s.RightTail:
			return s.sampleRightFan(xi)
		}
		return 0, 0.5 * (s.LeftTail + s.RightTail), 0 // vacuum
	}
	if xi <= s.UStar {
		if s.Left == Shock {
			if xi <= s.LeftHead {
				return s.RhoL, s.UL, s.PL
			}
			return s.RhoStarL, s.UStar, s.PStar
		}
		if xi > s.LeftTail {
			return s.RhoStarL, s.UStar, s.PStar
		}
		return s.sampleLeftFan(xi)
	}
	if s.Right == Shock {
		if xi > s.RightHead {
			return s.RhoR, s.UR, s.PR
		}
		return s.RhoStarR, s.UStar, s.PStar
	}
	if xi <= s.RightTail {
		return s.RhoStarR, s.UStar, s.PStar
	}
	return s.sampleRightFan(xi)
}

// sampleLeftFan returns the left state for xi <= LeftHead and the state
// inside the left rarefaction fan otherwise (Toro 2009 eq. 4.56).
func (s RiemannSolution) sampleLeftFan(xi float64) (rho, u, p float64) {
	if xi <= s.LeftHead {
		return s.RhoL, s.UL, s.PL
	}
	g := s.Gamma
	c := 2/(g+1) + float64((g-1)/((g+1)*s.AL)*(s.UL-xi))
	cn := powFan(c, 2/(g-1))
	u = 2 / (g + 1) * (s.AL + float64(0.5*(g-1)*s.UL) + xi)
	return s.RhoL * cn, u, s.PL * cn * c * c // c^(2 gamma/(gamma-1)) = c^n c^2
}

// sampleRightFan returns the right state for xi >= RightHead and the state
// inside the right rarefaction fan otherwise (Toro 2009 eq. 4.63).
func (s RiemannSolution) sampleRightFan(xi float64) (rho, u, p float64) {
	if xi >= s.RightHead {
		return s.RhoR, s.UR, s.PR
	}
	g := s.Gamma
	c := 2/(g+1) - float64((g-1)/((g+1)*s.AR)*(s.UR-xi))
	cn := powFan(c, 2/(g-1))
	u = 2 / (g + 1) * (-s.AR + float64(0.5*(g-1)*s.UR) + xi)
	return s.RhoR * cn, u, s.PR * cn * c * c
}
