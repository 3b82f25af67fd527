package main

import (
	"encoding/csv"
	"encoding/json"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"slices"
	"strconv"
	"strings"
	"unicode/utf8"

	"fvsweep/sweep/job"
	"fvsweep/sweep/report"
	"fvsweep/sweep/spec"
	"fvsweep/sweep/verify"
	"fvsweep/sweep/wire"
)

const tableUsage = `usage: fvsweep table SWEEP [--var V] [--norm l1|l2|linf] [--functional NAME] [--format text|markdown|csv|json]

Prints the convergence tables of a sweep: the runs of each study grouped by
every parameter except the grid, and per group, for each grid, the spacing h,
the L1, L2 and L-infinity errors of the variable V, the observed order of
each pair of grids in the chosen norm, the least-squares fitted order and the
verdict against the design order. Failed jobs are listed with their reason.
Reads from the running coordinator, or from the store in --data.

A study with a functional (or, naming none, a case without an exact
solution: every functional its runs report) shows the functional's value
per grid and, below the group, its grid convergence index by the procedure
of Celik et al. 2008 from the finished grids (refinement ratios from their
actual spacings): per successive triple of grids, finest first, the
apparent order, the convergence class, the Richardson-extrapolated value,
the relative errors e_a and e_ext, GCI_fine and the asymptotic ratio; from
four grids on also the least-squares order. Text and markdown print the
relative errors in percent, csv and json as fractions (json with the keys
of fvsweep gci --json).

flags:
  --var V            conserved variable judged (default: the study's var, or
                     the case's first: u or rho)
  --norm N           norm of the orders and the verdict (default: the study's, l1)
  --functional NAME  functional for the GCI, in the studies whose runs report
                     it (default: the study's functional)
  --format F         text (default), markdown, csv or json
` + commonUsage

func init() {
	register(command{name: "table", summary: "print the convergence tables of a sweep", run: runTable})
}

// sweepData is a sweep's jobs with their states and its stored spec.
type sweepData struct {
	name     string
	rows     []wire.Row
	specFile string
	spec     string
}

// tables builds the convergence tables of d.
func (d *sweepData) tables(o report.Options) ([]report.Study, []report.Failure, map[string]job.Outcome, error) {
	var sp *spec.Spec
	if d.spec != "" {
		sp, _ = parseStoredSpec(d.specFile, d.spec) // nil: study settings take defaults
	}
	jobs := make([]job.Job, len(d.rows))
	outs := map[string]job.Outcome{}
	for i, r := range d.rows {
		jobs[i] = r.Job
		if r.Outcome != nil {
			outs[r.Job.ID] = *r.Outcome
		}
	}
	studies, fails, err := report.Build(sp, jobs, outs, o)
	return studies, fails, outs, err
}

func runTable(args []string) int {
	fs := flag.NewFlagSet("table", flag.ContinueOnError)
	var c common
	c.register(fs)
	v := fs.String("var", "", "")
	norm := fs.String("norm", "", "")
	functional := fs.String("functional", "", "")
	format := fs.String("format", "text", "")
	pos, code, done := parseCommand("table", tableUsage, fs, args, func(n int) bool { return n == 1 })
	if done {
		return code
	}
	w, ok := tableWriters[*format]
	if !ok {
		return usageErr("table", "--format %q: want text, markdown, csv or json", *format)
	}
	d, err := openSweep(&c, pos[0])
	if err != nil {
		return fail("table: %v", err)
	}
	if err := printTables(os.Stdout, d, report.Options{Var: *v, Norm: *norm, Functional: *functional}, w); err != nil {
		return fail("table: %v", err)
	}
	return 0
}

// printTables builds and writes the tables of d.
func printTables(out io.Writer, d *sweepData, o report.Options, w tableWriter) error {
	studies, fails, outs, err := d.tables(o)
	if err != nil {
		return err
	}
	return w(out, tableSet{Sweep: d.name, Studies: tableStudies(studies, outs), Failures: fails})
}

// The tables in the shape the writers print: numbers that do not exist
// are nil (null in JSON, "–" in text).
type tableSet struct {
	Sweep    string           `json:"sweep"`
	Studies  []tableStudy     `json:"studies"`
	Failures []report.Failure `json:"failures"`
}

type tableStudy struct {
	Index                 int          `json:"index"`
	Label                 string       `json:"label"`
	Case                  string       `json:"case"`
	Var                   string       `json:"var"`
	Norm                  string       `json:"norm"`
	Exact                 bool         `json:"exact"`                 // errors and orders exist
	Functionals           []string     `json:"functionals,omitempty"` // shown, with their GCI
	Done, Failed, Pending int          `json:"-"`
	Groups                []tableGroup `json:"groups"`
}

type tableGroup struct {
	Label    string              `json:"label"`
	Params   map[string]string   `json:"params"`
	Rows     []tableRow          `json:"rows"`
	Fitted   *float64            `json:"fitted_order"`
	FittedSE *float64            `json:"fitted_order_se"`
	Verdict  verify.OrderVerdict `json:"verdict"`
	// GCI holds one entry per functional of the study, its records in the
	// layout of fvsweep gci --json (fractions, not percent).
	GCI []report.FunctionalGCI `json:"gci,omitempty"`

	gciCells   [][]string
	gciResults []string
	gciNotes   []string
}

type tableRow struct {
	JobID       string              `json:"job_id"`
	NX          int                 `json:"nx"`
	NY          int                 `json:"ny"`
	H           *float64            `json:"h"`
	Status      string              `json:"status"`
	L1          *float64            `json:"l1"`
	L2          *float64            `json:"l2"`
	Linf        *float64            `json:"linf"`
	Order       *float64            `json:"order"` // with the next coarser grid, in the study's norm
	Functionals map[string]*float64 `json:"functionals,omitempty"`
	WallS       float64             `json:"wall_s"`

	phi []float64 // in the order of tableStudy.Functionals, NaN for none
}

// finite is x, or nil when x is not a finite number.
func finite(x float64) *float64 {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return nil
	}
	return &x
}

func tableStudies(studies []report.Study, outs map[string]job.Outcome) []tableStudy {
	var ts []tableStudy
	for _, st := range studies {
		t := tableStudy{Index: st.Index, Label: st.Label, Case: st.Case, Var: st.Var, Norm: st.Norm,
			Exact: st.Exact, Functionals: st.Functionals, Done: st.Done, Failed: st.Failed, Pending: st.Pending}
		for _, g := range st.Groups {
			tg := tableGroup{Label: g.Label, Params: g.Params, Verdict: g.Verdict, GCI: g.GCI,
				gciCells: g.GCICells(), gciResults: g.GCIResults(), gciNotes: g.GCINotes()}
			if g.Fitted {
				tg.Fitted, tg.FittedSE = finite(g.Fit.Order), finite(g.Fit.OrderSE)
			}
			for _, r := range g.Rows {
				tr := tableRow{JobID: r.JobID, NX: r.NX, NY: r.NY, H: finite(r.H), Status: r.Status, Order: finite(r.Order),
					WallS: r.WallS, phi: r.Phi}
				if o, ok := outs[r.JobID]; ok && o.Status == job.StatusDone {
					if n, ok := o.Errors[st.Var]; ok {
						tr.L1, tr.L2, tr.Linf = finite(n.L1), finite(n.L2), finite(n.Linf)
					}
				}
				if len(r.Phi) > 0 {
					tr.Functionals = map[string]*float64{}
					for i, name := range st.Functionals {
						tr.Functionals[name] = finite(r.Phi[i])
					}
				}
				tg.Rows = append(tg.Rows, tr)
			}
			t.Groups = append(t.Groups, tg)
		}
		ts = append(ts, t)
	}
	return ts
}

type tableWriter func(io.Writer, tableSet) error

var tableWriters = map[string]tableWriter{
	"text":     writeTablesText,
	"markdown": writeTablesMarkdown,
	"csv":      writeTablesCSV,
	"json": func(w io.Writer, t tableSet) error {
		enc := json.NewEncoder(w)
		enc.SetIndent("", "  ")
		return enc.Encode(t)
	},
}

func fmtNum(p *float64, f byte, prec int) string {
	if p == nil {
		return "–"
	}
	return strconv.FormatFloat(*p, f, prec, 64)
}

func (g tableGroup) fitted() string {
	if g.Fitted == nil {
		return "–"
	}
	s := fmtNum(g.Fitted, 'f', 2)
	if g.FittedSE != nil && *g.FittedSE > 0 {
		s += " ± " + fmtNum(g.FittedSE, 'f', 2)
	}
	return s
}

// verdict is the group's fitted order and verdict in one line, the status
// marked by mark (bold in markdown).
func (g tableGroup) verdict(mark string) string {
	s := fmt.Sprintf("fitted order %s; verdict: %s%s%s", g.fitted(), mark, g.Verdict.Status, mark)
	if g.Verdict.Summary != "" {
		s += " (" + g.Verdict.Summary + ")"
	}
	return s
}

func (t tableStudy) title() string {
	s := fmt.Sprintf("study %d", t.Index)
	if t.Label != "" {
		s += " " + t.Label
	}
	s += " (" + t.Case + "): "
	if t.Exact {
		s += fmt.Sprintf("%s, orders in %s", t.Var, report.NormLabel(t.Norm, t.Var))
	} else {
		s += "no exact solution"
	}
	if len(t.Functionals) > 0 {
		s += "; GCI of " + strings.Join(t.Functionals, ", ")
	}
	return s + fmt.Sprintf("; %d done, %d failed, %d pending", t.Done, t.Failed, t.Pending)
}

// header names the grid columns of t: the errors and orders where the case
// has an exact solution, then the functionals.
func (t tableStudy) header() []string {
	h := []string{"nx", "ny", "h"}
	if t.Exact {
		h = append(h, "L1", "L2", "Linf", "order")
	}
	h = append(h, t.Functionals...)
	return append(h, "wall_s", "status")
}

// cells is one grid row as text cells under t.header().
func (t tableStudy) cells(r tableRow) []string {
	c := []string{strconv.Itoa(r.NX), strconv.Itoa(r.NY), fmtNum(r.H, 'e', 3)}
	if t.Exact {
		c = append(c, fmtNum(r.L1, 'e', 3), fmtNum(r.L2, 'e', 3), fmtNum(r.Linf, 'e', 3), fmtNum(r.Order, 'f', 2))
	}
	for _, v := range r.phi {
		c = append(c, report.FormatPhi(v))
	}
	return append(c, strconv.FormatFloat(r.WallS, 'g', 3, 64), r.Status)
}

// rowCells are the grid rows of g as text cells under t.header().
func (t tableStudy) rowCells(g tableGroup) [][]string {
	rows := make([][]string, len(g.Rows))
	for i, r := range g.Rows {
		rows[i] = t.cells(r)
	}
	return rows
}

// writeAligned writes a table with columns padded to their widths,
// right-aligned but for the columns in left, each line after indent.
func writeAligned(w io.Writer, indent string, header []string, rows [][]string, left ...int) {
	width := make([]int, len(header))
	for _, r := range append([][]string{header}, rows...) {
		for i, c := range r {
			width[i] = max(width[i], utf8.RuneCountInString(c))
		}
	}
	for _, r := range append([][]string{header}, rows...) {
		var b strings.Builder
		b.WriteString(indent)
		for i, c := range r {
			pad := strings.Repeat(" ", width[i]-utf8.RuneCountInString(c))
			if i > 0 {
				b.WriteString("  ")
			}
			if slices.Contains(left, i) {
				b.WriteString(c)
				if i < len(r)-1 {
					b.WriteString(pad)
				}
			} else {
				b.WriteString(pad + c)
			}
		}
		fmt.Fprintln(w, b.String())
	}
}

// gciLeft are the text columns of report.GCIHeader.
var gciLeft = []int{0, 1, 4}

func writeTablesText(w io.Writer, t tableSet) error {
	fmt.Fprintf(w, "sweep %s\n", t.Sweep)
	for _, st := range t.Studies {
		fmt.Fprintf(w, "\n%s\n", st.title())
		head := st.header()
		for _, g := range st.Groups {
			fmt.Fprintf(w, "\n  %s\n", g.Label)
			writeAligned(w, "    ", head, st.rowCells(g), len(head)-1)
			if st.Exact {
				fmt.Fprintf(w, "    %s\n", g.verdict(""))
			}
			if len(g.gciCells) > 0 {
				fmt.Fprintf(w, "    %s:\n", report.GCICaption)
				writeAligned(w, "      ", report.GCIHeader, g.gciCells, gciLeft...)
			}
			for _, r := range g.gciResults {
				fmt.Fprintf(w, "    %s\n", r)
			}
			for _, n := range g.gciNotes {
				fmt.Fprintf(w, "      note: %s\n", n)
			}
		}
	}
	writeFailures(w, t.Failures, "")
	return nil
}

func writeFailures(w io.Writer, fails []report.Failure, bullet string) {
	if len(fails) == 0 {
		return
	}
	fmt.Fprintf(w, "\nfailed jobs (%d)\n", len(fails))
	for _, f := range fails {
		fmt.Fprintf(w, "%s  %s study %d %s: %s\n", bullet, f.JobID[:min(12, len(f.JobID))], f.Study, f.Params, f.Reason)
	}
}

// writeMarkdownTable writes a pipe table, the columns in left left-aligned.
func writeMarkdownTable(w io.Writer, header []string, rows [][]string, left ...int) {
	fmt.Fprintf(w, "| %s |\n|", strings.Join(header, " | "))
	for i := range header {
		if slices.Contains(left, i) {
			fmt.Fprint(w, ":---|")
		} else {
			fmt.Fprint(w, "---:|")
		}
	}
	fmt.Fprintln(w)
	for _, r := range rows {
		fmt.Fprintf(w, "| %s |\n", strings.Join(r, " | "))
	}
}

func writeTablesMarkdown(w io.Writer, t tableSet) error {
	fmt.Fprintf(w, "# sweep %s\n", t.Sweep)
	for _, st := range t.Studies {
		fmt.Fprintf(w, "\n## %s\n", st.title())
		head := st.header()
		for _, g := range st.Groups {
			fmt.Fprintf(w, "\n### %s\n\n", g.Label)
			writeMarkdownTable(w, head, st.rowCells(g), len(head)-1)
			if st.Exact {
				v := g.verdict("**")
				fmt.Fprintf(w, "\n%s%s\n", strings.ToUpper(v[:1]), v[1:])
			}
			if len(g.gciCells) > 0 {
				fmt.Fprintf(w, "\n%s:\n\n", report.GCICaption)
				writeMarkdownTable(w, report.GCIHeader, g.gciCells, gciLeft...)
			}
			if len(g.gciResults) > 0 {
				fmt.Fprintf(w, "\n%s\n", strings.Join(g.gciResults, "  \n"))
			}
			if len(g.gciNotes) > 0 {
				fmt.Fprintln(w)
				for _, n := range g.gciNotes {
					fmt.Fprintf(w, "- note: %s\n", n)
				}
			}
		}
	}
	writeFailures(w, t.Failures, "-")
	return nil
}

// The columns of the csv table. Each line is one record: "grid" lines fill
// the grid columns (and phi:NAME for each functional of any study), "gci"
// lines the GCI columns of one record of verify.GCI (fractions, not
// percent), "gci-fit" lines the least-squares fit over four or more grids.
var (
	csvLead = []string{"record", "study", "label", "case", "var", "group"}
	csvGrid = []string{"job_id", "nx", "ny", "h", "L1", "L2", "Linf", "order", "wall_s", "status",
		"fitted_order", "fitted_order_se", "verdict"}
	csvGCI = []string{"functional", "grids_nx", "r21", "r32", "convergence", "apparent_order", "extrapolated",
		"e_approx", "e_extrap", "gci_fine", "asymptotic_ratio", "notes"}
)

func csvNum(p *float64) string {
	if p == nil {
		return ""
	}
	return strconv.FormatFloat(*p, 'g', -1, 64)
}

func writeTablesCSV(w io.Writer, t tableSet) error {
	var names []string // phi:NAME columns, first seen first
	for _, st := range t.Studies {
		for _, f := range st.Functionals {
			if !slices.Contains(names, f) {
				names = append(names, f)
			}
		}
	}
	width := len(csvLead) + len(csvGrid) + len(names) + len(csvGCI)
	gciAt := width - len(csvGCI)
	head := slices.Concat(csvLead, csvGrid)
	for _, n := range names {
		head = append(head, "phi:"+n)
	}
	cw := csv.NewWriter(w)
	cw.Write(append(head, csvGCI...))
	for _, st := range t.Studies {
		for _, g := range st.Groups {
			lead := func(kind string) []string {
				rec := make([]string, width)
				copy(rec, []string{kind, strconv.Itoa(st.Index), st.Label, st.Case, st.Var, g.Label})
				return rec
			}
			for _, r := range g.Rows {
				rec := lead("grid")
				copy(rec[len(csvLead):], []string{r.JobID, strconv.Itoa(r.NX), strconv.Itoa(r.NY), csvNum(r.H),
					csvNum(r.L1), csvNum(r.L2), csvNum(r.Linf), csvNum(r.Order), strconv.FormatFloat(r.WallS, 'g', -1, 64),
					r.Status, csvNum(g.Fitted), csvNum(g.FittedSE), g.Verdict.Status})
				for i, f := range st.Functionals {
					rec[len(csvLead)+len(csvGrid)+slices.Index(names, f)] = csvNum(finite(r.phi[i]))
				}
				cw.Write(rec)
			}
			for _, f := range g.GCI {
				for _, r := range f.Records {
					rec := lead("gci")
					copy(rec[gciAt:], []string{f.Functional, f.GridNames(r.Grids), csvNum(&r.R21), csvNum(r.R32),
						r.Convergence, csvNum(r.Order), csvNum(r.Extrapolated), csvNum(r.EApprox), csvNum(r.EExtrap),
						csvNum(r.GCIFine), csvNum(r.AsymptoticRatio), strings.Join(r.Notes, "; ")})
					cw.Write(rec)
				}
				if ls := f.LeastSquares; ls != nil {
					rec := lead("gci-fit")
					copy(rec[gciAt:], []string{f.Functional, f.GridNames(nil), "", "", "", csvNum(ls.Order),
						csvNum(ls.Extrapolated), "", "", "", "", strings.Join(ls.Notes, "; ")})
					cw.Write(rec)
				}
				if f.Note != "" {
					rec := lead("gci")
					rec[gciAt], rec[width-1] = f.Functional, f.Note
					cw.Write(rec)
				}
			}
		}
	}
	cw.Flush()
	return cw.Error()
}
