package table

import (
	"fmt"
	"maps"
	"math"
	"slices"
	"strconv"
	"strings"

	"fvsweep/sweep/job"
	"fvsweep/sweep/verify"
)

// FunctionalGCI is the solution verification of one functional over the
// finished grids of a group: verify.GCI of the functional's values against
// the grids' representative spacings (the refinement ratios come from the
// actual spacings, so they need not be 2 nor integers). The embedded
// GCIStudy lists the grids finest first, one record per successive triple
// (or the one pair of a two-grid group, with the design order assumed) and,
// from four grids on, the least-squares fit; its records carry the keys of
// `fvsweep gci --json`. Records is empty and Note says why when no estimate
// can be made.
type FunctionalGCI struct {
	Functional string `json:"functional"`
	NX         []int  `json:"nx"` // of each grid in GCIStudy.H, finest first
	NY         []int  `json:"ny"`
	verify.GCIStudy
	Note string `json:"note,omitempty"`
}

// chooseFunctionals sets st.Functional and st.Functionals, and st.Exact,
// from the study's jobs and their outcomes. opt is Options.Functional; the
// names of the functionals the study's results report are added to
// reported.
func (st *Study) chooseFunctionals(jobs []job.Job, outcomes map[string]job.Outcome, opt string, reported map[string]bool) {
	here := map[string]bool{}
	withErrors := false
	for _, j := range jobs {
		if out, ok := outcomes[j.ID]; ok && out.Status == job.StatusDone {
			for name := range out.Functionals {
				here[name], reported[name] = true, true
			}
			withErrors = withErrors || len(out.Errors) > 0
		}
	}
	var declared []string
	p, _ := problem(jobs[0])
	if p != nil {
		st.Exact = p.Exact != nil
		for _, f := range p.Functionals {
			declared = append(declared, f.Name)
		}
	} else {
		st.Exact = withErrors // a case this build does not know: judge by the data
	}
	if opt != "" && (here[opt] || len(here) == 0 && slices.Contains(declared, opt)) {
		st.Functional = opt
	}
	switch {
	case st.Functional != "":
		st.Functionals = []string{st.Functional}
	case !st.Exact:
		// No exact solution and no functional named: every functional the
		// results report (before any is done, that the case declares), in
		// the case's order.
		for _, name := range declared {
			if here[name] || len(here) == 0 {
				st.Functionals = append(st.Functionals, name)
			}
		}
		for _, name := range slices.Sorted(maps.Keys(here)) {
			if !slices.Contains(st.Functionals, name) {
				st.Functionals = append(st.Functionals, name)
			}
		}
	}
}

// functionalGCI estimates the discretisation error of functional k of st
// over the finished grids of g that report it. With two grids the order is
// assumed to be the design order (factor of safety 3).
func (st *Study) functionalGCI(g *Group, k int) FunctionalGCI {
	f := FunctionalGCI{Functional: st.Functionals[k]}
	var phi, h []float64
	var nx, ny []int
	for _, r := range g.Rows {
		if v := r.Phi[k]; r.Status == string(job.StatusDone) && !math.IsNaN(v) && !math.IsInf(v, 0) && r.hRep > 0 {
			phi, h = append(phi, v), append(h, r.hRep)
			nx, ny = append(nx, r.NX), append(ny, r.NY)
		}
	}
	if len(phi) < 2 {
		f.Note = fmt.Sprintf("%d finished grid(s) with a value of %s; the GCI needs at least 2 (3 for an observed order)", len(phi), f.Functional)
		return f
	}
	var opts verify.GCIOptions
	if len(phi) == 2 {
		p, ok := st.designOrder(g)
		if !ok {
			f.Note = "two finished grids and no design order to assume: set design_order in the study, or add a grid"
			return f
		}
		opts.AssumedOrder = p
	}
	gs, err := verify.GCI(phi, h, opts)
	if err != nil {
		f.Note = err.Error()
		return f
	}
	f.GCIStudy = *gs
	// GCI sorts finest first; the rows run coarsest first with distinct h.
	slices.Reverse(nx)
	slices.Reverse(ny)
	f.NX, f.NY = nx, ny
	return f
}

// GCIHeader names the columns of FunctionalGCI.Cells.
var GCIHeader = []string{"functional", "grids (nx)", "r21", "r32", "convergence", "order", "extrapolated", "e_a", "e_ext", "GCI_fine", "asym. ratio"}

// Cells returns the GCI records of f as display cells under GCIHeader: one
// row per record, then one for the least-squares fit over four or more
// grids. Relative errors and the GCI are in percent; a quantity the data do
// not define is "–".
func (f FunctionalGCI) Cells() [][]string {
	var rows [][]string
	for _, r := range f.Records {
		order := fmtPtr(r.Order, 'f', 2, 1)
		if r.OrderAssumed && r.Order != nil {
			order += " (assumed)"
		}
		conv := r.Convergence
		if conv == "" {
			conv = "–"
		}
		rows = append(rows, []string{f.Functional, f.GridNames(r.Grids), fmtG(r.R21, 4), fmtPtr(r.R32, 'g', 4, 1), conv, order,
			fmtPtr(r.Extrapolated, 'g', 7, 1), pct(r.EApprox), pct(r.EExtrap), pct(r.GCIFine), fmtPtr(r.AsymptoticRatio, 'g', 3, 1)})
	}
	if ls := f.LeastSquares; ls != nil {
		rows = append(rows, []string{f.Functional, "all " + strconv.Itoa(len(f.H)), "–", "–", "least squares",
			fmtPtr(ls.Order, 'f', 2, 1), fmtPtr(ls.Extrapolated, 'g', 7, 1), "–", "–", "–", "–"})
	}
	return rows
}

// Notes returns the notes of f's records and fit, and the reason for no
// estimate, each headed by the functional and the grids it concerns.
func (f FunctionalGCI) Notes() []string {
	var out []string
	if f.Note != "" {
		out = append(out, f.Functional+": "+f.Note)
	}
	for _, r := range f.Records {
		for _, n := range r.Notes {
			out = append(out, fmt.Sprintf("%s, grids %s: %s", f.Functional, f.GridNames(r.Grids), n))
		}
		if r.Convergence == verify.Oscillatory {
			out = append(out, fmt.Sprintf("%s, grids %s: oscillatory convergence (R < 0): the order and the GCI are less certain than for monotone convergence",
				f.Functional, f.GridNames(r.Grids)))
		}
	}
	if ls := f.LeastSquares; ls != nil {
		for _, n := range ls.Notes {
			out = append(out, fmt.Sprintf("%s, least squares: %s", f.Functional, n))
		}
	}
	return out
}

// Result is the fine-grid value of f with its numerical uncertainty,
// phi1 ± GCI_fine |phi1|, as Celik et al. 2008 ask it to be reported, from
// the record of the finest grids; "" when that record has no GCI.
func (f FunctionalGCI) Result() string {
	if len(f.Records) == 0 || f.Records[0].GCIFine == nil || len(f.NX) == 0 {
		return ""
	}
	r := f.Records[0]
	band := *r.GCIFine * math.Abs(r.Phi[0])
	return fmt.Sprintf("%s on the finest grid (nx %d): %s ± %s (GCI_fine %s)",
		f.Functional, f.NX[0], fmtG(r.Phi[0], 7), fmtG(band, 3), pct(r.GCIFine))
}

// GridNames names the grids idx (indices into GCIStudy.H; nil for all of
// them) by their nx, finest first: "200/100/50".
func (f FunctionalGCI) GridNames(idx []int) string {
	if idx == nil {
		idx = make([]int, len(f.NX))
		for i := range idx {
			idx[i] = i
		}
	}
	parts := make([]string, len(idx))
	for i, k := range idx {
		if k < len(f.NX) {
			parts[i] = strconv.Itoa(f.NX[k])
		}
	}
	return strings.Join(parts, "/")
}

// FormatPhi formats a functional value with 7 significant digits, "–" for
// NaN.
func FormatPhi(v float64) string {
	if math.IsNaN(v) {
		return "–"
	}
	return fmtG(v, 7)
}

func fmtG(v float64, prec int) string { return strconv.FormatFloat(v, 'g', prec, 64) }

// fmtPtr formats *p times scale, "–" for nil.
func fmtPtr(p *float64, f byte, prec int, scale float64) string {
	if p == nil {
		return "–"
	}
	return strconv.FormatFloat(*p*scale, f, prec, 64)
}

// pct formats a fraction as percent with 3 significant digits.
func pct(p *float64) string {
	if p == nil {
		return "–"
	}
	return fmtPtr(p, 'g', 3, 100) + " %"
}

// GCICells is Cells of every functional of g, one table under GCIHeader.
func (g Group) GCICells() [][]string {
	var rows [][]string
	for _, f := range g.GCI {
		rows = append(rows, f.Cells()...)
	}
	return rows
}

// GCIResults is Result of every functional of g that has one.
func (g Group) GCIResults() []string {
	var out []string
	for _, f := range g.GCI {
		if r := f.Result(); r != "" {
			out = append(out, r)
		}
	}
	return out
}

// GCICaption heads the GCI table of a group in every format.
const GCICaption = "GCI (Celik et al. 2008; e_a, e_ext and GCI_fine relative to the finest-grid value)"

// GCINotes is Notes of every functional of g.
func (g Group) GCINotes() []string {
	var out []string
	for _, f := range g.GCI {
		out = append(out, f.Notes()...)
	}
	return out
}
