package table

import (
	"bytes"
	"html/template"
	"io"
	"strconv"
	"strings"

	"fvsweep/sweep/job"
	"fvsweep/sweep/verify"
)

// WriteHTML writes the convergence tables of the studies as an HTML
// fragment (no document around it), each study a <section> with its
// heading, the markup the report uses, for pages that show tables filling
// in as results arrive. Every text from the data is escaped by
// html/template.
func WriteHTML(w io.Writer, studies []Study) error {
	return tmpl.ExecuteTemplate(w, "tables", studies)
}

// HeadingHTML is the heading of st and its one-paragraph summary (counts,
// the error measure, the functionals), as WriteHTML writes them.
func HeadingHTML(st Study) (template.HTML, error) { return execute("head", st) }

// GroupsHTML is the tables of st's groups without the heading: per group
// the grid table, the fitted order and verdict, and the GCI table with its
// results and notes.
func GroupsHTML(st Study) (template.HTML, error) { return execute("study", st) }

func execute(name string, st Study) (template.HTML, error) {
	var b bytes.Buffer
	if err := tmpl.ExecuteTemplate(&b, name, st); err != nil {
		return "", err
	}
	return template.HTML(b.String()), nil // #nosec: html/template output, escaped
}

// Finished counts the grids of g that have an outcome (done or failed).
func (g Group) Finished() int {
	n := 0
	for _, r := range g.Rows {
		if r.Status == string(job.StatusDone) || r.Status == string(job.StatusFailed) {
			n++
		}
	}
	return n
}

// Waiting reports whether g's verdict is insufficient-data only because
// grids are still to come: the data may yet decide it, so it is no finding.
func (g Group) Waiting() bool {
	return g.Verdict.Status == verify.StatusInsufficient && g.Finished() < len(g.Rows)
}

// HasLSQ reports whether some functional of st has a least-squares
// uncertainty.
func (st Study) HasLSQ() bool {
	for _, g := range st.Groups {
		for _, f := range g.GCI {
			if f.LSQ != nil {
				return true
			}
		}
	}
	return false
}

// HasWarnings reports whether some group of st shows a plausibility
// warning (VerdictWarnings, GCIWarnings).
func (st Study) HasWarnings() bool {
	for _, g := range st.Groups {
		if len(g.VerdictWarnings()) > 0 || len(g.GCIWarnings()) > 0 {
			return true
		}
	}
	return false
}

// NormLabel is the symbol of a norm of a variable: "L1(rho)".
func NormLabel(norm, v string) string {
	n := map[string]string{"l1": "L1", "l2": "L2", "linf": "Linf"}[norm]
	if n == "" {
		n = strings.ToUpper(norm)
	}
	return n + "(" + v + ")"
}

var tmpl = template.Must(template.New("tables").Funcs(template.FuncMap{
	"num":   func(v float64) string { return Num(v).Format('e', 3) }, // errors and spacings: 4 significant digits
	"order": func(v float64) string { return Num(v).Format('f', 2) },
	"secs": func(v float64) string {
		if v == 0 {
			return "–"
		}
		return strconv.FormatFloat(v, 'g', 3, 64)
	},
	"norm":       NormLabel,
	"phi":        FormatPhi,
	"gciHeader":  func() []string { return GCIHeader },
	"gciCaption": func() string { return GCICaption },
	"lsqHeader":  func() []string { return LSQHeader },
	"lsqCaption": func() string { return LSQCaption },
}).Parse(tablesTemplate))

const tablesTemplate = `{{define "tables"}}{{range .}}<section id="tables-{{.Index}}">
{{template "head" .}}
{{template "study" .}}
</section>
{{end}}{{end}}

{{define "head"}}<h2>Study {{.Index}}: {{.Case}}{{if .Label}} ({{.Label}}){{end}}</h2>
<p>{{.Done}} done, {{.Failed}} failed, {{.Pending}} pending. {{if .Exact}}Error measure: {{norm .Norm .Var}}.{{else}}No exact solution: no errors or orders.{{end}}{{if .Functionals}} Functionals: {{range $i, $f := .Functionals}}{{if $i}}, {{end}}{{$f}}{{end}}, with the grid convergence index (Celik et al. 2008){{if .HasLSQ}} and the least-squares uncertainty (Eça &amp; Hoekstra 2014){{end}}.{{end}}</p>
{{end}}

{{define "study"}}{{$st := .}}{{range .Groups}}
<h3>{{.Label}}</h3>
<table>
<tr><th>nx</th><th>ny</th><th>h</th>{{if $st.Exact}}<th>{{norm $st.Norm $st.Var}}</th><th>observed order</th>{{end}}{{range $st.Functionals}}<th>{{.}}</th>{{end}}<th>wall s</th><th>status</th></tr>
{{range .Rows}}<tr><td>{{.NX}}</td><td>{{.NY}}</td><td>{{num .H}}</td>{{if $st.Exact}}<td>{{num .Err}}</td><td>{{order .Order}}</td>{{end}}{{range .Phi}}<td>{{phi .}}</td>{{end}}<td>{{secs .WallS}}</td><td class="t">{{.Status}}</td></tr>
{{end}}</table>
{{if $st.Exact}}<p>{{if .Fitted}}Fitted order {{order .Fit.Order}}{{if gt .Fit.DOF 0}} ± {{order .Fit.OrderSE}}{{end}} over {{.Fit.N}} grids. {{end}}Verdict:
{{if .Waiting}}<span class="waiting">{{if .Finished}}waiting for more grids{{else}}not run yet{{end}}</span> — {{.Finished}} of {{len .Rows}} grids have a result{{else}}<span class="{{if eq .Verdict.Status "pass"}}pass{{else if or (eq .Verdict.Status "order-low") (eq .Verdict.Status "order-high")}}fail{{else}}other{{end}}">{{.Verdict.Status}}</span>{{if .Verdict.Summary}} — {{.Verdict.Summary}}{{end}}{{end}}</p>
{{template "warnings" .VerdictWarnings}}{{with .SettleText}}<p>{{.}}</p>
{{end}}{{range .AddedLines}}<p class="note">{{.}}</p>
{{end}}{{end}}{{if .GCI}}<p>{{gciCaption}}:</p>
{{with .GCICells}}<table>
<tr>{{range gciHeader}}<th>{{.}}</th>{{end}}</tr>
{{range .}}<tr>{{range $i, $c := .}}<td{{if lt $i 2}} class="t"{{else if eq $i 4}} class="t"{{end}}>{{$c}}</td>{{end}}</tr>
{{end}}</table>
{{end}}{{with .LSQCells}}<p>{{lsqCaption}}:</p>
<table>
<tr>{{range lsqHeader}}<th>{{.}}</th>{{end}}</tr>
{{range .}}<tr>{{range $i, $c := .}}<td{{if lt $i 3}} class="t"{{end}}>{{$c}}</td>{{end}}</tr>
{{end}}</table>
{{end}}{{range .GCIResults}}<p>{{.}}</p>
{{end}}{{range .GCINotes}}<p class="note">{{.}}</p>
{{end}}{{template "warnings" .GCIWarnings}}{{end}}{{end}}{{end}}

{{define "warnings"}}{{if .}}<ul class="warnings">
{{range .}}<li>warning: {{.}}</li>
{{end}}</ul>
{{end}}{{end}}`
