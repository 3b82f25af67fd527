package fv2d

import (
	"reflect"
	"strings"
	"testing"
)

// resolveOK resolves kv for case name or fails the test.
func resolveOK(t *testing.T, name string, kv map[string]string) Values {
	t.Helper()
	v, err := Resolve(name, kv)
	if err != nil {
		t.Fatalf("Resolve(%s, %v): %v", name, kv, err)
	}
	return v
}

// wantValues fails the test for each key of want that v does not hold.
func wantValues(t *testing.T, v Values, want map[string]string) {
	t.Helper()
	for k, s := range want {
		if got := v.Get(k); got != s {
			t.Errorf("%s: %s = %s, want %s", v, k, got, s)
		}
	}
}

// Resolving shocktube test=N gives test N's states, diaphragm and output
// time, not the defaults (those of test 1): Toro (2009) ch. 4, states and
// times from docs/references.md §1 (recalled from memory).
func TestCompleteShocktube(t *testing.T) {
	for n, want := range map[string]map[string]string{
		"1": {"rho_l": "1", "u_l": "0", "p_l": "1", "rho_r": "0.125", "u_r": "0", "p_r": "0.1", "x0": "0.5", "t_end": "0.25"},
		"2": {"rho_l": "1", "u_l": "-2", "p_l": "0.4", "rho_r": "1", "u_r": "2", "p_r": "0.4", "t_end": "0.15"},
		"3": {"rho_l": "1", "u_l": "0", "p_l": "1000", "rho_r": "1", "u_r": "0", "p_r": "0.01", "x0": "0.5", "t_end": "0.012"},
		"4": {"rho_l": "1", "p_l": "0.01", "rho_r": "1", "p_r": "100", "t_end": "0.035"},
		"5": {"rho_l": "5.99924", "u_l": "19.5975", "p_l": "460.894", "rho_r": "5.99242", "u_r": "-6.19633", "p_r": "46.095", "t_end": "0.035"},
	} {
		v := resolveOK(t, "shocktube", map[string]string{"test": n})
		wantValues(t, v, want)
		p, err := shocktubeCase{}.Setup(v)
		if err != nil {
			t.Fatal(err)
		}
		if p.TEnd != v.Float("t_end") {
			t.Errorf("test=%s: Problem.TEnd = %g, t_end = %s", n, p.TEnd, v.Get("t_end"))
		}
	}
	// An explicit final time is kept; test=0 keeps the explicit states and
	// resolves t_end=0 to its own time, 0.2 (the case's documented choice).
	wantValues(t, resolveOK(t, "shocktube", map[string]string{"test": "3", "t_end": "0.01"}), map[string]string{"t_end": "0.01", "p_l": "1000"})
	wantValues(t, resolveOK(t, "shocktube", map[string]string{"test": "0", "p_l": "2"}),
		map[string]string{"p_l": "2", "rho_r": "0.125", "t_end": "0.2"})
}

// Resolving quadrants config=N gives configuration N's states and output
// time (Lax & Liu 1998, recalled from memory; docs/references.md §8).
func TestCompleteQuadrants(t *testing.T) {
	wantValues(t, resolveOK(t, "quadrants", map[string]string{"config": "6"}), map[string]string{
		"rho_ne": "1", "u_ne": "0.75", "v_ne": "-0.5", "rho_nw": "2", "rho_se": "3", "u_sw": "-0.75", "p_sw": "1", "t_end": "0.3"})
	wantValues(t, resolveOK(t, "quadrants", map[string]string{"config": "12"}), map[string]string{
		"rho_ne": "0.5313", "p_ne": "0.4", "u_nw": "0.7276", "rho_sw": "0.8", "v_se": "0.7276", "t_end": "0.25"})
	wantValues(t, resolveOK(t, "quadrants", map[string]string{"config": "0", "rho_ne": "2"}), map[string]string{
		"rho_ne": "2", "p_sw": "0.029", "t_end": "0.25"})
}

// Explicit states that contradict the preset stay an error; states equal
// to the preset's (the completed values of a run, resolved again by a
// worker) are accepted.
func TestCompleteConflicts(t *testing.T) {
	for _, tc := range []struct {
		name string
		kv   map[string]string
		bad  string // part of the error, "" if it is accepted
	}{
		{"shocktube", map[string]string{"test": "2", "rho_l": "3"}, "rho_l is set together with test=2"},
		{"shocktube", map[string]string{"test": "3", "p_l": "500"}, "p_l is set together with test=3"},
		{"shocktube", map[string]string{"test": "3", "p_l": "1000"}, ""},
		{"shocktube", map[string]string{"test": "3", "rho_r": "0.125"}, ""}, // the default: not given
		{"quadrants", map[string]string{"config": "6", "p_ne": "2"}, "p_ne is set together with config=6"},
		{"quadrants", map[string]string{"config": "6", "rho_se": "3"}, ""},
		{"quadrants", map[string]string{"config": "7"}, "config: 7 is not one of"},
	} {
		_, err := Resolve(tc.name, tc.kv)
		if tc.bad == "" && err != nil {
			t.Errorf("%s %v: %v, want accepted", tc.name, tc.kv, err)
		}
		if tc.bad != "" && (err == nil || !strings.Contains(err.Error(), tc.bad)) {
			t.Errorf("%s %v: %v, want an error with %q", tc.name, tc.kv, err, tc.bad)
		}
	}
}

// Resolving the resolved values of a run again gives the same values, for
// every case and every preset: a worker re-resolves a job's parameters and
// checks that they give the job's ID.
func TestResolveIdempotent(t *testing.T) {
	settings := []map[string]string{nil}
	for _, n := range []string{"0", "1", "2", "3", "4", "5"} {
		settings = append(settings, map[string]string{"test": n})
	}
	for _, n := range []string{"0", "3", "6", "12"} {
		settings = append(settings, map[string]string{"config": n})
	}
	for _, c := range Cases() {
		for _, kv := range settings {
			v, err := Resolve(c.Name(), kv)
			if err != nil {
				if kv == nil {
					t.Errorf("%s: the defaults do not resolve: %v", c.Name(), err)
				}
				continue // a setting of another case
			}
			again := resolveOK(t, c.Name(), v.Map())
			if !reflect.DeepEqual(again.Map(), v.Map()) {
				t.Errorf("%s %v: resolved again\n %s\nwant %s", c.Name(), kv, again, v)
			}
		}
	}
}
