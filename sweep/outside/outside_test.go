package outside

import (
	"math"
	"strings"
	"testing"

	"fvsweep/fv2d"
	"fvsweep/sweep/job"
	"fvsweep/sweep/manifest"
)

func heron(t *testing.T) *manifest.Manifest {
	m := &manifest.Manifest{Name: "heron", Version: "0.4.1", Equation: manifest.Euler,
		Command: []string{"./heron", "{nx}x{ny}", "{limiter}", "{cfl}", "{t_end}", "{test}", "{output}"}, Output: manifest.CSV,
		Params: []manifest.Param{
			{Name: "limiter", Choices: []string{"minmod", "vanleer"}, Default: "vanleer", Min: math.NaN(), Max: math.NaN()},
			{Name: "cfl", Kind: manifest.Float, Min: 0, Max: 1, Default: "0.8"},
		}}
	if err := m.Check(); err != nil {
		t.Fatal(err)
	}
	return m
}

func TestResolve(t *testing.T) {
	m := heron(t)
	r, err := Resolve(m, "shocktube", map[string]string{"nx": "100", "cfl": "0.50", "test": "1"})
	if err != nil {
		t.Fatal(err)
	}
	for k, want := range map[string]string{"nx": "100", "cfl": "0.5", "limiter": "vanleer", "gamma": "1.4", "test": "1", "quad": "3"} {
		if r.Params[k] != want {
			t.Errorf("%s = %q, want %q", k, r.Params[k], want)
		}
	}
	for _, k := range []string{"scheme", "flux", "split", "threads"} {
		if _, ok := r.Params[k]; ok {
			t.Errorf("fv2d's scheme parameter %s is a parameter of the outside run", k)
		}
	}
	c := r.Canonical()
	if !strings.HasPrefix(c, "heron@0.4.1 shocktube ") || !strings.Contains(c, " cfl=0.5 ") {
		t.Errorf("canonical %q", c)
	}
	// The same settings spelled differently are the same job; a new version is not.
	r2, _ := Resolve(m, "shocktube", map[string]string{"nx": "100", "cfl": "5e-1", "test": "1", "limiter": "vanleer"})
	if r2.ID() != r.ID() || !job.ValidID(r.ID()) {
		t.Errorf("IDs %s %s", r.ID(), r2.ID())
	}
	id := r.ID()
	m2 := heron(t)
	m2.Version = "0.4.2"
	if r3, _ := Resolve(m2, "shocktube", map[string]string{"nx": "100", "cfl": "0.5", "test": "1"}); r3.ID() == id {
		t.Error("a new version keeps the job ID")
	}
	// No outside run shares an ID with the fv2d run of the same case.
	v, _ := fv2d.Resolve("shocktube", map[string]string{"nx": "100", "test": "1"})
	if job.NewID(v.String()) == r.ID() {
		t.Error("outside ID equals fv2d's")
	}
}

func TestResolveErrors(t *testing.T) {
	for _, tc := range []struct {
		cas  string
		kv   map[string]string
		want string
	}{
		{"burgers-sine", nil, "solver heron solves euler; case burgers-sine is burgers"},
		{"shocktube", map[string]string{"flux": "hll"}, `unknown parameter "flux"`},
		{"shocktube", map[string]string{"cfl": "1.5"}, "parameter cfl: 1.5 is above its maximum 1"},
		{"shocktube", map[string]string{"limiter": "mc"}, `"mc" is not one of minmod, vanleer`},
		{"shocktube", map[string]string{"nx": "2"}, "parameter nx"},
		{"vortex", nil, "its command uses {test}, which is no parameter of case vortex"},
		{"nowhere", nil, "unknown case"},
	} {
		_, err := Resolve(heron(t), tc.cas, tc.kv)
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s %v: %v, want %q", tc.cas, tc.kv, err, tc.want)
		}
	}
	m := heron(t)
	m.Params[1].Name = "test"
	if _, err := Resolve(m, "shocktube", nil); err == nil || !strings.Contains(err.Error(), "also a parameter of case shocktube") {
		t.Errorf("clash: %v", err)
	}
}
