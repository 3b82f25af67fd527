package table

import (
	"encoding/json"
	"io"
	"strconv"

	"fvsweep/fv2d"
	"fvsweep/sweep/verify"
)

// The JSON of the model is the one that `fvsweep table --format json`
// prints and the status page reads: numbers a grid or group does not have
// are null; a study's counts are left out (they follow from its rows'
// status).

type studyJSON struct {
	Index       int      `json:"index"`
	Label       string   `json:"label"`
	Case        string   `json:"case"`
	Var         string   `json:"var"`
	Norm        string   `json:"norm"`
	Exact       bool     `json:"exact"`                 // errors and orders exist
	Functionals []string `json:"functionals,omitempty"` // shown, with their GCI
	Groups      []Group  `json:"groups"`
}

type groupJSON struct {
	Label    string              `json:"label"`
	Params   map[string]any      `json:"params"` // numbers and booleans as such
	Rows     []rowJSON           `json:"rows"`
	Fitted   Num                 `json:"fitted_order"`
	FittedSE Num                 `json:"fitted_order_se"`
	Verdict  verify.OrderVerdict `json:"verdict"`
	// GCI holds one entry per functional of the study, its records in the
	// layout of fvsweep gci --json (fractions, not percent).
	GCI []FunctionalGCI `json:"gci,omitempty"`
	// Settle is present for a study that adds grids until the order
	// settles (refine.extend_to).
	Settle *verify.Settling `json:"settle,omitempty"`
}

type rowJSON struct {
	JobID       string         `json:"job_id"`
	NX          int            `json:"nx"`
	NY          int            `json:"ny"`
	H           Num            `json:"h"`
	Status      string         `json:"status"`
	L1          Num            `json:"l1"`
	L2          Num            `json:"l2"`
	Linf        Num            `json:"linf"`
	Order       Num            `json:"order"` // with the next coarser grid, in the study's norm
	Functionals map[string]Num `json:"functionals,omitempty"`
	WallS       float64        `json:"wall_s"`
	Added       string         `json:"added,omitempty"` // why the grid was added to the spec's
}

// MarshalJSON writes the study with its groups.
func (st Study) MarshalJSON() ([]byte, error) {
	return json.Marshal(studyJSON{Index: st.Index, Label: st.Label, Case: st.Case, Var: st.Var, Norm: st.Norm,
		Exact: st.Exact, Functionals: st.Functionals, Groups: st.Groups})
}

// MarshalJSON writes the group with its rows; a functional's value is keyed
// by its name.
func (g Group) MarshalJSON() ([]byte, error) {
	v := groupJSON{Label: g.Label, Params: typedParams(g.Params, g.kinds), Verdict: g.Verdict, GCI: g.GCI, Fitted: none, FittedSE: none, Settle: g.Settle}
	if g.Fitted {
		v.Fitted, v.FittedSE = Num(g.Fit.Order), Num(g.Fit.OrderSE)
	}
	for _, r := range g.Rows {
		rj := rowJSON{JobID: r.JobID, NX: r.NX, NY: r.NY, H: Num(r.H), Status: r.Status,
			L1: Num(r.L1), L2: Num(r.L2), Linf: Num(r.Linf), Order: Num(r.Order), WallS: r.WallS, Added: r.Added}
		if len(r.Phi) > 0 {
			rj.Functionals = map[string]Num{}
			for i, name := range g.functionals {
				rj.Functionals[name] = Num(r.Phi[i])
			}
		}
		v.Rows = append(v.Rows, rj)
	}
	return json.Marshal(v)
}

// writeJSON writes s indented by two spaces.
func writeJSON(w io.Writer, s Set) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(s)
}

// paramKinds are the kinds of the parameters of case name; nil for a case
// fv2d does not know (an outside program's), whose values stay strings.
func paramKinds(name string) map[string]fv2d.Kind {
	c, err := fv2d.LookupCase(name)
	if err != nil {
		return nil
	}
	kinds := map[string]fv2d.Kind{}
	for _, p := range fv2d.ParamsOf(c) {
		kinds[p.Name] = p.Kind
	}
	return kinds
}

// typedParams are params for JSON: the values of integer and real
// parameters as numbers, of boolean ones as booleans, the others (and any
// value that does not parse as its kind) as strings.
func typedParams(params map[string]string, kinds map[string]fv2d.Kind) map[string]any {
	out := make(map[string]any, len(params))
	for k, v := range params {
		out[k] = v
		kind, ok := kinds[k]
		if !ok {
			continue
		}
		switch kind {
		case fv2d.Int:
			if n, err := strconv.ParseInt(v, 10, 64); err == nil {
				out[k] = n
			}
		case fv2d.Float:
			if x, err := strconv.ParseFloat(v, 64); err == nil {
				out[k] = x
			}
		case fv2d.Bool:
			if b, err := strconv.ParseBool(v); err == nil {
				out[k] = b
			}
		}
	}
	return out
}
