package fv2d

import (
	"context"
	"math"
	"reflect"
	"testing"
)

// The initial averages an outside program is given are fv2d's own initial
// state, bit for bit, and at t = 0 the exact solution is the initial data
// (law), so Assess of the initial field finds errors at round-off level.
func TestInitialAveragesAndAssess(t *testing.T) {
	for _, name := range []string{"vortex", "burgers-sine"} {
		v, err := Resolve(name, map[string]string{"nx": "24", "ny": "20", "threads": "2"})
		if err != nil {
			t.Fatal(err)
		}
		s, err := NewSolver(v)
		if err != nil {
			t.Fatal(err)
		}
		p := s.Problem()
		in := InitialAverages(p, 24, 20, v.Int("quad"), 1)
		for k := range in.U {
			for j := 0; j < 20; j++ {
				for i := 0; i < 24; i++ {
					if a, b := in.At(k, i, j), s.State().At(k, i, j); a != b {
						t.Fatalf("%s: var %d cell (%d,%d): %v, solver starts from %v", name, k, i, j, a, b)
					}
				}
			}
		}
		s.Close()
		a := Assess(p, in.Totals(), in, v.Int("quad"), 1)
		if p.Exact == nil || len(a.Errors) != len(in.U) {
			t.Fatalf("%s: errors %v", name, a.Errors)
		}
		for k, n := range a.Errors {
			if n.L1 > 1e-14 || n.Linf > 1e-13 {
				t.Errorf("%s: %s at t=0: %+v", name, k, n)
			}
		}
		for k, tot := range a.Totals {
			if tot.Initial != tot.Final {
				t.Errorf("%s: total %s %+v", name, k, tot)
			}
		}
	}
}

// Run reports exactly what Assess says of its final state.
func TestRunUsesAssess(t *testing.T) {
	v, err := Resolve("vortex", map[string]string{"nx": "16", "ny": "16", "t_end": "0.1"})
	if err != nil {
		t.Fatal(err)
	}
	res, err := Run(context.Background(), v)
	if err != nil {
		t.Fatal(err)
	}
	p, err := SetUp(v)
	if err != nil {
		t.Fatal(err)
	}
	init := InitialAverages(p, 16, 16, v.Int("quad"), 1).Totals()
	a := Assess(p, init, res.Final, v.Int("quad"), 1)
	if !reflect.DeepEqual(a.Errors, res.Errors) || !reflect.DeepEqual(a.Totals, res.Totals) || !reflect.DeepEqual(a.Functionals, res.Functionals) {
		t.Errorf("Run %+v %+v\nAssess %+v", res.Errors, res.Totals, a)
	}
	if math.IsNaN(res.Errors["rho"].L1) || res.Errors["rho"].L1 == 0 {
		t.Errorf("rho error %v", res.Errors["rho"])
	}
}
