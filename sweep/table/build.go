// Package table is the one model of a sweep's results and its writers: the
// runs of each study grouped by every parameter but the grid, per grid the
// spacing, the error norms, the observed order against the next coarser grid
// and the functionals, per group the fitted order, the verdict and the grid
// convergence index of each functional, and the failed jobs; written as
// text, markdown, CSV, JSON (the same JSON for the CLI and the status page)
// and the HTML the report and the status page embed.
//
// Build makes the model from jobs, outcomes and the studies' settings alone,
// so that a live status page can build it from a running sweep. Cases with
// an exact solution are judged by their error norms and observed orders;
// functionals of the solution (the only measure when there is no exact
// solution) by the grid convergence index of Celik et al. 2008
// (verify.GCI) and, from four grids on or where the study asks for it, the
// least-squares uncertainty of Eça & Hoekstra 2014
// (verify.LeastSquaresUncertainty). The maths is package verify's; this
// package only arranges its inputs and results, and the writers print the
// plausibility warnings of verify under the records they concern.
package table

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
	"fvsweep/sweep/verify"
)

// GridRow is one grid of a convergence table. A number the grid does not
// have (not done yet, failed, no exact solution, undefined) is NaN.
type GridRow struct {
	JobID  string
	NX, NY int
	H      float64 // (X1 - X0) / nx
	Status string  // done | failed | pending
	// L1, L2 and Linf are the error norms of the study's variable; Err is
	// the one of the study's norm.
	L1, L2, Linf float64
	Err          float64
	// Order is the observed order between this grid and the next coarser
	// one, NaN on the coarsest grid or where either error is missing.
	Order float64
	// Phi holds the value of each of Study.Functionals on this grid.
	Phi   []float64
	WallS float64
	// CPUS is the CPU time of the solving threads (the outcome's cpu_s);
	// for an outcome that lacks it, wall seconds x threads, and CPUFromWall
	// says so.
	CPUS        float64
	CPUFromWall bool
	// Work is the cells updated, nx x ny x steps: the deterministic cost.
	Work float64
	// Added says why the grid was added to the spec's (refine.extend_to):
	// the order had not settled on the grids before it; "" for the spec's.
	Added string

	hRep float64 // representative spacing of the GCI (see gciSpacing)
}

// Group is one convergence table: the runs of a study that differ only in
// their grid.
type Group struct {
	Label   string            // the parameters that vary between groups of the study, "k=v ..."
	Ident   string            // job.Job.Group: every parameter but the grid
	Params  map[string]string // parameters of the coarsest grid's job
	Rows    []GridRow         // coarsest grid first
	Fitted  bool              // Fit holds the least-squares fit over the grids with an error
	Fit     verify.Fit
	Verdict verify.OrderVerdict
	// GCI is the solution verification of each of Study.Functionals over
	// the group's finished grids, in the order of Study.Functionals.
	GCI []FunctionalGCI
	// Settle is whether the order has settled, for a study that adds grids
	// until it does (refine.extend_to); nil otherwise.
	Settle *verify.Settling

	functionals []string             // Study.Functionals, the names of GridRow.Phi
	refine      string               // the refinement axis, for Settle's text
	kinds       map[string]fv2d.Kind // of the case's parameters, for JSON; nil for a case fv2d does not know
}

// Study is the convergence tables of one [[study]] of a spec.
type Study struct {
	Index  int // 1-based
	Label  string
	Case   string
	Var    string
	Norm   string
	Design float64 // 0: from each group's scheme
	Tol    float64
	TolHi  float64
	// Exact tells whether the case has an exact solution, so that errors
	// and orders exist at all.
	Exact bool
	// Functional is the functional the study or Options names, "" if none;
	// Functionals are the ones the tables show: that one, or without one
	// and without an exact solution every functional the case reports.
	Functional  string
	Functionals []string
	// Refine is the refinement axis; ExtendTo and Grids the settings of a
	// study that adds grids (job.StudySettings), 0 and nil otherwise.
	Refine   string
	ExtendTo int
	Grids    []int
	// Informational, ErrorGrowthTol and OrderDropTol are the study's gate
	// settings (job.StudySettings); the writers do not show them.
	Informational  bool
	ErrorGrowthTol float64
	OrderDropTol   float64
	// Uncertainty is the study's choice of estimate for its functionals
	// (job.StudySettings.Uncertainty): job.UncertaintyCelik, UncertaintyLSQ
	// or "" (Celik's GCI up to three grids, least squares from four).
	Uncertainty string
	Groups      []Group
	Done        int
	Failed      int
	Pending     int
}

// Set is the tables of one sweep: what every writer writes.
type Set struct {
	Sweep    string    `json:"sweep"`
	Studies  []Study   `json:"studies"`
	Failures []Failure `json:"failures"`
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
// setting, and without one the first conserved variable of
// the case, the L1 norm, the design order of the scheme and
// verify.DefaultOrderTol. Functional applies to the studies whose results
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
// collects the failures. settings are the studies' settings by index
// (job.Job.Study - 1); a study beyond them (none kept, the stored source did
// not parse) takes the defaults.
// Outcomes are keyed by job ID; a job without one is pending. It is an
// error when o names an unknown norm, or a variable that no outcome of a
// study reports while some report others.
func Build(settings []job.StudySettings, jobs []job.Job, outcomes map[string]job.Outcome, o Options) ([]Study, []Failure, error) {
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
		st := Study{Index: k, Case: sj[0].Case, Tol: verify.DefaultOrderTol, TolHi: verify.DefaultOrderTol, Norm: "l1",
			ErrorGrowthTol: job.DefaultErrorGrowthTol, OrderDropTol: job.DefaultOrderDropTol}
		if k >= 1 && k <= len(settings) {
			ss := settings[k-1]
			st.Var, st.Design, st.Tol, st.TolHi, st.Functional = ss.Var, ss.DesignOrder, ss.OrderTol, ss.OrderTolHi, ss.Functional
			st.Informational, st.ErrorGrowthTol, st.OrderDropTol = ss.Informational, ss.ErrorGrowthTol, ss.OrderDropTol
			if ss.Label != ss.Case {
				st.Label = ss.Label
			}
			if ss.Norm != "" {
				st.Norm = ss.Norm
			}
			st.Refine, st.ExtendTo, st.Grids = ss.Refine, ss.ExtendTo, ss.Grids
			st.Uncertainty = ss.Uncertainty
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
	// A study with an outside program names each group's solver.
	programs := slices.ContainsFunc(jobs, func(j job.Job) bool { return j.Solver != "" })
	kinds := paramKinds(st.Case)
	seenVar, otherVars := false, map[string]bool{}
	for _, ident := range order {
		gj := byGroup[ident]
		g := Group{Ident: ident, functionals: st.Functionals, kinds: kinds}
		for _, j := range gj {
			nan := math.NaN()
			r := GridRow{JobID: j.ID, NX: atoi(j.Params["nx"]), NY: atoi(j.Params["ny"]), Status: "pending",
				L1: nan, L2: nan, Linf: nan, Err: nan, Order: nan, Phi: make([]float64, len(st.Functionals))}
			r.H, r.hRep = spacings(j, gj)
			for i := range r.Phi {
				r.Phi[i] = math.NaN()
			}
			if out, ok := outcomes[j.ID]; ok {
				r.Status, r.WallS = string(out.Status), out.WallS
				r.CPUS = out.CPUS
				if r.CPUS == 0 {
					r.CPUS, r.CPUFromWall = out.WallS*math.Max(1, float64(atoi(j.Params["threads"]))), true
				}
				r.Work = float64(r.NX) * float64(max(1, r.NY)) * float64(out.Steps)
				if out.Status == job.StatusDone {
					if n, ok := out.Errors[st.Var]; ok {
						r.L1, r.L2, r.Linf = n.L1, n.L2, n.Linf
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
		if programs {
			g.Label = gj[0].SolverLabel() + ": " + g.Label
		}
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
	if st.ExtendTo > 0 {
		st.settle(g)
	}
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

// HasErrors reports whether any grid of st has an error.
func (st *Study) HasErrors() bool {
	for _, g := range st.Groups {
		for _, r := range g.Rows {
			if !math.IsNaN(r.Err) {
				return true
			}
		}
	}
	return false
}
