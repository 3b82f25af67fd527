package main

import (
	"context"
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
	"text/tabwriter"

	"fvsweep/coordinator"
	"fvsweep/sweep"
	"fvsweep/sweep/report"
)

const tableUsage = `usage: fvsweep table SWEEP [--var V] [--norm l1|l2|linf] [--format text|markdown|csv|json]

Prints the convergence tables of a sweep: the runs of each study grouped by
every parameter except the grid, and per group, for each grid, the spacing h,
the L1, L2 and L-infinity errors of the variable V, the observed order of
each pair of grids in the chosen norm, the least-squares fitted order and the
verdict against the design order. Failed jobs are listed with their reason.
Reads from the running coordinator, or from the store in --data.

flags:
  --var V            conserved variable judged (default: the study's var, or
                     the case's first: u or rho)
  --norm N           norm of the orders and the verdict (default: the study's, l1)
  --format F         text (default), markdown, csv or json
` + commonUsage

func init() {
	register(command{name: "table", summary: "print the convergence tables of a sweep", run: runTable})
}

// sweepData is a sweep's jobs with their states and its stored spec.
type sweepData struct {
	name     string
	rows     []sweep.Row
	specFile string
	spec     string
}

// loadSweep reads a sweep from the coordinator or the store.
func loadSweep(ctx context.Context, src *source, name string) (*sweepData, error) {
	d := &sweepData{name: name}
	var err error
	if src.client != nil {
		d.rows, d.specFile, d.spec, err = src.client.RowsSpec(ctx, name)
		return d, err
	}
	rec, err := src.db.Sweep(name)
	if err != nil {
		return nil, err
	}
	d.specFile, d.spec = rec.SpecFile, rec.Spec
	d.rows, err = coordinator.Rows(src.db, name, nil)
	return d, err
}

// openSweep opens the data and reads sweep name, for table and export.
func openSweep(c *common, name string) (*sweepData, error) {
	src, err := c.open(context.Background())
	if err != nil {
		return nil, err
	}
	defer src.close()
	return loadSweep(context.Background(), src, name)
}

// tables builds the convergence tables of d.
func (d *sweepData) tables(o report.Options) ([]report.Study, []report.Failure, map[string]sweep.Outcome, error) {
	var spec *sweep.Spec
	if d.spec != "" {
		spec, _ = parseSpec(d.specFile, d.spec) // nil: study settings take defaults
	}
	jobs := make([]sweep.Job, len(d.rows))
	outs := map[string]sweep.Outcome{}
	for i, r := range d.rows {
		jobs[i] = r.Job
		if r.Outcome != nil {
			outs[r.Job.ID] = *r.Outcome
		}
	}
	studies, fails, err := report.Build(spec, jobs, outs, o)
	return studies, fails, outs, err
}

func runTable(args []string) int {
	fs := flag.NewFlagSet("table", flag.ContinueOnError)
	var c common
	c.register(fs)
	v := fs.String("var", "", "")
	norm := fs.String("norm", "", "")
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
	if err := printTables(os.Stdout, d, report.Options{Var: *v, Norm: *norm}, w); err != nil {
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
	Done, Failed, Pending int          `json:"-"`
	Groups                []tableGroup `json:"groups"`
}

type tableGroup struct {
	Label    string             `json:"label"`
	Params   map[string]string  `json:"params"`
	Rows     []tableRow         `json:"rows"`
	Fitted   *float64           `json:"fitted_order"`
	FittedSE *float64           `json:"fitted_order_se"`
	Verdict  sweep.OrderVerdict `json:"verdict"`
}

type tableRow struct {
	JobID  string   `json:"job_id"`
	NX     int      `json:"nx"`
	NY     int      `json:"ny"`
	H      *float64 `json:"h"`
	Status string   `json:"status"`
	L1     *float64 `json:"l1"`
	L2     *float64 `json:"l2"`
	Linf   *float64 `json:"linf"`
	Order  *float64 `json:"order"` // with the next coarser grid, in the study's norm
	WallS  float64  `json:"wall_s"`
}

// finite is x, or nil when x is not a finite number.
func finite(x float64) *float64 {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return nil
	}
	return &x
}

func tableStudies(studies []report.Study, outs map[string]sweep.Outcome) []tableStudy {
	var ts []tableStudy
	for _, st := range studies {
		t := tableStudy{Index: st.Index, Label: st.Label, Case: st.Case, Var: st.Var, Norm: st.Norm,
			Done: st.Done, Failed: st.Failed, Pending: st.Pending}
		for _, g := range st.Groups {
			tg := tableGroup{Label: g.Label, Params: g.Params, Verdict: g.Verdict}
			if g.Fitted {
				tg.Fitted, tg.FittedSE = finite(g.Fit.Order), finite(g.Fit.OrderSE)
			}
			for _, r := range g.Rows {
				tr := tableRow{JobID: r.JobID, NX: r.NX, NY: r.NY, H: finite(r.H), Status: r.Status, Order: finite(r.Order), WallS: r.WallS}
				if o, ok := outs[r.JobID]; ok && o.Status == sweep.StatusDone {
					if n, ok := o.Errors[st.Var]; ok {
						tr.L1, tr.L2, tr.Linf = finite(n.L1), finite(n.L2), finite(n.Linf)
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

func (t tableStudy) title() string {
	s := fmt.Sprintf("study %d", t.Index)
	if t.Label != "" {
		s += " " + t.Label
	}
	return fmt.Sprintf("%s (%s): %s, orders in %s; %d done, %d failed, %d pending",
		s, t.Case, t.Var, report.NormLabel(t.Norm, t.Var), t.Done, t.Failed, t.Pending)
}

// cells is one grid row as text cells.
func (r tableRow) cells() []string {
	return []string{strconv.Itoa(r.NX), strconv.Itoa(r.NY), fmtNum(r.H, 'e', 3), fmtNum(r.L1, 'e', 3),
		fmtNum(r.L2, 'e', 3), fmtNum(r.Linf, 'e', 3), fmtNum(r.Order, 'f', 2), strconv.FormatFloat(r.WallS, 'g', 3, 64), r.Status}
}

var rowHeader = []string{"nx", "ny", "h", "L1", "L2", "Linf", "order", "wall_s", "status"}

func writeTablesText(w io.Writer, t tableSet) error {
	fmt.Fprintf(w, "sweep %s\n", t.Sweep)
	for _, st := range t.Studies {
		fmt.Fprintf(w, "\n%s\n", st.title())
		for _, g := range st.Groups {
			fmt.Fprintf(w, "\n  %s\n", g.Label)
			tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
			fmt.Fprintln(tw, "    \t"+strings.Join(rowHeader, "\t")+"\t")
			for _, r := range g.Rows {
				fmt.Fprintln(tw, "    \t"+strings.Join(r.cells(), "\t")+"\t")
			}
			tw.Flush()
			fmt.Fprintf(w, "    fitted order %s; verdict: %s", g.fitted(), g.Verdict.Status)
			if g.Verdict.Summary != "" {
				fmt.Fprintf(w, " (%s)", g.Verdict.Summary)
			}
			fmt.Fprintln(w)
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

func writeTablesMarkdown(w io.Writer, t tableSet) error {
	fmt.Fprintf(w, "# sweep %s\n", t.Sweep)
	for _, st := range t.Studies {
		fmt.Fprintf(w, "\n## %s\n", st.title())
		for _, g := range st.Groups {
			fmt.Fprintf(w, "\n### %s\n\n| %s |\n|%s\n", g.Label, strings.Join(rowHeader, " | "), strings.Repeat("---:|", len(rowHeader)))
			for _, r := range g.Rows {
				fmt.Fprintf(w, "| %s |\n", strings.Join(r.cells(), " | "))
			}
			fmt.Fprintf(w, "\nFitted order %s; verdict: **%s**", g.fitted(), g.Verdict.Status)
			if g.Verdict.Summary != "" {
				fmt.Fprintf(w, " (%s)", g.Verdict.Summary)
			}
			fmt.Fprintln(w)
		}
	}
	writeFailures(w, t.Failures, "-")
	return nil
}

func writeTablesCSV(w io.Writer, t tableSet) error {
	cw := csv.NewWriter(w)
	cw.Write(append([]string{"study", "label", "case", "var", "group", "job_id"},
		append(slices.Clone(rowHeader), "fitted_order", "fitted_order_se", "verdict")...))
	for _, st := range t.Studies {
		for _, g := range st.Groups {
			for _, r := range g.Rows {
				rec := []string{strconv.Itoa(st.Index), st.Label, st.Case, st.Var, g.Label, r.JobID}
				rec = append(rec, r.cells()...)
				for i, s := range rec {
					if s == "–" {
						rec[i] = ""
					}
				}
				se := ""
				if g.FittedSE != nil {
					se = fmtNum(g.FittedSE, 'g', 6)
				}
				fit := ""
				if g.Fitted != nil {
					fit = fmtNum(g.Fitted, 'g', 6)
				}
				cw.Write(append(rec, fit, se, g.Verdict.Status))
			}
		}
	}
	cw.Flush()
	return cw.Error()
}
