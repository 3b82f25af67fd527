package fv2d

import (
	"math"
	"testing"
)

// boxCase is a test problem: a Gaussian pressure pulse off the centre of a
// closed box with reflective walls.
type boxCase struct{}

func init() { Register(boxCase{}) }

func (boxCase) Name() string       { return "test-box" }
func (boxCase) Equation() Equation { return Euler }
func (boxCase) Summary() string    { return "test only: pressure pulse in a reflective box" }
func (boxCase) Params() []Param    { return nil }
func (boxCase) Setup(v Values) (*Problem, error) {
	return &Problem{Eq: Euler, Gamma: v.Float("gamma"), X1: 1, Y1: 0.8,
		BC: [4]Boundary{Reflective, Reflective, Reflective, Reflective},
		Initial: func(x, y float64, w []float64) {
			r2 := (x-0.3)*(x-0.3) + (y-0.5)*(y-0.5)
			w[0], w[1], w[2], w[3] = 1, 0, 0, 1+5*math.Exp(-r2/0.005)
		}}, nil
}

// Law: a closed box with solid walls exchanges no mass and no energy with
// the outside, so (flux-difference form, no flux through a mirrored wall
// face) their totals stay constant to round-off, while the waves reflect.
func TestReflectiveBoxConserves(t *testing.T) {
	for _, kv := range []map[string]string{
		{"nx": "32", "ny": "24"},
		{"nx": "32", "ny": "24", "flux": "hll", "split": "lie"},
		{"nx": "32", "ny": "24", "flux": "hllc", "recon": "conserved", "limiter": "superbee"},
		{"nx": "32", "ny": "24", "flux": "rusanov", "scheme": "godunov", "alternate": "true"},
		{"nx": "32", "ny": "24", "flux": "exact"},
		{"nx": "32", "ny": "24", "flux": "roe"},
	} {
		s := newSolver(t, "test-box", kv)
		init := s.State().Totals()
		steps(t, s, 150) // the pulse reaches every wall
		end := s.State().Totals()
		for _, k := range []int{0, 3} {
			if d := math.Abs(end[k]-init[k]) / init[k]; d > 1e-13 {
				t.Errorf("%v: %s drifted by %.3g", kv, s.State().Eq.Vars()[k], d)
			}
		}
	}
}
