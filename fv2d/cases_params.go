package fv2d

import (
	"fmt"
	"strconv"
)

// Helpers for declaring case parameters.

// floatParam is an unbounded float parameter.
func floatParam(name, def, doc string) Param {
	return Param{Name: name, Kind: Float, Default: def, Min: Unbounded, Max: Unbounded, Doc: doc}
}

// positiveParam is a float parameter that must be > 0.
func positiveParam(name, def, doc string) Param {
	return Param{Name: name, Kind: Float, Default: def, Min: 0, MinOpen: true, Max: Unbounded, Doc: doc}
}

// autoTEnd overrides the common t_end: 0 selects the case's own final time.
func autoTEnd(doc string) Param {
	return Param{Name: "t_end", Kind: Float, Default: "0", Min: 0, Max: Unbounded,
		Doc: "final time; 0 = " + doc}
}

// presetStates is a table of named states (a preset selected by number) that
// can also be given explicitly: the parameter names of the explicit states
// and their defaults (the values of one preset).
type presetStates struct {
	selector string    // "test", "config"
	names    []string  // explicit parameters
	defaults []float64 // their defaults
	// preset returns the states of preset n (nil for n = 0, the explicit
	// states) and its final time.
	preset func(n int) (states []float64, tEnd float64)
}

// params declares the explicit states, docs[i] the meaning of names[i] and
// note (which presets set it) appended to each in parentheses.
func (ps presetStates) params(docs []string, note string) []Param {
	out := make([]Param, len(ps.names))
	for i, n := range ps.names {
		def := strconv.FormatFloat(ps.defaults[i], 'g', -1, 64)
		doc := docs[i] + " (" + note + ")"
		if n[0] == 'r' || n[0] == 'p' { // rho_*, p_*
			out[i] = positiveParam(n, def, doc)
		} else {
			out[i] = floatParam(n, def, doc)
		}
	}
	return out
}

// check rejects explicit states given together with a preset: with
// selector = N != 0, every explicit parameter must keep its default or have
// the value of preset N (as in the completed values of a run, which are
// resolved again by whoever runs it).
func (ps presetStates) check(v Values) error {
	n := v.Int(ps.selector)
	if n == 0 {
		return nil
	}
	preset, _ := ps.preset(n)
	for i, name := range ps.names {
		if x := v.Float(name); x != ps.defaults[i] && (preset == nil || x != preset[i]) {
			return fmt.Errorf("parameter %s is set together with %s=%d: set %s=0 to give the states explicitly",
				name, ps.selector, n, ps.selector)
		}
	}
	return nil
}

// complete returns the parameters that v's preset fixes: the states of
// preset N != 0, and t_end when it is 0 (the preset's own time).
func (ps presetStates) complete(v Values) map[string]string {
	states, tEnd := ps.preset(v.Int(ps.selector))
	out := make(map[string]string, len(states)+1)
	for i, x := range states {
		out[ps.names[i]] = strconv.FormatFloat(x, 'g', -1, 64)
	}
	if v.Float("t_end") == 0 {
		out["t_end"] = strconv.FormatFloat(tEnd, 'g', -1, 64)
	}
	return out
}

// values returns the states of v: explicit or, once completed, the preset's.
func (ps presetStates) values(v Values) []float64 {
	out := make([]float64, len(ps.names))
	for i, n := range ps.names {
		out[i] = v.Float(n)
	}
	return out
}
