package main

import (
	"fmt"
	"io"
	"math"
	"runtime"
	"slices"
	"sort"
	"strconv"
	"strings"

	"fvsweep/fv2d"
	"fvsweep/sweep/field"
	"fvsweep/sweep/job"
	"fvsweep/sweep/plots"
	"fvsweep/sweep/table"
	"fvsweep/sweep/verify"
	"fvsweep/sweep/wire"
)

// float32Eps is the machine epsilon of the snapshots' values (IEEE 754
// binary32): the round-off floor of an order map is verify.RoundOffFloor
// of it.
var float32Eps = math.Pow(2, -23)

// gridSnapshot is one grid of an order map: its job and final field.
type gridSnapshot struct {
	job  job.Job
	hdr  field.Header
	data [][]float32
}

// orderMap is the local observed order of one variable of a group on the
// coarsest grid of those it compares.
type orderMap struct {
	orders  verify.LocalOrders
	field   plots.Field // the coarse grid's geometry, the orders as values
	exact   bool        // from errors against the exact solution, else successive grids' differences
	grids   []int       // nx of the grids compared, coarsest first
	vname   string
	design  float64
	caseStr string
}

// mapOptions choose the grids and windows of an order map.
type mapOptions struct {
	// grids is how many of the finest grids to fit: 0 for the fewest the
	// map needs (two with an exact solution, else three), -1 for all.
	grids int
	// window is the side of the windows in coarse cells (odd; 0 or 1:
	// cell by cell).
	window int
}

// needGrids is the fewest grids an order map needs: two with an exact
// solution, three without (their differences).
func needGrids(exact bool) int {
	if exact {
		return 2
	}
	return 3
}

// localOrderMap computes the order map of variable v from the snapshots of
// nested grids, coarsest first: from the errors against the exact cell
// averages of prob (fv2d.ExactAverages with quad points per direction)
// when prob has an exact solution, else from the differences of successive
// grids; fitted over all of them (orderMapOf chooses which) per window of
// window coarse cells (verify.WindowOrdersExact,
// verify.WindowOrdersDifferences). v must be a conserved variable of the
// snapshots (cell averages restrict exactly; primitive variables do not).
func localOrderMap(snaps []gridSnapshot, v string, prob *fv2d.Problem, quad, window int) (*orderMap, error) {
	exact := prob != nil && prob.Exact != nil
	need := needGrids(exact)
	if len(snaps) < need {
		what := "three grids (no exact solution: the order comes from their differences)"
		if exact {
			what = "two grids"
		}
		return nil, fmt.Errorf("an order map needs %s with snapshots; have %d", what, len(snaps))
	}
	use := len(snaps)
	k := slices.Index(snaps[0].hdr.Vars, v)
	if k < 0 {
		return nil, fmt.Errorf("variable %q: an order map needs a conserved variable of the snapshot (%s)", v, strings.Join(snaps[0].hdr.Vars, ", "))
	}
	m := &orderMap{exact: exact, vname: v}
	grids := make([]verify.Grid, use)
	values := make([][]float64, use)
	for i, s := range snaps {
		h := s.hdr
		if !slices.Equal(h.Vars, snaps[0].hdr.Vars) || h.T != snaps[0].hdr.T {
			return nil, fmt.Errorf("snapshots of nx=%d and nx=%d differ in variables or time", snaps[0].hdr.NX, h.NX)
		}
		u := make([]float64, h.NX*h.NY)
		for c, x := range s.data[k] {
			u[c] = float64(x)
		}
		values[i] = u
		grids[i] = verify.Grid{NX: h.NX, NY: h.NY, V: u}
		m.grids = append(m.grids, h.NX)
	}
	floor := verify.RoundOffFloor(float32Eps, values...)
	w := max(window, 1)
	var err error
	if exact {
		for i, s := range snaps {
			grids[i].V = snapshotErrors(s.hdr, values[i], k, prob, quad)
		}
		m.orders, err = verify.WindowOrdersExact(grids, w, floor)
	} else {
		m.orders, err = verify.WindowOrdersDifferences(grids, w, floor)
	}
	if err != nil {
		return nil, err
	}
	h := snaps[0].hdr
	m.field = plots.Field{Name: "observed order", NX: h.NX, NY: h.NY,
		X0: h.X0, X1: h.X0 + float64(h.NX)*h.DX, Y0: h.Y0, Y1: h.Y0 + float64(h.NY)*h.DY, V: m.orders.Order}
	return m, nil
}

// snapshotErrors returns u - the exact cell averages of conserved variable
// k of prob on the grid of the snapshot header h at its time.
func snapshotErrors(h field.Header, u []float64, k int, prob *fv2d.Problem, quad int) []float64 {
	like := &fv2d.State{Eq: prob.Eq, Gamma: prob.Gamma, NX: h.NX, NY: h.NY, X0: h.X0, Y0: h.Y0, DX: h.DX, DY: h.DY, T: h.T,
		U: make([][]float64, len(h.Vars))}
	for i := range like.U {
		like.U[i] = make([]float64, h.NX*h.NY)
	}
	ex := fv2d.ExactAverages(prob, like, quad, runtime.NumCPU())
	e := make([]float64, len(u))
	for j := range h.NY {
		for i := range h.NX {
			c := j*h.NX + i
			e[c] = u[c] - ex.At(k, i, j)
		}
	}
	return e
}

// heat is the order map as a heat map on the diverging colour map
// centred on the design order, from 0 to twice it.
func (m *orderMap) heat() (*plots.Heat, error) {
	how := "exact errors"
	if !m.exact {
		how = "differences of successive grids"
	}
	if len(m.grids) > needGrids(m.exact) {
		how += ", least-squares fit"
	}
	nx := make([]string, len(m.grids))
	for i, n := range m.grids {
		nx[i] = strconv.Itoa(n)
	}
	per := "cell"
	if w := m.orders.Window; w > 1 {
		per = fmt.Sprintf("window of %dx%d cells", w, w)
	}
	title := fmt.Sprintf("%s, %s: observed order per %s\nnx %s, %s; global L1 order %s, median %s\nhatched: below %.2g (round-off)",
		m.caseStr, m.vname, per, strings.Join(nx, "/"), how, fmtOrder(m.orders.Global), fmtOrder(m.orders.Median()), m.orders.Floor)
	if m.orders.Masked == len(m.orders.Order) {
		return nil, fmt.Errorf("every cell of the order map is at round-off level (below %.2g): nothing to draw", m.orders.Floor)
	}
	h, err := plots.DivergingHeatMap(m.field, m.design, m.design, plots.Axes{Title: title})
	if err != nil {
		return nil, err
	}
	h.BarLabel = fmt.Sprintf("observed order (design %g)", m.design)
	h.Notes = append(h.Notes, fmt.Sprintf("%d of %d cells masked: errors or differences below %.3g (%d x the float32 round-off of the largest |%s|)",
		m.orders.Masked, len(m.orders.Order), m.orders.Floor, verify.RoundOffFactor, m.vname))
	return h, nil
}

func fmtOrder(p float64) string {
	if math.IsNaN(p) {
		return "undefined"
	}
	return fmt.Sprintf("%.2f", p)
}

// writeCSV writes the map as "x,y,order" at the windows' centres (the
// coarse cells' centres), x fastest; a masked window has an empty order.
func (m *orderMap) writeCSV(w io.Writer) error {
	f := m.field
	dx, dy := (f.X1-f.X0)/float64(f.NX), (f.Y1-f.Y0)/float64(f.NY)
	var b strings.Builder
	b.WriteString("x,y,order\n")
	for j := range f.NY {
		for i := range f.NX {
			b.WriteString(strconv.FormatFloat(f.X0+(float64(i)+0.5)*dx, 'g', -1, 64))
			b.WriteByte(',')
			b.WriteString(strconv.FormatFloat(f.Y0+(float64(j)+0.5)*dy, 'g', -1, 64))
			b.WriteByte(',')
			if p := f.V[j*f.NX+i]; !math.IsNaN(p) {
				b.WriteString(strconv.FormatFloat(p, 'g', 6, 64))
			}
			b.WriteByte('\n')
		}
	}
	_, err := io.WriteString(w, b.String())
	return err
}

// orderMapOf prepares the order map of one group of study n (0: the only
// study with snapshots) of the sweep: the group that --group selects
// (k=v pairs, separated by commas or spaces, that its parameters match,
// or its label), the finest grids with snapshots (fetched by reference),
// variable v (default: the study's). coarse, when not 0, is the nx of the
// map's grid instead of the finest usable one; o chooses how many grids
// and the window (localOrderMap).
func orderMapOf(sd *sweepData, n int, group, v string, coarse int, o mapOptions, fetch func(ref string) ([]byte, error)) (*orderMap, error) {
	set, err := sd.tables(table.Options{Var: v})
	if err != nil {
		return nil, err
	}
	st, err := snapshotStudy(sd, set.Studies, n)
	if err != nil {
		return nil, err
	}
	g, err := selectGroup(st, group)
	if err != nil {
		return nil, err
	}
	outcomes := map[string]*job.Outcome{}
	jobs := map[string]job.Job{}
	for _, r := range sd.rows {
		outcomes[r.Job.ID], jobs[r.Job.ID] = r.Outcome, r.Job
	}
	var rows []table.GridRow // done grids with a snapshot, coarsest first
	for _, r := range g.Rows {
		if o := outcomes[r.JobID]; o != nil && r.Status == "done" && o.Snapshot != "" {
			rows = append(rows, r)
		}
	}
	sort.SliceStable(rows, func(i, j int) bool { return rows[i].NX < rows[j].NX })
	if len(rows) == 0 {
		return nil, fmt.Errorf("study %d, group %q: no finished grid has a snapshot (snapshot = true in the study)", st.Index, g.Label)
	}
	prob, vals := problemOf(jobs[rows[0].JobID])
	if prob == nil {
		return nil, fmt.Errorf("case %s could not be set up here", st.Case)
	}
	need := needGrids(prob.Exact != nil)
	fit := need // the grids fitted
	switch {
	case o.grids > 0 && o.grids < need:
		return nil, fmt.Errorf("%d grids asked for: the map needs at least %d", o.grids, need)
	case o.grids > 0:
		fit = o.grids
	}
	if coarse != 0 {
		i := slices.IndexFunc(rows, func(r table.GridRow) bool { return r.NX == coarse })
		if i < 0 {
			return nil, fmt.Errorf("--coarse %d: no finished grid with a snapshot has nx = %d", coarse, coarse)
		}
		if o.grids < 0 {
			fit = max(len(rows)-i, need)
		}
		if i+fit > len(rows) {
			return nil, fmt.Errorf("--coarse %d: the map needs %d finished grids with snapshots from nx = %d on", coarse, fit, coarse)
		}
		rows = rows[i : i+fit]
	} else {
		if o.grids < 0 {
			fit = len(rows)
		}
		if o.grids > len(rows) {
			return nil, fmt.Errorf("study %d, group %q: %d grids asked for, %d finished grids have snapshots", st.Index, g.Label, o.grids, len(rows))
		}
		rows = rows[max(len(rows)-fit, 0):]
	}
	var snaps []gridSnapshot
	for _, r := range rows {
		jb := jobs[r.JobID]
		hdr, data, err := snapshotOf(wire.Row{Job: jb, Outcome: outcomes[r.JobID]}, "", fetch)
		if err != nil {
			return nil, err
		}
		snaps = append(snaps, gridSnapshot{job: jb, hdr: hdr, data: data})
	}
	if v == "" {
		v = st.Var
	}
	if v == "" {
		v = snaps[0].hdr.Vars[0]
	}
	m, err := localOrderMap(snaps, v, prob, vals.Int("quad"), o.window)
	if err != nil {
		return nil, fmt.Errorf("study %d, group %q: %w", st.Index, g.Label, err)
	}
	design := st.Design
	if design <= 0 {
		var ok bool
		if design, ok = verify.DesignOrder(g.Params["scheme"]); !ok {
			return nil, fmt.Errorf("study %d: no design order to centre the map on: set design_order in the study", st.Index)
		}
	}
	m.design, m.caseStr = design, st.Case
	if g.Label != "" && g.Label != st.Case { // a group of its own is labelled by its case
		m.caseStr += " " + g.Label
	}
	return m, nil
}

// snapshotStudy returns study n, or with n = 0 the only study whose jobs
// keep snapshots.
func snapshotStudy(sd *sweepData, studies []table.Study, n int) (*table.Study, error) {
	snap := map[int]bool{}
	for _, r := range sd.rows {
		if r.Job.Snapshot {
			snap[r.Job.Study] = true
		}
	}
	var with []string
	var st *table.Study
	for i := range studies {
		if studies[i].Index == n || (n == 0 && snap[studies[i].Index]) {
			st = &studies[i]
		}
		if snap[studies[i].Index] {
			with = append(with, strconv.Itoa(studies[i].Index))
		}
	}
	switch {
	case n != 0 && st == nil:
		return nil, fmt.Errorf("--study %d: the sweep has studies 1 to %d", n, len(studies))
	case n == 0 && len(with) == 0:
		return nil, fmt.Errorf("no study keeps snapshots (snapshot = true)")
	case n == 0 && len(with) > 1:
		return nil, fmt.Errorf("studies %s keep snapshots: choose one with --study", strings.Join(with, ", "))
	case !snap[st.Index]:
		return nil, fmt.Errorf("study %d keeps no snapshots (snapshot = true in the study)", st.Index)
	}
	return st, nil
}

// selectGroup returns the group of st that sel names: every "k=v" of sel
// (separated by commas or spaces) matches its parameters, or sel is its
// label; with sel "" the study's only group.
func selectGroup(st *table.Study, sel string) (*table.Group, error) {
	var labels []string
	var found []*table.Group
	pairs := selPairs(sel)
	for i := range st.Groups {
		g := &st.Groups[i]
		labels = append(labels, fmt.Sprintf("%q", g.Label))
		if sel == g.Label || matchPairs(pairs, lookupIn(g.Params)) {
			found = append(found, g)
		}
	}
	switch {
	case len(found) == 1:
		return found[0], nil
	case len(st.Groups) == 0:
		return nil, fmt.Errorf("study %d has no jobs", st.Index)
	case sel == "":
		return nil, fmt.Errorf("study %d has %d groups: choose one with --group (%s)", st.Index, len(st.Groups), strings.Join(labels, ", "))
	case len(found) == 0:
		return nil, fmt.Errorf("--group %q: no group of study %d matches (%s)", sel, st.Index, strings.Join(labels, ", "))
	}
	return nil, fmt.Errorf("--group %q: %d groups of study %d match; give more k=v pairs", sel, len(found), st.Index)
}

// problemOf sets up the case of j with its parameters; nil when this build
// does not know the case or rejects its parameters.
func problemOf(j job.Job) (*fv2d.Problem, fv2d.Values) {
	vals, err := fv2d.Resolve(j.Case, j.Params)
	if err != nil {
		return nil, vals
	}
	c, err := fv2d.LookupCase(j.Case)
	if err != nil {
		return nil, vals
	}
	p, err := c.Setup(vals)
	if err != nil {
		return nil, vals
	}
	return p, vals
}
