package table

import (
	"math"
	"reflect"
	"strings"
	"testing"

	"fvsweep/sweep/job"
	"fvsweep/sweep/spec"
	"fvsweep/sweep/verify"
)

// functionalSweep parses src, expands it and gives every job a finished
// outcome whose functionals are phi(job) (nil: none reported).
func functionalSweep(t *testing.T, src string, phi func(j job.Job) map[string]float64) (*spec.Spec, []job.Job, map[string]job.Outcome) {
	t.Helper()
	sp, jobs := parseExpand(t, "gci.toml", src)
	outs := map[string]job.Outcome{}
	for _, j := range jobs {
		outs[j.ID] = job.Outcome{JobID: j.ID, Sweep: "gci", Status: job.StatusDone, Attempts: 1, WallS: 0.01,
			Functionals: phi(j)}
	}
	return sp, jobs, outs
}

// The worked example of I. B. Celik et al., "Procedure for Estimation and
// Reporting of Uncertainty Due to Discretization in CFD Applications",
// J. Fluids Eng. 130(7) 078001, 2008, Table 1, first column (values
// recalled from memory, docs/references.md §5): 2-D grids of 18000, 8000 and
// 4500 cells. On the unit square of the quadrants case, nx x ny = 180 x 100,
// 100 x 80 and 90 x 50 give exactly those cell counts, and the tables'
// representative spacing (dx dy)^(1/2) is Celik's h = (1/N)^(1/2). The
// ratios of nx alone (1.8, 1.11) differ from r21 = 1.5, r32 = 1.333, so the
// test also checks that the spacing counts both directions.
const celikSpec = `name = "celik"
[[study]]
case = "quadrants"
fixed = { config = 3 }
refine = { nx = [90, 100, 180], ny = [50, 80, 100] }
functional = "entropy"
`

var celikPhi = map[int]float64{18000: 6.063, 8000: 5.972, 4500: 5.863}

func celikOutcomes(t *testing.T) (*spec.Spec, []job.Job, map[string]job.Outcome) {
	return functionalSweep(t, celikSpec, func(j job.Job) map[string]float64 {
		n := atoi(j.Params["nx"]) * atoi(j.Params["ny"])
		// The case's other functionals are reported too; only entropy is shown.
		return map[string]float64{"entropy": celikPhi[n], "rho_max": 1}
	})
}

func TestBuildFunctionalGCICelik(t *testing.T) {
	sp, jobs, outs := celikOutcomes(t)
	studies, _, err := Build(sp.Settings(), jobs, outs, Options{})
	if err != nil {
		t.Fatal(err)
	}
	st := studies[0]
	if st.Exact || st.Functional != "entropy" || !reflect.DeepEqual(st.Functionals, []string{"entropy"}) {
		t.Fatalf("study: exact %v functional %q functionals %v", st.Exact, st.Functional, st.Functionals)
	}
	g := st.Groups[0]
	for i, want := range []float64{5.863, 5.972, 6.063} { // coarsest grid first
		if r := g.Rows[i]; len(r.Phi) != 1 || r.Phi[0] != want {
			t.Errorf("row %d (nx %d): phi %v, want [%g]", i, r.NX, r.Phi, want)
		}
	}
	if len(g.GCI) != 1 {
		t.Fatalf("%d GCI entries, want 1", len(g.GCI))
	}
	f := g.GCI[0]
	if f.Functional != "entropy" || !reflect.DeepEqual(f.NX, []int{180, 100, 90}) || !reflect.DeepEqual(f.NY, []int{100, 80, 50}) || len(f.Records) != 1 || f.LeastSquares != nil {
		t.Fatalf("GCI entry %+v", f)
	}
	// Against verify.GCI on the same values and h = (1/N)^(1/2): the same
	// record, up to the rounding of h computed as (dx dy)^(1/2).
	h, err := verify.SpacingsFromCells([]float64{18000, 8000, 4500}, 2)
	if err != nil {
		t.Fatal(err)
	}
	ref, err := verify.GCI([]float64{6.063, 5.972, 5.863}, h, verify.GCIOptions{})
	if err != nil {
		t.Fatal(err)
	}
	got, want := f.Records[0], ref.Records[0]
	if got.Convergence != verify.Monotone || want.Convergence != verify.Monotone || got.SafetyFactor != 1.25 || len(got.Notes) != 0 {
		t.Errorf("record: convergence %q, Fs %g, notes %v", got.Convergence, got.SafetyFactor, got.Notes)
	}
	for _, q := range []struct {
		name      string
		got, want *float64
	}{
		{"order", got.Order, want.Order}, {"extrapolated", got.Extrapolated, want.Extrapolated},
		{"e_approx", got.EApprox, want.EApprox}, {"e_extrap", got.EExtrap, want.EExtrap},
		{"gci_fine", got.GCIFine, want.GCIFine}, {"asymptotic_ratio", got.AsymptoticRatio, want.AsymptoticRatio},
		{"r32", got.R32, want.R32}, {"r21", &got.R21, &want.R21},
	} {
		if q.got == nil || q.want == nil || math.Abs(*q.got-*q.want) > 1e-12*math.Abs(*q.want) {
			t.Errorf("%s: tables %v, verify.GCI %v", q.name, deref(q.got), deref(q.want))
		}
	}
	// And the digits printed by Celik et al. 2008: p = 1.53, phi_ext = 6.1685,
	// e_a = 1.5 %, e_ext = 1.7 %, GCI_fine = 2.2 %, r21 = 1.5, r32 = 1.333.
	for _, q := range []struct {
		name      string
		got       *float64
		want, tol float64
	}{
		{"r21", &got.R21, 1.5, 5e-4}, {"r32", got.R32, 1.333, 5e-4},
		{"order", got.Order, 1.53, 5e-3}, {"extrapolated", got.Extrapolated, 6.1685, 5e-5},
		{"e_approx", got.EApprox, 0.015, 5e-4}, {"e_extrap", got.EExtrap, 0.017, 5e-4},
		{"gci_fine", got.GCIFine, 0.022, 5e-4},
	} {
		if q.got == nil || math.Abs(*q.got-q.want) > q.tol {
			t.Errorf("%s = %v, Celik et al. 2008 print %g", q.name, deref(q.got), q.want)
		}
	}
	// The display cells carry the same numbers, errors in percent.
	cells := g.GCICells()
	want1 := []string{"entropy", "180/100/90", "1.5", "1.333", "monotone", "1.53", "6.168" /* prefix */, "1.5 %", "1.71 %", "2.17 %"}
	if len(cells) != 1 || len(cells[0]) != len(GCIHeader) {
		t.Fatalf("cells %v", cells)
	}
	for i, w := range want1 {
		if !strings.HasPrefix(cells[0][i], w) {
			t.Errorf("cell %s = %q, want %q", GCIHeader[i], cells[0][i], w)
		}
	}
	// No exact solution: no error verdict, and the summary says why.
	if g.Verdict.Status != verify.StatusInsufficient || !strings.Contains(g.Verdict.Summary, "no exact solution") {
		t.Errorf("verdict %+v", g.Verdict)
	}
}

func deref(p *float64) any {
	if p == nil {
		return nil
	}
	return *p
}

// Four grids with non-integer, unequal refinement ratios: one record per
// successive triple and the least-squares fit, each the same as verify.GCI
// over the grids' actual spacings. phi = 1 + 0.3 h^1.5 exactly, so every
// triple shows order 1.5 (law: Richardson's model phi = phi_0 + C h^p) and
// extrapolates to 1.
func TestBuildFunctionalGCIFourGrids(t *testing.T) {
	const src = `name = "four"
[[study]]
case = "quadrants"
refine = { nx = [40, 60, 90, 150] }
functional = "rho_max"
`
	sp, jobs, outs := functionalSweep(t, src, func(j job.Job) map[string]float64 {
		h := 1 / float64(atoi(j.Params["nx"]))
		return map[string]float64{"rho_max": 1 + 0.3*math.Pow(h, 1.5)}
	})
	studies, _, err := Build(sp.Settings(), jobs, outs, Options{})
	if err != nil {
		t.Fatal(err)
	}
	f := studies[0].Groups[0].GCI[0]
	if len(f.Records) != 2 || f.LeastSquares == nil || !reflect.DeepEqual(f.NX, []int{150, 90, 60, 40}) {
		t.Fatalf("GCI %+v", f)
	}
	hs := []float64{1.0 / 150, 1.0 / 90, 1.0 / 60, 1.0 / 40}
	phi := make([]float64, 4)
	for i, h := range hs {
		phi[i] = 1 + 0.3*math.Pow(h, 1.5)
	}
	ref, err := verify.GCI(phi, hs, verify.GCIOptions{})
	if err != nil {
		t.Fatal(err)
	}
	for i, r := range f.Records {
		w := ref.Records[i]
		if !reflect.DeepEqual(r.Grids, w.Grids) || math.Abs(*r.Order-*w.Order) > 1e-9 || math.Abs(*r.Order-1.5) > 1e-6 ||
			math.Abs(*r.Extrapolated-1) > 1e-9 || math.Abs(r.R21-w.R21) > 1e-12 {
			t.Errorf("record %d: grids %v order %v ext %v r21 %g; verify.GCI grids %v order %v r21 %g",
				i, r.Grids, *r.Order, *r.Extrapolated, r.R21, w.Grids, *w.Order, w.R21)
		}
	}
	if r := f.Records[0]; math.Abs(r.R21-5.0/3) > 1e-12 || math.Abs(*r.R32-1.5) > 1e-12 {
		t.Errorf("ratios of grids 150/90/60: r21 %g r32 %g, want 5/3 and 3/2", r.R21, *r.R32)
	}
	if ls := f.LeastSquares; ls.Order == nil || math.Abs(*ls.Order-1.5) > 1e-6 {
		t.Errorf("least squares %+v", ls)
	}
	cells := studies[0].Groups[0].GCICells()
	if len(cells) != 3 || cells[2][1] != "all 4" || cells[2][4] != "least squares" || cells[0][1] != "150/90/60" || cells[1][1] != "90/60/40" {
		t.Errorf("cells %v", cells)
	}
}

// Without a functional named and without an exact solution, the tables
// show every functional the results report, in the case's order; Options.Functional picks one, and
// is an error when no result reports it. A case with an exact solution and
// no functional shows none.
func TestBuildFunctionalChoice(t *testing.T) {
	const src = `name = "choice"
[[study]]
case = "quadrants"
refine = { nx = [20, 40] }

[[study]]
case = "vortex"
fixed = { t_end = 0.5 }
design_order = 2
refine = { nx = [16, 32] }
`
	sp, jobs, outs := functionalSweep(t, src, func(j job.Job) map[string]float64 {
		n := float64(atoi(j.Params["nx"]))
		if j.Case == "vortex" {
			return map[string]float64{"entropy": -1 / n, "rho_min": 0.5}
		}
		return map[string]float64{"entropy": -1 - 1/n, "rho_max": 2 - 1/n} // rho_centre not reported
	})
	for id, o := range outs { // the vortex has an exact solution: give it errors
		if j := jobOf(jobs, id); j.Case == "vortex" {
			o.Errors = map[string]job.Norms{"rho": {L1: 1 / float64(atoi(j.Params["nx"])), L2: 1, Linf: 1}}
			outs[id] = o
		}
	}
	studies, _, err := Build(sp.Settings(), jobs, outs, Options{})
	if err != nil {
		t.Fatal(err)
	}
	q, v := studies[0], studies[1]
	if q.Exact || !reflect.DeepEqual(q.Functionals, []string{"entropy", "rho_max"}) || len(q.Groups[0].GCI) != 2 {
		t.Errorf("quadrants: exact %v functionals %v", q.Exact, q.Functionals)
	}
	// Two grids: the order is assumed (the design order of muscl, 2) and
	// Fs = 3 (Roache 1998, recalled from memory).
	if r := q.Groups[0].GCI[0].Records[0]; !r.OrderAssumed || *r.Order != 2 || r.SafetyFactor != 3 {
		t.Errorf("two grids: %+v", r)
	}
	if !v.Exact || v.Functionals != nil || v.Groups[0].GCI != nil {
		t.Errorf("vortex: exact %v functionals %v", v.Exact, v.Functionals)
	}
	// The verdict's summary does not repeat its status.
	if vd := v.Groups[0].Verdict; vd.Status != verify.StatusLow || strings.HasPrefix(vd.Summary, vd.Status) || !strings.HasPrefix(vd.Summary, "finest-pair order 1") {
		t.Errorf("vortex verdict %+v", vd)
	}
	studies, _, err = Build(sp.Settings(), jobs, outs, Options{Functional: "rho_min"})
	if err != nil {
		t.Fatal(err)
	}
	if q, v := studies[0], studies[1]; len(q.Functionals) != 2 || !reflect.DeepEqual(v.Functionals, []string{"rho_min"}) || len(v.Groups[0].GCI) != 1 {
		t.Errorf("--functional rho_min: quadrants %v, vortex %v", q.Functionals, v.Functionals)
	}
	if _, _, err := Build(sp.Settings(), jobs, outs, Options{Functional: "lift"}); err == nil || !strings.Contains(err.Error(), `"lift"`) || !strings.Contains(err.Error(), "rho_max") {
		t.Errorf("unknown functional: %v", err)
	}
}

func jobOf(jobs []job.Job, id string) job.Job {
	for _, j := range jobs {
		if j.ID == id {
			return j
		}
	}
	return job.Job{}
}

// A functional that is missing on a grid, or too few grids, is a note,
// not a failure of the tables.
func TestBuildFunctionalGCINotes(t *testing.T) {
	sp, jobs, outs := celikOutcomes(t)
	for id, o := range outs {
		if j := jobOf(jobs, id); j.Params["nx"] != "180" {
			o.Status, o.Functionals, o.Error = job.StatusFailed, nil, "diverged"
			outs[id] = o
		}
	}
	studies, _, err := Build(sp.Settings(), jobs, outs, Options{})
	if err != nil {
		t.Fatal(err)
	}
	f := studies[0].Groups[0].GCI[0]
	if len(f.Records) != 0 || !strings.Contains(f.Note, "1 finished grid") || len(f.Notes()) != 1 {
		t.Errorf("one grid: %+v, notes %v", f, f.Notes())
	}
}

// The HTML tables show the functional per grid and the GCI record in the
// same cells as the text tables, and no error columns without an exact
// solution.
func TestWriteTablesGCI(t *testing.T) {
	sp, jobs, outs := celikOutcomes(t)
	studies, _, err := Build(sp.Settings(), jobs, outs, Options{})
	if err != nil {
		t.Fatal(err)
	}
	var b strings.Builder
	if err := WriteHTML(&b, studies); err != nil {
		t.Fatal(err)
	}
	html := b.String()
	for _, want := range []string{"<th>entropy</th>", "<td>6.063</td>", "<th>GCI_fine</th>", `<td class="t">monotone</td>`,
		"<td>1.53</td>", "<td>2.17 %</td>", "No exact solution", "Celik et al. 2008",
		"<p>entropy on the finest grid (nx 180): 6.063 ± 0.132 (GCI_fine 2.17 %)</p>"} {
		if !strings.Contains(html, want) {
			t.Errorf("tables lack %q:\n%s", want, html)
		}
	}
	for _, bad := range []string{"observed order", "Verdict:"} {
		if strings.Contains(html, bad) {
			t.Errorf("tables of a case without exact solution show %q", bad)
		}
	}
}

// parseExpand parses the spec src and expands it into its jobs.
func parseExpand(t *testing.T, file, src string) (*spec.Spec, []job.Job) {
	t.Helper()
	sp, err := spec.LoadSource(file, []byte(src), spec.Limits{})
	if err != nil {
		t.Fatal(err)
	}
	jobs, err := sp.Expand()
	if err != nil {
		t.Fatal(err)
	}
	return sp.Spec, jobs
}
