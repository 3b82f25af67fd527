package main

import (
	"context"
	"flag"
	"fmt"
	"fvsweep/sweep/table"
	"io"
	"math"
	"os"
	"slices"
	"strconv"
	"strings"

	"fvsweep/coordinator/datadir"
	"fvsweep/sweep/field"
	"fvsweep/sweep/job"
	"fvsweep/sweep/plots"
	"fvsweep/sweep/report"
	"fvsweep/sweep/wire"
)

func init() {
	register(command{name: "plot", args: "SWEEP PLOT", run: func(args []string) int { return runPlot(args, os.Stdout, os.Stderr) },
		summary: "draw convergence, cost or field plots of a sweep (PNG, SVG)",
		about: `Draws one plot of a sweep into --out. PLOT is one of:

  convergence  error norm against h, log-log, one line per parameter group,
               reference slopes of order 1 and 2, fitted order in the legend;
               a study with many groups is split into panels by the
               parameters that vary (or pick one group with --group)
  cost         error norm against cost (work-precision), log-log: the CPU
               seconds of the solving threads, or with --x work the cells
               updated (nx x ny x steps), the same on any machine
  field        heat map of a job's final field with a colour bar, or with
               --cut a line cut through it against the exact solution
  order-map    observed order per cell of one group's nested grids (ratio 2),
               from the snapshots of the finest two grids' errors against
               the exact solution, or without one from the finest three
               grids' differences; centred on the design order. --fit-grids
               fits more grids by least squares, --window measures each
               error as its L1 norm over a square of cells

The extension of --out (.png or .svg) picks the format. Results come from
the running coordinator, or from the store in --data opened read-only. A
field snapshot (snapshot = true in the study) comes from the JetStream
object store: through the running coordinator's NATS server (or --nats),
else from the server files in --data/nats.`,
		flags: flagSet([]flagDoc{
			{"out", "FILE", "output file, .png or .svg (required)", ""},
			{"study", "N", "the study to plot", "the only one with errors to show"},
			{"job", "ID", "field: the job: its ID, a unique prefix of it, or k=v pairs (commas between; case=NAME too) that only its parameters match", ""},
			{"snapshot", "FILE", "field: read the snapshot from this file instead", ""},
			{"cut", "x|y", "field: a line cut along x or y instead of the heat map", ""},
			{"at", "V", "field: the cut passes through the cells nearest to y = V (--cut x) or x = V (--cut y)", "the middle"},
			{"x", "A", "cost: the x axis, cpu or work", "cpu"},
		}, judgeDocs, []flagDoc{
			{"group", "G", "convergence, cost: draw only this group; order-map: the group. As k=v pairs (commas or spaces between) that its parameters match, or its label in the table", ""},
			{"coarse", "NX", "order-map: the nx of the map's grid, the coarsest of the grids compared", "the finest that has the grids it needs"},
			{"fit-grids", "N|all", "order-map: fit the order to N grids (from --coarse on, else the finest N), or all with snapshots, by least squares of ln E against ln h per window", "2 with an exact solution, else 3"},
			{"window", "W", "order-map: measure each grid's error (or difference) by its mean absolute value over W x W coarse cells centred on each cell (W odd), cut at the domain's edges", "1"},
			{"format", "F", "order-map: png or svg, or csv to write x,y,order per window (its centre; empty order: masked) to --out or stdout", "from --out"},
		}, commonFlags(false)),
		examples: []string{
			"fvsweep plot blast-limiters convergence --out conv.svg",
			"fvsweep plot blast-limiters cost --x work --out cost.png",
			"fvsweep plot blast-limiters field --job nx=128,limiter=mc --out field.png",
			"fvsweep plot tubes order-map --fit-grids all --window 9 --format csv",
		}})
}

// runPlot is the plot command: exit code 0, 1 on failure, 2 on bad usage.
func runPlot(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("plot", flag.ContinueOnError)
	var c common
	c.register(fs)
	var jf judgeFlags
	jf.register(fs)
	out := fs.String("out", "", "")
	studyN := intFlag(fs, "study", 0, 1, math.MaxInt)
	jobID := fs.String("job", "", "")
	snapshot := fs.String("snapshot", "", "")
	cut := choiceFlag(fs, "cut", "", "x", "y")
	at := fs.String("at", "", "")
	group := fs.String("group", "", "")
	coarse := intFlag(fs, "coarse", 0, 1, math.MaxInt)
	fitGrids := fs.String("fit-grids", "", "")
	window := intFlag(fs, "window", 1, 1, math.MaxInt)
	format := choiceFlag(fs, "format", "", "png", "svg", "csv")
	costX := choiceFlag(fs, "x", "", "cpu", "work")
	bad := func(format string, a ...any) int { return usageTo(stderr, "plot", format, a...) }
	failed := func(err error) int {
		fmt.Fprintf(stderr, "fvsweep plot: %v\n", err)
		return 1
	}
	pos, code, done := parseWith("plot", fs, args, stdout, stderr)
	if done {
		return code
	}
	name, kind := pos[0], pos[1]
	if kind != "convergence" && kind != "cost" && kind != "field" && kind != "order-map" {
		return bad("unknown plot %q: want convergence, cost, field or order-map", kind)
	}
	csv := *format == "csv"
	switch {
	case *format != "" && kind != "order-map":
		return bad("--format is for the order map (other plots take theirs from --out)")
	case *out == "" && !csv:
		return bad("--out FILE is required")
	}
	if !csv {
		f, err := plots.FormatOf(*out)
		if err != nil {
			return bad("--out %v", err)
		}
		if *format != "" && f != *format {
			return bad("--format %s but --out %s", *format, *out)
		}
	}
	if kind != "field" && (*jobID != "" || *snapshot != "" || *cut != "" || *at != "") {
		return bad("--job, --snapshot, --cut and --at are for the field plot")
	}
	axis := report.CostCPU
	switch {
	case *costX != "" && kind != "cost":
		return bad("--x is for the cost plot")
	case *costX != "":
		axis = report.CostAxis(*costX)
	}
	if kind != "order-map" && (*coarse != 0 || *fitGrids != "" || *window != 1) {
		return bad("--coarse, --fit-grids and --window are for the order map")
	}
	mo := mapOptions{window: *window}
	switch *fitGrids {
	case "":
	case "all":
		mo.grids = -1
	default:
		n, err := strconv.Atoi(*fitGrids)
		if err != nil || n < 2 {
			return bad("--fit-grids %q: want a number of grids (at least 2) or all", *fitGrids)
		}
		mo.grids = n
	}
	if *window%2 == 0 {
		return bad("--window %d: want an odd number of cells (the window is centred on a cell)", *window)
	}
	if (kind == "field" || kind == "order-map") && jf.norm != "" {
		return bad("--norm is for the convergence and cost plots (the order map fits L1 per window)")
	}
	if kind == "field" && *group != "" {
		return bad("--group is for the convergence, cost and order-map plots")
	}
	atV := math.NaN()
	if *at != "" {
		var err error
		if atV, err = strconv.ParseFloat(*at, 64); err != nil || math.IsInf(atV, 0) || math.IsNaN(atV) {
			return bad("--at %q: not a finite number", *at)
		}
	}
	sd, err := openSweep(&c, name)
	if err != nil {
		return failed(err)
	}
	var d plots.Drawer
	var notes []string
	fetch := func(ref string) ([]byte, error) { return fetchSnapshot(&c, ref) }
	switch kind {
	case "order-map":
		m, err := orderMapOf(sd, *studyN, *group, jf.v, *coarse, mo, fetch)
		if err != nil {
			return failed(err)
		}
		if csv {
			return writeOrderCSV(m, *out, stdout, stderr)
		}
		h, err := m.heat()
		if err != nil {
			return failed(err)
		}
		d, notes = h, h.Notes
	case "field":
		d, notes, err = fieldPlot(sd, *jobID, *snapshot, fetch, jf.v, *cut, atV)
	default:
		d, notes, err = studyPlot(sd, kind, *studyN, *group, jf.options(), axis)
	}
	if err != nil {
		return failed(err)
	}
	if err := plots.Save(*out, d); err != nil {
		return failed(err)
	}
	for _, n := range notes {
		fmt.Fprintf(stderr, "fvsweep plot: note: %s\n", n)
	}
	fmt.Fprintln(stdout, *out)
	return 0
}

// studyPlot prepares the convergence or cost plot of one study.
func studyPlot(sd *sweepData, kind string, n int, group string, o table.Options, axis report.CostAxis) (plots.Drawer, []string, error) {
	set, err := sd.tables(o)
	studies := set.Studies
	if err != nil {
		return nil, nil, err
	}
	var st *table.Study
	var withErrors []string
	for i := range studies {
		if studies[i].HasErrors() {
			withErrors = append(withErrors, strconv.Itoa(studies[i].Index))
		}
		if studies[i].Index == n {
			st = &studies[i]
		}
	}
	switch {
	case n != 0 && st == nil:
		return nil, nil, fmt.Errorf("--study %d: the sweep has studies 1 to %d", n, len(studies))
	case n == 0 && len(withErrors) == 0:
		return nil, nil, fmt.Errorf("no study has errors to plot yet (no finished grid, or no exact solution)")
	case n == 0 && len(withErrors) > 1:
		return nil, nil, fmt.Errorf("studies %s have errors to plot: choose one with --study", strings.Join(withErrors, ", "))
	case n == 0:
		k, _ := strconv.Atoi(withErrors[0])
		for i := range studies {
			if studies[i].Index == k {
				st = &studies[i]
			}
		}
	}
	if !st.HasErrors() {
		return nil, nil, fmt.Errorf("study %d has no errors to plot yet (no finished grid, or no exact solution)", st.Index)
	}
	sub, err := pickGroups(*st, group)
	if err != nil {
		return nil, nil, err
	}
	st = &sub
	var f *plots.Figure
	if kind == "convergence" {
		f, err = report.ConvergenceFigure(*st)
	} else {
		f, err = report.CostFigure(*st, axis)
	}
	if err != nil {
		return nil, nil, err
	}
	return f, f.Notes, nil
}

// fieldPlot prepares the heat map or cut of a job's snapshot, read from
// file if not "", else fetched by its reference.
func fieldPlot(sd *sweepData, id, file string, fetch func(ref string) ([]byte, error), v, cut string, at float64) (plots.Drawer, []string, error) {
	if id == "" {
		return nil, nil, fmt.Errorf("the field plot needs --job ID")
	}
	row, err := findJob(sd.rows, id)
	if err != nil {
		return nil, nil, err
	}
	jb := row.Job
	hdr, data, err := snapshotOf(row, file, func(ref string) ([]byte, error) {
		raw, err := fetch(ref)
		if err != nil {
			return nil, fmt.Errorf("%w; or pass it with --snapshot FILE", err)
		}
		return raw, nil
	})
	if err != nil {
		return nil, nil, err
	}
	var notes []string
	prob, _ := problemOf(jb)
	if prob == nil {
		notes = append(notes, fmt.Sprintf("case %s could not be set up here: no exact solution drawn", jb.Case))
	}
	if v == "" {
		v = hdr.Vars[0]
	}
	f, exact, err := report.SnapshotField(hdr, data, v, prob)
	if err != nil {
		return nil, nil, err
	}
	if cut != "" && !math.IsNaN(at) {
		// --cut x runs along x at a height y = at; --cut y at x = at.
		name, lo, hi := "y", hdr.Y0, hdr.Y0+float64(hdr.NY)*hdr.DY
		if cut == "y" {
			name, lo, hi = "x", hdr.X0, hdr.X0+float64(hdr.NX)*hdr.DX
		}
		if at < lo || at > hi {
			return nil, nil, fmt.Errorf("--at %g: the cut along %s passes at %s = %g, outside the domain's %s range [%g, %g]", at, cut, name, at, name, lo, hi)
		}
	}
	tell := sd.differingParams(jb)
	title := fmt.Sprintf("%s, nx=%s, t=%.4g", jb.Case, jb.Params["nx"], hdr.T)
	if tell != "" {
		title = fmt.Sprintf("%s %s, t=%.4g", jb.Case, tell, hdr.T)
	}
	if cut == "" {
		h, err := plots.HeatMap(f, plots.Axes{Title: v + ": " + title})
		if err != nil {
			return nil, nil, err
		}
		return h, append(notes, h.Notes...), nil
	}
	if exact == nil {
		notes = append(notes, fmt.Sprintf("case %s has no exact solution: numerical values only", jb.Case))
	}
	label := jb.Params["scheme"]
	if l := jb.Params["limiter"]; l != "" && label == "muscl" {
		label += " " + l
	}
	label += ", nx=" + jb.Params["nx"]
	if tell != "" {
		label = tell
	}
	fig, err := plots.Cut(f, plots.CutOptions{Axis: cut, At: at, Exact: exact, Label: label})
	if err != nil {
		return nil, nil, err
	}
	fig.Title += ": " + title
	return fig, append(notes, fig.Notes...), nil
}

// differingParams is "k=v ..." of the parameters of jb whose values differ
// among the jobs of its study: what tells it apart from the others.
func (sd *sweepData) differingParams(jb job.Job) string {
	var keys []string
	for k, v := range jb.Params {
		for _, r := range sd.rows {
			if r.Job.Study == jb.Study && r.Job.Params[k] != v {
				keys = append(keys, k)
				break
			}
		}
	}
	slices.Sort(keys)
	parts := make([]string, len(keys))
	for i, k := range keys {
		parts[i] = k + "=" + jb.Params[k]
	}
	return strings.Join(parts, " ")
}

// snapshotOf reads the snapshot of the job of row: the file when one is
// given (--snapshot), else the stored one through fetch.
func snapshotOf(row wire.Row, file string, fetch func(ref string) ([]byte, error)) (field.Header, [][]float32, error) {
	jb := row.Job
	var raw []byte
	var err error
	if file != "" {
		if raw, err = os.ReadFile(file); err != nil {
			return field.Header{}, nil, fmt.Errorf("--snapshot: %w", err)
		}
	} else {
		out := row.Outcome
		switch {
		case out == nil:
			return field.Header{}, nil, fmt.Errorf("job %s has no result yet", jb.ID)
		case out.Snapshot == "":
			return field.Header{}, nil, fmt.Errorf("job %s stored no snapshot (set snapshot = true in its study)", jb.ID)
		}
		if raw, err = fetch(out.Snapshot); err != nil {
			return field.Header{}, nil, fmt.Errorf("job %s: %w", jb.ID, err)
		}
		if err := field.CheckDigest(raw, out.SnapshotDigest); err != nil {
			return field.Header{}, nil, fmt.Errorf("job %s: %w", jb.ID, err)
		}
		file = out.Snapshot
	}
	hdr, data, err := field.Decode(raw)
	if err != nil {
		return hdr, nil, fmt.Errorf("%s: %w", file, err)
	}
	if hdr.JobID != jb.ID {
		return hdr, nil, fmt.Errorf("%s: a snapshot of job %s, not of %s", file, hdr.JobID, jb.ID)
	}
	return hdr, data, nil
}

// writeOrderCSV writes the order map as CSV to the file out, or to stdout
// when out is "".
func writeOrderCSV(m *orderMap, out string, stdout, stderr io.Writer) int {
	if out == "" {
		if err := m.writeCSV(stdout); err != nil {
			fmt.Fprintf(stderr, "fvsweep plot: %v\n", err)
			return 1
		}
		return 0
	}
	var b strings.Builder
	err := m.writeCSV(&b)
	if err == nil {
		err = os.WriteFile(out, []byte(b.String()), 0o644)
	}
	if err != nil {
		fmt.Fprintf(stderr, "fvsweep plot: %v\n", err)
		return 1
	}
	fmt.Fprintln(stdout, out)
	return 0
}

// findJob returns the row whose job ID is id or starts with it, uniquely;
// or, when id holds k=v pairs (separated by commas or spaces), the one job
// whose parameters (and case, as case=NAME) match them all.
func findJob(rows []wire.Row, id string) (wire.Row, error) {
	if strings.Contains(id, "=") {
		return selectJob(rows, id)
	}
	var found []wire.Row
	for _, r := range rows {
		if r.Job.ID == id {
			return r, nil
		}
		if strings.HasPrefix(r.Job.ID, id) {
			found = append(found, r)
		}
	}
	switch len(found) {
	case 0:
		return wire.Row{}, fmt.Errorf("--job %s: no such job in the sweep", id)
	case 1:
		return found[0], nil
	}
	return wire.Row{}, fmt.Errorf("--job %s: %d jobs start with it; give more of the ID", id, len(found))
}

// selectJob returns the one row whose job matches every k=v of sel.
func selectJob(rows []wire.Row, sel string) (wire.Row, error) {
	pairs := selPairs(sel)
	var found []wire.Row
	for _, r := range rows {
		if matchPairs(pairs, func(k string) (string, bool) {
			if k == "case" {
				return r.Job.Case, true
			}
			v, ok := r.Job.Params[k]
			return v, ok
		}) {
			found = append(found, r)
		}
	}
	switch len(found) {
	case 0:
		return wire.Row{}, fmt.Errorf("--job %s: no job of the sweep has these parameters", sel)
	case 1:
		return found[0], nil
	}
	return wire.Row{}, fmt.Errorf("--job %s: %d jobs match; add k=v pairs (case=NAME, nx=N, ...) until one does", sel, len(found))
}

// fetchSnapshot reads a stored snapshot: through the NATS server of the
// running coordinator (or --nats), else from the embedded server's files
// in --data, opened just for this.
func fetchSnapshot(c *common, ref string) ([]byte, error) {
	return datadir.Snapshot(context.Background(), c.dir(), c.dialOptions(c.nats, "fvsweep plot", wire.RoleReader), ref)
}

// pickGroups is st with only the groups whose parameters match every k=v of
// sel (commas or spaces between; "" keeps all). More groups than there are
// line colours is an error that names the parameters telling them apart,
// so that no colour repeats within a plot.
func pickGroups(st table.Study, sel string) (table.Study, error) {
	pairs := selPairs(sel)
	var kept []table.Group
	for _, g := range st.Groups {
		if matchPairs(pairs, lookupIn(g.Params)) {
			kept = append(kept, g)
		}
	}
	if len(kept) == 0 {
		return st, fmt.Errorf("--group %q: no group of study %d matches", sel, st.Index)
	}
	if len(kept) > plots.Colours() {
		return st, fmt.Errorf("study %d: %d groups to draw, more than the %d colours of one plot; pick at most %d with --group k=v,... (they differ in %s)",
			st.Index, len(kept), plots.Colours(), plots.Colours(), differing(kept))
	}
	st.Groups = kept
	return st, nil
}

// differing is "k (v1, v2, ...); ..." of the parameters whose values differ
// among groups.
func differing(groups []table.Group) string {
	var keys []string
	for k := range groups[0].Params {
		keys = append(keys, k)
	}
	slices.Sort(keys)
	var parts []string
	for _, k := range keys {
		var vals []string
		for _, g := range groups {
			if !slices.Contains(vals, g.Params[k]) {
				vals = append(vals, g.Params[k])
			}
		}
		if len(vals) > 1 && k != "nx" && k != "ny" {
			parts = append(parts, k+" ("+strings.Join(vals, ", ")+")")
		}
	}
	return strings.Join(parts, "; ")
}

// selPairs splits a selection (--job, --group) into its "k=v" pairs,
// separated by commas or spaces.
func selPairs(sel string) []string {
	return strings.FieldsFunc(sel, func(r rune) bool { return r == ',' || r == ' ' })
}

// matchPairs reports whether get(k) has the value v for every "k=v" of
// pairs (a pair without "=" matches nothing); no pairs match everything.
func matchPairs(pairs []string, get func(k string) (string, bool)) bool {
	for _, p := range pairs {
		k, v, ok := strings.Cut(p, "=")
		got, has := get(k)
		if !ok || !has || got != v {
			return false
		}
	}
	return true
}

// lookupIn is the lookup of m, for matchPairs.
func lookupIn(m map[string]string) func(string) (string, bool) {
	return func(k string) (string, bool) { v, ok := m[k]; return v, ok }
}
