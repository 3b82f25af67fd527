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
}

func (ps presetStates) params(docs []string) []Param {
	out := make([]Param, len(ps.names))
	for i, n := range ps.names {
		def := strconv.FormatFloat(ps.defaults[i], 'g', -1, 64)
		if n[0] == 'r' || n[0] == 'p' { // rho_*, p_*
			out[i] = positiveParam(n, def, docs[i])
		} else {
			out[i] = floatParam(n, def, docs[i])
		}
	}
	return out
}

// check rejects explicit states given together with a preset: with
// selector = N != 0, every explicit parameter must keep its default.
func (ps presetStates) check(v Values) error {
	if v.Int(ps.selector) == 0 {
		return nil
	}
	for i, n := range ps.names {
		if v.Float(n) != ps.defaults[i] {
			return fmt.Errorf("parameter %s is set together with %s=%d: set %s=0 to give the states explicitly",
				n, ps.selector, v.Int(ps.selector), ps.selector)
		}
	}
	return nil
}

// values returns the explicit states of v, or preset when selector != 0.
func (ps presetStates) values(v Values, preset []float64) []float64 {
	if v.Int(ps.selector) != 0 {
		return preset
	}
	out := make([]float64, len(ps.names))
	for i, n := range ps.names {
		out[i] = v.Float(n)
	}
	return out
}
