package spec

import (
	"encoding/json"
	"fmt"
	"io"
	"sort"
	"strconv"
	"strings"
	"text/tabwriter"
)

// planAxis is one axis in the JSON plan.
type planAxis struct {
	Name   string   `json:"name"`
	Values []string `json:"values"`
}

type planStudy struct {
	Index       int               `json:"index"`
	Label       string            `json:"label"`
	Case        string            `json:"case"`
	Fixed       map[string]string `json:"fixed"`
	Axes        []planAxis        `json:"axes"`
	Together    [][]planAxis      `json:"together"`
	Refine      string            `json:"refine"`
	Grid        []planAxis        `json:"grid"` // the refinement axis first, then what varies with it
	Grids       []string          `json:"grids"`
	Runs        int               `json:"runs"`
	Cost        float64           `json:"cost"`  // estimated cell updates
	Share       float64           `json:"share"` // of the sum of all studies' costs
	Snapshot    bool              `json:"snapshot"`
	DesignOrder float64           `json:"design_order"` // 0: from the scheme
	OrderTol    float64           `json:"order_tol"`
	OrderTolHi  float64           `json:"order_tol_high"`
	Var         string            `json:"var"`
	Norm        string            `json:"norm"`
	Functional  string            `json:"functional,omitempty"`
	ExtendTo    int               `json:"extend_to,omitempty"`
	Extension   *planExtension    `json:"extension,omitempty"` // what extend_to may add at most
}

// planExtension is what the grids of refine.extend_to may add at most.
type planExtension struct {
	Grids []int   `json:"grids,omitempty"`
	Jobs  int     `json:"jobs"`
	Cost  float64 `json:"cost"`
}

type planDoc struct {
	Sweep   string      `json:"sweep"`
	File    string      `json:"file"`
	Runs    int         `json:"runs"` // before removing runs shared by studies
	Jobs    int         `json:"jobs"` // distinct runs
	Cost    float64     `json:"cost"` // estimated cell updates of the distinct runs
	Studies []planStudy `json:"studies"`
	// Extension is what the grids of refine.extend_to may add at most.
	Extension *planExtension `json:"extension,omitempty"`
}

func planAxes(as []Axis) []planAxis {
	out := make([]planAxis, 0, len(as))
	for _, a := range as {
		out = append(out, planAxis{Name: a.Name, Values: a.Values})
	}
	return out
}

// WritePlanJSON writes the plan pl as one indented JSON document: the
// sweep, its file, the runs, jobs and cost, and per study its settings,
// axes, grids, runs, cost and share.
func WritePlanJSON(w io.Writer, pl *Plan) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(planJSON(pl))
}

func planJSON(pl *Plan) planDoc {
	doc := planDoc{Sweep: pl.Name, File: pl.File, Runs: pl.Runs, Jobs: pl.Jobs, Cost: pl.Cost}
	for _, sp := range pl.Summary {
		st := sp.Study
		ps := planStudy{Index: st.Index, Label: st.Label, Case: st.Case, Fixed: st.Fixed, Axes: planAxes(st.Axes),
			Together: [][]planAxis{}, Refine: st.Refine, Grid: planAxes(st.Grid), Grids: sp.Grids, Runs: sp.Runs,
			Cost: sp.Cost, Share: sp.Share, Snapshot: st.Snapshot, DesignOrder: st.DesignOrder, OrderTol: st.OrderTol, OrderTolHi: st.OrderTolHi,
			Var: st.Var, Norm: st.Norm, Functional: st.Functional}
		if st.ExtendTo > 0 {
			ps.ExtendTo = st.ExtendTo
			ps.Extension = &planExtension{Grids: sp.Extension.Grids, Jobs: sp.Extension.Jobs, Cost: sp.Extension.Cost}
		}
		if ps.Fixed == nil {
			ps.Fixed = map[string]string{}
		}
		for _, g := range st.Together {
			ps.Together = append(ps.Together, planAxes(g))
		}
		doc.Studies = append(doc.Studies, ps)
	}
	if pl.Extension.Jobs > 0 {
		doc.Extension = &planExtension{Jobs: pl.Extension.Jobs, Cost: pl.Extension.Cost}
	}
	return doc
}

// WritePlan prints the plan pl for a person: one block per study (fixed
// values, crossed and zipped axes, grids, how it is judged, runs and cost),
// then a summary table.
func WritePlan(w io.Writer, pl *Plan) error {
	fmt.Fprintf(w, "sweep %s (%s): %d studies, %d jobs, %.3g cell updates estimated\n", pl.Name, pl.File,
		len(pl.Summary), pl.Jobs, pl.Cost)
	if pl.Description != "" {
		fmt.Fprintf(w, "  %s\n", pl.Description)
	}
	for _, sp := range pl.Summary {
		st := sp.Study
		fmt.Fprintf(w, "\nstudy %d  %s  (case %s)\n", st.Index, st.Label, st.Case)
		tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
		if len(st.Fixed) > 0 {
			fmt.Fprintf(tw, "  fixed\t%s\n", fixedString(st.Fixed))
		}
		for _, a := range st.Axes {
			fmt.Fprintf(tw, "  crossed\t%s: %s\n", a.Name, strings.Join(a.Values, " "))
		}
		for _, g := range st.Together {
			fmt.Fprintf(tw, "  together\t%s\n", togetherString(g))
		}
		if st.Refine != "" {
			fmt.Fprintf(tw, "  refine\t%s\n", gridString(st.Grid))
		}
		fmt.Fprintf(tw, "  judged\t%s\n", judgedString(st))
		fmt.Fprintf(tw, "  runs\t%d on %s\n", sp.Runs, strings.Join(sp.Grids, " "))
		fmt.Fprintf(tw, "  cost\t%.3g cell updates (%.1f %%)\n", sp.Cost, 100*sp.Share)
		if x := sp.Extension; len(x.Grids) > 0 {
			fmt.Fprintf(tw, "  extend\t%s %s while the order has not settled: at most %d more jobs, %.3g cell updates\n",
				st.Refine, intsString(x.Grids), x.Jobs, x.Cost)
		}
		tw.Flush()
	}
	fmt.Fprintln(w)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "study\tlabel\tcase\t  runs\t     cost\t  share")
	for _, sp := range pl.Summary {
		fmt.Fprintf(tw, "%d\t%s\t%s\t%6d\t%9.3g\t%5.1f %%\n", sp.Study.Index, sp.Study.Label, sp.Study.Case, sp.Runs, sp.Cost, 100*sp.Share)
	}
	fmt.Fprintf(tw, "total\t\t\t%6d\t%9.3g\t\n", pl.Jobs, pl.Cost)
	tw.Flush()
	if shared := pl.Runs - pl.Jobs; shared > 0 {
		fmt.Fprintf(w, "%d runs are shared by two or more studies and run once: %d runs, %d jobs\n", shared, pl.Runs, pl.Jobs)
	}
	return WriteExtension(w, pl)
}

// WriteExtension says, for a plan whose studies may add grids
// (refine.extend_to), what those grids may cost at most: every group
// refined up to its limit. It writes nothing for a plan without them.
func WriteExtension(w io.Writer, pl *Plan) error {
	if pl.Extension.Jobs == 0 {
		return nil
	}
	_, err := fmt.Fprintf(w, "grids added until the order settles may cost at most %d more jobs, %.3g cell updates (%.3g x the planned %.3g)\n",
		pl.Extension.Jobs, pl.Extension.Cost, pl.Extension.Cost/pl.Cost, pl.Cost)
	return err
}

func intsString(n []int) string {
	s := make([]string, len(n))
	for i, k := range n {
		s[i] = strconv.Itoa(k)
	}
	return strings.Join(s, " ")
}

func fixedString(m map[string]string) string {
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	for i, k := range keys {
		keys[i] = k + "=" + m[k]
	}
	return strings.Join(keys, " ")
}

// togetherString shows a group as its tuples: "flux, cfl: (hll, 0.5) (hllc, 0.9)".
func togetherString(g []Axis) string {
	names := make([]string, len(g))
	for i, a := range g {
		names[i] = a.Name
	}
	var tuples []string
	for i := range g[0].Values {
		vals := make([]string, len(g))
		for k, a := range g {
			vals[k] = a.Values[i]
		}
		tuples = append(tuples, "("+strings.Join(vals, ", ")+")")
	}
	return strings.Join(names, ", ") + ": " + strings.Join(tuples, " ")
}

func gridString(grid []Axis) string {
	s := grid[0].Name + ": " + strings.Join(grid[0].Values, " ")
	for _, a := range grid[1:] {
		if a.Follows != "" {
			s += fmt.Sprintf(" (%s follows %s)", a.Name, a.Follows)
		} else {
			s += fmt.Sprintf(", with %s: %s", a.Name, strings.Join(a.Values, " "))
		}
	}
	return s
}

func judgedString(st *Study) string {
	s := st.Var + " " + st.Norm
	if st.Functional != "" {
		s += ", functional " + st.Functional
	}
	if st.DesignOrder > 0 {
		s += fmt.Sprintf(", design order %g", st.DesignOrder)
	} else {
		s += ", design order of the scheme"
	}
	if st.OrderTolHi != st.OrderTol {
		s += fmt.Sprintf(" -%g/+%g", st.OrderTol, st.OrderTolHi)
	} else {
		s += fmt.Sprintf(" ± %g", st.OrderTol)
	}
	if st.Snapshot {
		s += ", final fields kept"
	}
	return s
}
