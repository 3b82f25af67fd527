package fv2d

import (
	"math"
	"math/rand/v2"
	"testing"
)

// Godunov flux of f(u) = u^2/2 against the law: Lax entropy condition and
// Rankine-Hugoniot shock speed s = (ul+ur)/2 (docs/references.md §2; LeVeque 2002 §12.2).
func TestBurgersGodunovCases(t *testing.T) {
	tests := []struct {
		name   string
		ul, ur float64
		want   float64
	}{
		{"shock moving right (s=1): upwind left", 2, 0, 2},
		{"shock moving left (s=-1): upwind right", 0, -2, 2},
		{"stationary shock (s=0): f(ul)=f(ur)", 1, -1, 0.5},
		{"shock s=0.5 right", 1.5, -0.5, 1.125},
		{"shock s=-0.5 left", 0.5, -1.5, 1.125},
		{"rarefaction to the right: f(ul)", 1, 3, 0.5},
		{"rarefaction to the left: f(ur)", -3, -1, 0.5},
		{"transonic rarefaction: f(0)=0", -1, 2, 0},
		{"transonic rarefaction touching 0", 0, 1, 0},
		{"constant state", 0.7, 0.7, 0.245},
	}
	for _, tc := range tests {
		if got := BurgersGodunov(tc.ul, tc.ur); math.Abs(got-tc.want) > 1e-15 {
			t.Errorf("%s: Godunov(%g, %g) = %g, want %g", tc.name, tc.ul, tc.ur, got, tc.want)
		}
	}
}

// The Godunov flux is f(u(0)) of the exact Riemann solution sampled at
// x/t = 0 (law: Godunov 1959). The fan is u = x/t; a shock moves at the RH speed.
func TestBurgersGodunovIsRiemannAtZero(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for range 10000 {
		ul, ur := 4*rng.Float64()-2, 4*rng.Float64()-2
		var u0 float64
		switch {
		case ul > ur: // shock with speed (ul+ur)/2
			u0 = ur
			if 0.5*(ul+ur) > 0 {
				u0 = ul
			}
		case ul >= 0:
			u0 = ul
		case ur <= 0:
			u0 = ur
		default: // fan u = x/t contains x/t = 0
			u0 = 0
		}
		if got, want := BurgersGodunov(ul, ur), 0.5*u0*u0; math.Abs(got-want) > 1e-15 {
			t.Fatalf("Godunov(%g, %g) = %g, want f(u(0)) = %g", ul, ur, got, want)
		}
	}
}

// Consistency F(u, u) = f(u) and mirror symmetry F(ul, ur) = F(-ur, -ul)
// (f is even, so mirroring x -> -x keeps the flux value; law).
func TestBurgersFluxConsistencyAndMirror(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for _, name := range BurgersFluxNames {
		f, err := BurgersFluxByName(name)
		if err != nil {
			t.Fatal(err)
		}
		for range 1000 {
			u := 10*rng.Float64() - 5
			if got := f(u, u); math.Abs(got-0.5*u*u) > 1e-14*(1+u*u) {
				t.Fatalf("%s: F(%g,%g) = %g, want %g", name, u, u, got, 0.5*u*u)
			}
			ul, ur := 10*rng.Float64()-5, 10*rng.Float64()-5
			if a, b := f(ul, ur), f(-ur, -ul); math.Abs(a-b) > 1e-14*(1+a*a) {
				t.Fatalf("%s: F(%g,%g) = %g but mirrored %g", name, ul, ur, a, b)
			}
		}
	}
}

// Both fluxes are E-fluxes: (F(ul,ur) - f(u)) (ur - ul) <= 0 for every u
// between ul and ur (Osher 1984, SIAM J. Numer. Anal. 21; recalled from
// memory). Checked at the end points, at 0 and at the mid point.
func TestBurgersEFlux(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	for _, name := range BurgersFluxNames {
		f, _ := BurgersFluxByName(name)
		for range 2000 {
			ul, ur := 6*rng.Float64()-3, 6*rng.Float64()-3
			F := f(ul, ur)
			for _, u := range []float64{ul, ur, 0, 0.5 * (ul + ur)} {
				if (u-ul)*(u-ur) > 0 {
					continue // u not between ul and ur
				}
				if (F-0.5*u*u)*(ur-ul) > 1e-13 {
					t.Fatalf("%s: F(%g,%g) = %g violates the E-flux condition at u=%g", name, ul, ur, F, u)
				}
			}
		}
	}
}

func TestBurgersFluxByNameUnknown(t *testing.T) {
	_, err := BurgersFluxByName("lax")
	if err == nil || err.Error() != `unknown Burgers flux "lax" (known: exact rusanov)` {
		t.Fatalf("err = %v", err)
	}
}
