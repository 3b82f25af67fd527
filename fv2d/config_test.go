package fv2d

import (
	"regexp"
	"strings"
	"testing"
)

// Every entry of a method table has a unique name and a one-line doc that
// names its source with a year (the project's rule for published methods),
// and its name selects it.
func TestMethodTables(t *testing.T) {
	year := regexp.MustCompile(`\b(19|20)\d\d\b`)
	check := func(kind string, names []string, docs []string, same func(i int) bool) {
		seen := map[string]bool{}
		for i, n := range names {
			if n == "" || seen[n] {
				t.Errorf("%s %d: name %q empty or repeated", kind, i, n)
			}
			seen[n] = true
			if d := docs[i]; !year.MatchString(d) || strings.Contains(d, "\n") {
				t.Errorf("%s %s: doc %q is not one line naming a dated source", kind, n, d)
			}
			if !same(i) {
				t.Errorf("%s %s: its name selects another function", kind, n)
			}
		}
	}
	// Functions are compared by their values on a few inputs.
	check("limiter", limiters.names(), docsOf(limiters), func(i int) bool {
		f, err := limiters.byName(limiters.list[i].name)
		return err == nil && f(1, 3) == limiters.list[i].fn(1, 3) && f(2, 0.5) == limiters.list[i].fn(2, 0.5)
	})
	check("Burgers flux", burgersFluxes.names(), docsOf(burgersFluxes), func(i int) bool {
		f, err := burgersFluxes.byName(burgersFluxes.list[i].name)
		return err == nil && f(-1, 2) == burgersFluxes.list[i].fn(-1, 2) && f(2, -1) == burgersFluxes.list[i].fn(2, -1)
	})
	check("Euler flux", eulerFluxes.names(), docsOf(eulerFluxes), func(i int) bool {
		f, err := eulerFluxes.byName(eulerFluxes.list[i].name)
		if err != nil {
			return false
		}
		a0, a1, a2, a3 := f(1.4, 1, 0.75, 0.1, 1, 0.125, 0, -0.2, 0.1)
		b0, b1, b2, b3 := eulerFluxes.list[i].fn(1.4, 1, 0.75, 0.1, 1, 0.125, 0, -0.2, 0.1)
		return a0 == b0 && a1 == b1 && a2 == b2 && a3 == b3
	})
}

func docsOf[F any](t methods[F]) []string {
	out := make([]string, len(t.list))
	for i, m := range t.list {
		out[i] = m.doc
	}
	return out
}

// The default of every common parameter is one of its own values (params
// contract, case.go), and the limiter choices are the limiter table.
func TestCommonParamDefaults(t *testing.T) {
	for _, e := range []Equation{Burgers, Euler} {
		for _, p := range CommonParams(e) {
			if err := p.Check(p.Default); err != nil {
				t.Errorf("%v: default: %v", e, err)
			}
			if p.Name == "limiter" && strings.Join(p.Choices, " ") != strings.Join(limiterNames, " ") {
				t.Errorf("%v: limiter choices %v, limiters %v", e, p.Choices, limiterNames)
			}
		}
	}
}

// ConfigFrom reads the resolved common parameters into typed fields.
func TestConfigFrom(t *testing.T) {
	v := resolve(t, "vortex", map[string]string{"nx": "40", "ny": "24", "scheme": "godunov", "split": "lie",
		"recon": "conserved", "alternate": "true", "cfl": "0.5", "threads": "3", "max_steps": "77", "quad": "2",
		"limiter": "superbee", "flux": "roe"})
	c, err := ConfigFrom(v)
	if err != nil {
		t.Fatal(err)
	}
	if c.Eq != Euler || c.NX != 40 || c.NY != 24 || c.Scheme != SchemeGodunov || c.Split != SplitLie ||
		c.Recon != ReconConserved || !c.Alternate || c.CFL != 0.5 || c.Threads != 3 || c.MaxSteps != 77 ||
		c.Quad != 2 || c.TEnd != v.Float("t_end") || c.EulerFlux == nil || c.BurgersFlux != nil {
		t.Errorf("config %+v", c)
	}
	if got, want := c.Limiter(1, 3), Superbee(1, 3); got != want {
		t.Errorf("limiter(1, 3) = %g, superbee %g", got, want)
	}
	f0, _, _, _ := c.EulerFlux(1.4, 1, 0.75, 0.1, 1, 0.125, 0, -0.2, 0.1)
	if r0, _, _, _ := EulerRoe(1.4, 1, 0.75, 0.1, 1, 0.125, 0, -0.2, 0.1); f0 != r0 {
		t.Errorf("flux roe: mass flux %g, EulerRoe %g", f0, r0)
	}
	b, err := ConfigFrom(resolve(t, "burgers-sine", map[string]string{"flux": "rusanov"}))
	if err != nil {
		t.Fatal(err)
	}
	if b.Eq != Burgers || b.Scheme != SchemeMUSCL || b.Split != SplitStrang || b.EulerFlux != nil ||
		b.BurgersFlux == nil || b.BurgersFlux(-1, 2) != BurgersRusanov(-1, 2) {
		t.Errorf("burgers config %+v", b)
	}
	if _, err := ConfigFrom(Values{Case: "no-such-case"}); err == nil {
		t.Error("unknown case accepted")
	}
}
