// Package report gathers the results of a sweep into convergence tables,
// per study and per parameter group, and writes them with their plots, the
// spec, the failures and the machine into one self-contained HTML file.
//
// The table model (Study, Group, GridRow, FunctionalGCI, Failure) is plain
// data with JSON tags, built by Build from jobs and outcomes alone, so that a
// live status page can build it from a running sweep and render it with
// WriteTables. Cases with an exact solution are judged by their error norms
// and observed orders; functionals of the solution (the only measure when
// there is no exact solution) by the grid convergence index of Celik et al.
// 2008 (verify.GCI).
package report

import (
	"fmt"
	"maps"
	"math"
	"slices"
	"sort"
	"strconv"
	"strings"

	"fvsweep/fv2d"
	"fvsweep/sweep/job"
	"fvsweep/sweep/spec"
	"fvsweep/sweep/verify"
)

// GridRow is one grid of a convergence table.
type GridRow struct {
	JobID  string  `json:"job_id"`
	NX     int     `json:"nx"`
	NY     int     `json:"ny"`
	H      float64 `json:"h"`      // (X1 - X0) / nx
	Status string  `json:"status"` // done | failed | pending
	// Err is the chosen norm of the chosen variable, NaN when there is none
	// (not done yet, failed, or the case has no exact solution).
	Err float64 `json:"err"`
	// Order is the observed order between this grid and the next coarser
	// one, NaN on the coarsest grid or where either error is missing.
	Order float64 `json:"order"`
	// Phi holds the value of each of Study.Functionals on this grid, NaN
	// where the outcome reports none (not done yet, failed).
	Phi   []float64 `json:"phi"`
	WallS float64   `json:"wall_s"`
	CPUS  float64   `json:"cpu_s"` // wall seconds x threads

	hRep float64 // representative spacing of the GCI (see gciSpacing)
}

// Group is one convergence table: the runs of a study that differ only in
// their grid.
type Group struct {
	Label   string              `json:"label"`  // the parameters that vary between groups of the study, "k=v ..."
	Ident   string              `json:"ident"`  // job.Job.Group: every parameter but the grid
	Params  map[string]string   `json:"params"` // parameters of the coarsest grid's job
	Rows    []GridRow           `json:"rows"`   // coarsest grid first
	Fitted  bool                `json:"fitted"`
	Fit     verify.Fit          `json:"fit"`
	Verdict verify.OrderVerdict `json:"verdict"`
	// GCI is the solution verification of each of Study.Functionals over
	// the group's finished grids, in the order of Study.Functionals.
	GCI []FunctionalGCI `json:"gci,omitempty"`
}

// Study is the convergence tables of one [[study]] of a spec.
type Study struct {
	Index  int     `json:"index"` // 1-based
	Label  string  `json:"label"`
	Case   string  `json:"case"`
	Var    string  `json:"var"`
	Norm   string  `json:"norm"`
	Design float64 `json:"design_order"` // 0: from each group's scheme
	Tol    float64 `json:"order_tol"`
	TolHi  float64 `json:"order_tol_high"`
	// Exact tells whether the case has an exact solution, so that errors
	// and orders exist at all.
	Exact bool `json:"exact"`
	// Functional is the functional the study or Options names, "" if none;
	// Functionals are the ones the tables show: that one, or without one
	// and without an exact solution every functional the case reports.
	Functional  string   `json:"functional,omitempty"`
	Functionals []string `json:"functionals,omitempty"`
	Groups      []Group  `json:"groups"`
	Done        int      `json:"done"`
	Failed      int      `json:"failed"`
	Pending     int      `json:"pending"`
}

// Failure is a job recorded as failed, with its reason.
type Failure struct {
	JobID    string `json:"job_id"`
	Study    int    `json:"study"`
	Params   string `json:"params"` // canonical "k=v ..." of the job
	Attempts int    `json:"attempts"`
	Worker   string `json:"worker"`
	Reason   string `json:"error"`
}

// Options choose what the tables judge. Empty fields take the study's
// setting from the spec, and without a spec the first conserved variable of
// the case, the L1 norm, the design order of the scheme and
// spec.DefaultOrderTol. Functional applies to the studies whose results
// report it; it is an error when no study's results do.
type Options struct {
	Var, Norm  string
	Functional string
}

// Norms are the names Options.Norm accepts.
var Norms = []string{"l1", "l2", "linf"}

func normOf(n job.Norms, name string) float64 {
	switch name {
	case "l1":
		return n.L1
	case "l2":
		return n.L2
	case "linf":
		return n.Linf
	}
	return math.NaN()
}

// Build groups the sweep's jobs into studies and convergence tables and
// collects the failures. spec may be nil (the stored source could not be
// parsed): studies are then formed from the jobs' study indices alone.
// Outcomes are keyed by job ID; a job without one is pending. It is an
// error when o names an unknown norm, or a variable that no outcome of a
// study reports while some report others.
func Build(sp *spec.Spec, jobs []job.Job, outcomes map[string]job.Outcome, o Options) ([]Study, []Failure, error) {
	if o.Norm != "" && !slices.Contains(Norms, o.Norm) {
		return nil, nil, fmt.Errorf("norm %q: want one of %s", o.Norm, strings.Join(Norms, ", "))
	}
	byStudy := map[int][]job.Job{}
	for _, j := range jobs {
		byStudy[j.Study] = append(byStudy[j.Study], j)
	}
	idx := make([]int, 0, len(byStudy))
	for k := range byStudy {
		idx = append(idx, k)
	}
	sort.Ints(idx)
	var studies []Study
	var fails []Failure
	reported := map[string]bool{} // functionals any result reports, for the Options.Functional error
	for _, k := range idx {
		sj := byStudy[k]
		st := Study{Index: k, Case: sj[0].Case, Tol: spec.DefaultOrderTol, TolHi: spec.DefaultOrderTol, Norm: "l1"}
		if sp != nil && k >= 1 && k <= len(sp.Studies) {
			ss := sp.Studies[k-1]
			st.Var, st.Design, st.Tol, st.TolHi, st.Functional = ss.Var, ss.DesignOrder, ss.OrderTol, ss.OrderTolHi, ss.Functional
			if ss.Label != ss.Case {
				st.Label = ss.Label
			}
			if ss.Norm != "" {
				st.Norm = ss.Norm
			}
		}
		if o.Var != "" {
			st.Var = o.Var
		}
		if o.Norm != "" {
			st.Norm = o.Norm
		}
		if st.Var == "" {
			if c, err := fv2d.LookupCase(st.Case); err == nil {
				st.Var = c.Equation().Vars()[0]
			}
		}
		st.chooseFunctionals(sj, outcomes, o.Functional, reported)
		if err := st.fill(sj, outcomes); err != nil {
			return nil, nil, fmt.Errorf("study %d: %w", k, err)
		}
		for _, j := range sj {
			if out, ok := outcomes[j.ID]; ok && out.Status == job.StatusFailed {
				fails = append(fails, Failure{JobID: j.ID, Study: k, Params: canonical(j.Params),
					Attempts: out.Attempts, Worker: out.Worker, Reason: out.Error})
			}
		}
		studies = append(studies, st)
	}
	if f := o.Functional; f != "" && !reported[f] && len(reported) > 0 {
		return nil, nil, fmt.Errorf("functional %q: no result reports it (they report %s)", f,
			strings.Join(slices.Sorted(maps.Keys(reported)), ", "))
	}
	return studies, fails, nil
}

// fill builds the groups of st from its jobs.
func (st *Study) fill(jobs []job.Job, outcomes map[string]job.Outcome) error {
	byGroup := map[string][]job.Job{}
	var order []string
	for _, j := range jobs {
		if _, seen := byGroup[j.Group]; !seen {
			order = append(order, j.Group)
		}
		byGroup[j.Group] = append(byGroup[j.Group], j)
	}
	sort.Strings(order)
	varying := varyingKeys(byGroup)
	seenVar, otherVars := false, map[string]bool{}
	for _, ident := range order {
		gj := byGroup[ident]
		g := Group{Ident: ident}
		for _, j := range gj {
			r := GridRow{JobID: j.ID, NX: atoi(j.Params["nx"]), NY: atoi(j.Params["ny"]),
				Status: "pending", Err: math.NaN(), Order: math.NaN(), Phi: make([]float64, len(st.Functionals))}
			r.H, r.hRep = spacings(j, gj)
			for i := range r.Phi {
				r.Phi[i] = math.NaN()
			}
			if out, ok := outcomes[j.ID]; ok {
				r.Status, r.WallS = string(out.Status), out.WallS
				r.CPUS = out.WallS * math.Max(1, float64(atoi(j.Params["threads"])))
				if out.Status == job.StatusDone {
					if n, ok := out.Errors[st.Var]; ok {
						r.Err = normOf(n, st.Norm)
						seenVar = true
					}
					for i, name := range st.Functionals {
						if v, ok := out.Functionals[name]; ok {
							r.Phi[i] = v
						}
					}
				}
				for v := range out.Errors {
					otherVars[v] = true
				}
			}
			g.Rows = append(g.Rows, r)
		}
		sort.SliceStable(g.Rows, func(a, b int) bool { return g.Rows[a].hRep > g.Rows[b].hRep })
		g.Params = gj[0].Params
		g.Label = label(g.Params, varying, st.Case)
		st.judge(&g)
		for i := range st.Functionals {
			g.GCI = append(g.GCI, st.functionalGCI(&g, i))
		}
		st.Groups = append(st.Groups, g)
		for _, r := range g.Rows {
			switch r.Status {
			case string(job.StatusDone):
				st.Done++
			case string(job.StatusFailed):
				st.Failed++
			default:
				st.Pending++
			}
		}
	}
	if !seenVar && len(otherVars) > 0 {
		names := slices.Sorted(maps.Keys(otherVars))
		return fmt.Errorf("no result reports errors of %q (they report %s)", st.Var, strings.Join(names, ", "))
	}
	return nil
}

// judge fills the observed orders, the least-squares fit and the verdict of
// g from its rows. The verdict's summary leaves out the status, which the
// tables print beside it.
func (st *Study) judge(g *Group) {
	allH, allE := make([]float64, len(g.Rows)), make([]float64, len(g.Rows))
	var hs, es []float64
	for i, r := range g.Rows {
		allH[i], allE[i] = r.H, r.Err
		if r.Err > 0 && !math.IsInf(r.Err, 0) && r.H > 0 {
			hs, es = append(hs, r.H), append(es, r.Err)
		}
	}
	// Order of each grid against the next coarser one (NaN where undefined).
	for i, p := range verify.ObservedOrders(allH, allE) {
		g.Rows[i+1].Order = p
	}
	if fit, err := verify.FitOrder(hs, es); err == nil {
		g.Fit, g.Fitted = fit, true
	}
	design, ok := st.designOrder(g)
	switch {
	case !st.Exact:
		g.Verdict = verify.OrderVerdict{Status: verify.StatusInsufficient, Design: design, Tol: st.Tol,
			Summary: "no exact solution, so no errors to judge; the GCI of the functionals estimates the discretisation error"}
		return
	case !ok:
		g.Verdict = verify.OrderVerdict{Status: verify.StatusInsufficient, Summary: "no design order: set design_order in the study"}
		return
	}
	g.Verdict = verify.VerdictBand(hs, es, design, st.Tol, st.TolHi)
	g.Verdict.Summary = strings.TrimPrefix(g.Verdict.Summary, g.Verdict.Status+": ")
}

// designOrder is the study's design order, else that of the group's scheme.
func (st *Study) designOrder(g *Group) (float64, bool) {
	if st.Design > 0 {
		return st.Design, true
	}
	return verify.DesignOrder(g.Params["scheme"])
}

// problem sets up the case of j; nil when the case or its parameters are
// unknown to this build.
func problem(j job.Job) (*fv2d.Problem, fv2d.Values) {
	v, err := fv2d.Resolve(j.Case, j.Params)
	if err != nil {
		return nil, v
	}
	c, err := fv2d.LookupCase(j.Case)
	if err != nil {
		return nil, v
	}
	p, err := c.Setup(v)
	if err != nil {
		return nil, v
	}
	return p, v
}

// spacings returns the grid spacing of job j in x, (X1 - X0) / nx, and the
// representative spacing that the GCI compares between the grids of its
// group gj: the geometric mean of the spacings of the refined directions,
// (dx dy)^(1/2) when nx and ny both vary within the group (Celik et al.
// 2008, eq. 1, h = (A/N)^(1/2) in 2-D), dx alone when only nx varies (a
// strip refined along its length), dy alone when only ny varies. Both are
// NaN when the case or its parameters are unknown here.
func spacings(j job.Job, gj []job.Job) (h, hRep float64) {
	p, v := problem(j)
	if p == nil || v.Int("nx") <= 0 || v.Int("ny") <= 0 {
		return math.NaN(), math.NaN()
	}
	dx := (p.X1 - p.X0) / float64(v.Int("nx"))
	dy := (p.Y1 - p.Y0) / float64(v.Int("ny"))
	varies := func(k string) bool {
		for _, o := range gj {
			if o.Params[k] != j.Params[k] {
				return true
			}
		}
		return false
	}
	switch vx, vy := varies("nx"), varies("ny"); {
	case vx && vy:
		return dx, math.Sqrt(dx * dy)
	case vy:
		return dx, dy
	}
	return dx, dx
}

// varyingKeys returns the parameters, other than the grid, whose values
// differ between the groups, sorted.
func varyingKeys(groups map[string][]job.Job) []string {
	vals := map[string]map[string]bool{}
	for _, gj := range groups {
		for k, v := range gj[0].Params {
			if vals[k] == nil {
				vals[k] = map[string]bool{}
			}
			vals[k][v] = true
		}
	}
	var keys []string
	for k, vs := range vals {
		if len(vs) > 1 && k != "nx" && k != "ny" {
			keys = append(keys, k)
		}
	}
	sort.Strings(keys)
	return keys
}

func label(params map[string]string, keys []string, fallback string) string {
	if len(keys) == 0 {
		return fallback
	}
	parts := make([]string, len(keys))
	for i, k := range keys {
		parts[i] = k + "=" + params[k]
	}
	return strings.Join(parts, " ")
}

func canonical(params map[string]string) string {
	return label(params, slices.Sorted(maps.Keys(params)), "")
}

func atoi(s string) int { n, _ := strconv.Atoi(s); return n }
