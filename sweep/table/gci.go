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
//
// LSQ is the least-squares uncertainty of Eça & Hoekstra 2014 over the same
// grids, for a study that uses it (Study.Uncertainty; by default from four
// grids on), nil otherwise; LSQNote says why a study that asks for it has
// none.
type FunctionalGCI struct {
	Functional string `json:"functional"`
	NX         []int  `json:"nx"` // of each grid in GCIStudy.H, finest first
	NY         []int  `json:"ny"`
	verify.GCIStudy
	Note    string              `json:"note,omitempty"`
	LSQ     *verify.Uncertainty `json:"lsq,omitempty"`
	LSQNote string              `json:"lsq_note,omitempty"`
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

// usesLSQ reports whether st estimates a functional's error on n grids by
// least squares: as the study chooses, by default from four grids on.
func (st *Study) usesLSQ(n int) bool {
	switch st.Uncertainty {
	case job.UncertaintyLSQ:
		return true
	case job.UncertaintyCelik:
		return false
	}
	return n >= 4
}

// functionalGCI estimates the discretisation error of functional k of st
// over the finished grids of g that report it. With two grids the order is
// assumed to be the design order (factor of safety 3). The design order,
// where known, sharpens the warnings and bounds the trusted orders of the
// least-squares uncertainty.
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
	design, known := st.designOrder(g)
	if !known {
		design = 0
	}
	opts := verify.GCIOptions{DesignOrder: design}
	if len(phi) == 2 {
		if !known {
			f.Note = "two finished grids and no design order to assume: set design_order in the study, or add a grid"
			return f
		}
		opts.AssumedOrder = design
	}
	gs, err := verify.GCI(phi, h, opts)
	if err != nil {
		f.Note = err.Error()
		return f
	}
	f.GCIStudy = *gs
	if st.usesLSQ(len(phi)) {
		if u, err := verify.LeastSquaresUncertainty(phi, h, verify.UncertaintyOptions{DesignOrder: design}); err != nil {
			f.LSQNote = "no least-squares uncertainty: " + err.Error()
		} else {
			f.LSQ = u
		}
	}
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
		order := Ptr(r.Order).Format('f', 2)
		if r.OrderAssumed && r.Order != nil {
			order += " (assumed)"
		}
		conv := r.Convergence
		if conv == "" {
			conv = "–"
		}
		rows = append(rows, []string{f.Functional, f.GridNames(r.Grids), fmtG(r.R21, 4), Ptr(r.R32).Format('g', 4), conv, order,
			Ptr(r.Extrapolated).Format('g', 7), Ptr(r.EApprox).Percent(), Ptr(r.EExtrap).Percent(), Ptr(r.GCIFine).Percent(),
			Ptr(r.AsymptoticRatio).Format('g', 3)})
	}
	if ls := f.LeastSquares; ls != nil {
		rows = append(rows, []string{f.Functional, "all " + strconv.Itoa(len(f.H)), "–", "–", "least squares",
			Ptr(ls.Order).Format('f', 2), Ptr(ls.Extrapolated).Format('g', 7), "–", "–", "–", "–"})
	}
	return rows
}

// LSQHeader names the columns of FunctionalGCI.LSQCells.
var LSQHeader = []string{"functional", "grids (nx)", "fit", "order", "extrapolated", "sigma", "Fs", "U", "U/|phi_1|"}

// LSQCaption heads the least-squares table of a group in every format.
const LSQCaption = "Least-squares uncertainty (Eça & Hoekstra 2014) of the finest-grid value over all grids"

// LSQCells returns f's least-squares uncertainty as one display row under
// LSQHeader, nil without one. U/|phi_1| is in percent; a quantity the data
// do not define is "–".
func (f FunctionalGCI) LSQCells() [][]string {
	u := f.LSQ
	if u == nil {
		return nil
	}
	fit := u.Fit
	if u.Weighted {
		fit += " (weighted)"
	}
	return [][]string{{f.Functional, f.GridNames(nil), fit, Ptr(u.Order).Format('f', 2), Ptr(u.Extrapolated).Format('g', 7),
		fmtG(u.Sigma, 3), fmtG(u.SafetyFactor, 3), fmtG(u.UncertaintyAbs, 3), Ptr(u.Uncertainty).Percent()}}
}

// Warnings returns the plausibility warnings of f's records, its
// least-squares order and its least-squares uncertainty, each headed by
// the functional and the grids or the estimate it concerns.
func (f FunctionalGCI) Warnings() []string {
	var out []string
	for _, r := range f.Records {
		out = headed(out, f.Functional+", grids "+f.GridNames(r.Grids), r.Warnings)
	}
	if ls := f.LeastSquares; ls != nil {
		out = headed(out, f.Functional+", least-squares order", ls.Warnings)
	}
	if u := f.LSQ; u != nil {
		out = headed(out, f.Functional+", least-squares uncertainty", u.Warnings)
	}
	return out
}

// headed appends each of lines to out as "head: line".
func headed(out []string, head string, lines []string) []string {
	for _, l := range lines {
		out = append(out, head+": "+l)
	}
	return out
}

// Notes returns the notes of f's records and fit, and the reason for no
// estimate, each headed by the functional and the grids it concerns.
func (f FunctionalGCI) Notes() []string {
	var out []string
	if f.Note != "" {
		out = append(out, f.Functional+": "+f.Note)
	}
	if f.LSQNote != "" {
		out = append(out, f.Functional+": "+f.LSQNote)
	}
	for _, r := range f.Records {
		out = headed(out, f.Functional+", grids "+f.GridNames(r.Grids), r.Notes)
		if r.Convergence == verify.Oscillatory {
			out = append(out, fmt.Sprintf("%s, grids %s: oscillatory convergence (R < 0): the order and the GCI are less certain than for monotone convergence",
				f.Functional, f.GridNames(r.Grids)))
		}
	}
	if ls := f.LeastSquares; ls != nil {
		out = headed(out, f.Functional+", least squares", ls.Notes)
	}
	if u := f.LSQ; u != nil {
		out = headed(out, f.Functional+", least-squares uncertainty", u.Notes)
	}
	return out
}

// Result is the fine-grid value of f with its numerical uncertainty: with
// a least-squares uncertainty phi1 ± U_1 (Eça & Hoekstra 2014), else
// phi1 ± GCI_fine |phi1|, as Celik et al. 2008 ask it to be reported, from
// the record of the finest grids; "" when there is neither.
func (f FunctionalGCI) Result() string {
	if u := f.LSQ; u != nil && len(f.NX) > 0 {
		return fmt.Sprintf("%s on the finest grid (nx %d): %s ± %s (least-squares U, %s; U/|phi_1| %s)",
			f.Functional, f.NX[0], fmtG(u.Phi[0], 7), fmtG(u.UncertaintyAbs, 3), fitName(u), Ptr(u.Uncertainty).Percent())
	}
	if len(f.Records) == 0 || f.Records[0].GCIFine == nil || len(f.NX) == 0 {
		return ""
	}
	r := f.Records[0]
	band := *r.GCIFine * math.Abs(r.Phi[0])
	return fmt.Sprintf("%s on the finest grid (nx %d): %s ± %s (GCI_fine %s)",
		f.Functional, f.NX[0], fmtG(r.Phi[0], 7), fmtG(band, 3), Ptr(r.GCIFine).Percent())
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
// none (NaN: not reported on that grid).
func FormatPhi(v float64) string { return Num(v).Format('g', 7) }

func fmtG(v float64, prec int) string { return strconv.FormatFloat(v, 'g', prec, 64) }

// eachGCI concatenates part of every functional of g, in order.
func eachGCI[T any](g Group, part func(FunctionalGCI) []T) []T {
	var out []T
	for _, f := range g.GCI {
		out = append(out, part(f)...)
	}
	return out
}

// GCICells is Cells of every functional of g, one table under GCIHeader.
func (g Group) GCICells() [][]string { return eachGCI(g, FunctionalGCI.Cells) }

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

// fitName names the fit the least-squares uncertainty u chose.
func fitName(u *verify.Uncertainty) string {
	if u.Fit == verify.FitDataRange {
		return "from the data range"
	}
	s := u.Fit + " fit"
	if u.Weighted {
		s = "weighted " + s
	}
	return s
}

// LSQCells is LSQCells of every functional of g, one table under
// LSQHeader.
func (g Group) LSQCells() [][]string { return eachGCI(g, FunctionalGCI.LSQCells) }

// GCIWarnings is Warnings of every functional of g.
func (g Group) GCIWarnings() []string { return eachGCI(g, FunctionalGCI.Warnings) }

// VerdictWarnings are the plausibility warnings of g's order verdict, each
// headed "order verdict"; none while g waits for grids still to come
// (its verdict is provisional and says so).
func (g Group) VerdictWarnings() []string {
	if g.Waiting() {
		return nil
	}
	out := make([]string, len(g.Verdict.Warnings))
	for i, w := range g.Verdict.Warnings {
		out[i] = "order verdict: " + w
	}
	return out
}

// GCINotes is Notes of every functional of g.
func (g Group) GCINotes() []string { return eachGCI(g, FunctionalGCI.Notes) }
