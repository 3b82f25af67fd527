// Package report writes the report file of a sweep: per study its
// convergence and cost plots (package plots) with the tables of package
// table, then the failures, the spec and the machine, in one
// self-contained HTML file.
package report

import (
	"bytes"
	"encoding/xml"
	"fmt"
	"html/template"
	"io"
	"os"
	"runtime"
	"strings"
	"time"

	"fvsweep/sweep/plots"
	"fvsweep/sweep/table"
)

// Machine is where and with what a report was made.
type Machine struct {
	Host      string `json:"host"`
	GOOS      string `json:"goos"`
	GOARCH    string `json:"goarch"`
	NumCPU    int    `json:"num_cpu"`
	GoVersion string `json:"go_version"`
	Version   string `json:"version"` // fvsweep version
}

// ThisMachine describes the running process, with fvsweep version v.
func ThisMachine(v string) Machine {
	host, err := os.Hostname()
	if err != nil {
		host = "unknown"
	}
	return Machine{Host: host, GOOS: runtime.GOOS, GOARCH: runtime.GOARCH, NumCPU: runtime.NumCPU(),
		GoVersion: runtime.Version(), Version: v}
}

// Figure is a drawn plot for the report.
type Figure struct {
	Title   string        // the plot's own title
	Caption string        // what the plot shows, below it
	SVG     template.HTML // a checked, well-formed <svg> element
	Notes   []string
}

// StudyReport is a study's tables with its plots.
type StudyReport struct {
	table.Study
	Figures []Figure
	Notes   []string // plots that could not be drawn, and why
}

// Report is everything one report file shows.
type Report struct {
	Sweep     string
	SpecFile  string
	Spec      string // the spec source as submitted
	Studies   []StudyReport
	Failures  []table.Failure
	Machine   Machine
	Generated time.Time
	Notes     []string
}

// Warned reports whether some table of r carries a plausibility warning,
// which the page then styles.
func (r *Report) Warned() bool {
	for _, st := range r.Studies {
		if st.HasWarnings() {
			return true
		}
	}
	return false
}

// InlineSVG draws d as SVG and returns it ready to place in HTML: the XML
// prolog and comments removed, the rest checked to be well-formed XML with
// an <svg> root.
func InlineSVG(d plots.Drawer) (template.HTML, error) {
	var buf bytes.Buffer
	if err := plots.Write(&buf, "svg", d); err != nil {
		return "", err
	}
	s := buf.String()
	i := strings.Index(s, "<svg")
	if i < 0 {
		return "", fmt.Errorf("svg: no <svg> element")
	}
	s = s[i:]
	if err := checkXML(s); err != nil {
		return "", err
	}
	return template.HTML(s), nil // #nosec: produced by plots.Write and checked above
}

// checkXML reports whether s is one well-formed XML element tree.
func checkXML(s string) error {
	d := xml.NewDecoder(strings.NewReader(s))
	depth, roots := 0, 0
	for {
		tok, err := d.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			return fmt.Errorf("svg not well-formed: %w", err)
		}
		switch tok.(type) {
		case xml.StartElement:
			if depth == 0 {
				roots++
			}
			depth++
		case xml.EndElement:
			depth--
		}
	}
	if roots != 1 || depth != 0 {
		return fmt.Errorf("svg: %d root elements, depth %d at the end", roots, depth)
	}
	return nil
}

// AddFigures draws the convergence and cost plots of each study that has
// errors to show, a study of more groups than line colours in panels (see
// Panels); a plot that cannot be made becomes a note.
func (r *Report) AddFigures() {
	for i := range r.Studies {
		sr := &r.Studies[i]
		if !sr.Exact {
			sr.Notes = append(sr.Notes, "no exact solution, so no error plots; the GCI tables estimate the discretisation error")
			continue
		}
		if !sr.HasErrors() {
			sr.Notes = append(sr.Notes, "no errors to plot yet (no finished grid)")
			continue
		}
		y := table.NormLabel(sr.Study.Norm, sr.Study.Var)
		panels := Panels(sr.Study)
		for _, mk := range []struct {
			name, caption string
			fn            func(table.Study) (*plots.Figure, error)
		}{
			{"convergence", y + " against the grid spacing h, log-log, one line per group; dashed grey: slopes of order 1 and 2; legend: least-squares order ± its standard error.", ConvergenceFigure},
			{"cost", y + " against the CPU seconds of the solving threads (their own CPU clocks, not the wall time), coarse grid first: the line lower left reaches an error for less work.",
				func(st table.Study) (*plots.Figure, error) { return CostFigure(st, CostCPU) }},
			{"work", y + " against the cells updated (nx x ny x steps), coarse grid first: the cost of each scheme apart from the machine and its load.",
				func(st table.Study) (*plots.Figure, error) { return CostFigure(st, CostWork) }},
		} {
			for i, p := range panels {
				name, caption := mk.name, mk.caption
				if len(panels) > 1 {
					part := fmt.Sprintf("%d of %d", i+1, len(panels))
					if p.Holds != "" {
						part += ": the groups with " + p.Holds
					}
					name = mk.name + " plot " + part
					caption = "Panel " + part + ". " + caption
				}
				f, err := mk.fn(p.Study)
				if err == nil && p.Holds != "" {
					f.Title += " [" + p.Holds + "]"
				}
				if err == nil {
					var svg template.HTML
					if svg, err = InlineSVG(f); err == nil {
						sr.Figures = append(sr.Figures, Figure{Title: f.Title, Caption: caption, SVG: svg, Notes: f.Notes})
						continue
					}
				}
				sr.Notes = append(sr.Notes, fmt.Sprintf("%s plot: %v", name, err))
			}
		}
	}
}

// Write writes r as one self-contained HTML document: styles inline,
// plots inline SVG, no external references. Every text from the data is
// escaped by html/template.
func Write(w io.Writer, r *Report) error {
	return page.ExecuteTemplate(w, "page", r)
}

var funcs = template.FuncMap{
	"heading": table.HeadingHTML,
	"groups":  table.GroupsHTML,
	"when":    func(t time.Time) string { return t.UTC().Format("2006-01-02 15:04:05 UTC") },
	"short":   func(id string) string { return id[:min(12, len(id))] },
}

var page = template.Must(template.New("page").Funcs(funcs).Parse(pageTemplate))

const pageTemplate = `{{define "page"}}<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<title>fvsweep report: {{.Sweep}}</title>
<style>
body { font-family: sans-serif; margin: 2em auto; max-width: 72em; color: #1b1b1b; line-height: 1.35; }
h1 { font-size: 1.5em; } h2 { font-size: 1.25em; margin-top: 2em; border-bottom: 1px solid #bbb; } h3 { font-size: 1.05em; }
table { border-collapse: collapse; margin: 0.5em 0 1em; font-size: 0.92em; }
th, td { border: 1px solid #ccc; padding: 0.2em 0.6em; text-align: right; }
th { background: #eee; } td.t { text-align: left; }
.pass { color: #1d5c2e; font-weight: bold; } .fail { color: #8e2a1e; font-weight: bold; } .other { color: #6b4d00; font-weight: bold; }
pre { background: #f6f6f6; border: 1px solid #ddd; padding: 0.8em; overflow-x: auto; font-size: 0.88em; }
figure { margin: 1em 0; } figure svg { max-width: 100%; height: auto; }
.note { color: #555; font-style: italic; }
{{if .Warned}}.warnings { color: #7a3d00; background: #fff6e5; border-left: 3px solid #d98c1f; margin: 0.3em 0 0.8em; padding: 0.3em 0.6em 0.3em 1.8em; }
{{end}}dl { display: grid; grid-template-columns: max-content auto; gap: 0.2em 1em; } dt { font-weight: bold; }
</style>
</head>
<body>
<h1>fvsweep report: {{.Sweep}}</h1>
<dl>
<dt>sweep</dt><dd>{{.Sweep}}</dd>
<dt>spec file</dt><dd>{{if .SpecFile}}{{.SpecFile}}{{else}}–{{end}}</dd>
<dt>generated</dt><dd>{{when .Generated}}</dd>
<dt>host</dt><dd>{{.Machine.Host}}</dd>
<dt>platform</dt><dd>{{.Machine.GOOS}}/{{.Machine.GOARCH}}, {{.Machine.NumCPU}} CPUs</dd>
<dt>Go</dt><dd>{{.Machine.GoVersion}}</dd>
<dt>fvsweep</dt><dd>{{.Machine.Version}}</dd>
</dl>
{{range .Notes}}<p class="note">{{.}}</p>
{{end}}
{{range .Studies}}
<section id="study-{{.Index}}">
{{heading .Study}}
{{range .Figures}}<figure>
{{.SVG}}
<figcaption>{{.Caption}}{{range .Notes}} <span class="note">{{.}}</span>{{end}}</figcaption>
</figure>
{{end}}{{range .Notes}}<p class="note">{{.}}</p>
{{end}}{{groups .Study}}
</section>
{{end}}
<h2>Failures</h2>
{{if .Failures}}<table>
<tr><th>job</th><th>study</th><th>parameters</th><th>attempts</th><th>worker</th><th>reason</th></tr>
{{range .Failures}}<tr><td class="t"><code>{{short .JobID}}</code></td><td>{{.Study}}</td><td class="t">{{.Params}}</td><td>{{.Attempts}}</td><td class="t">{{.Worker}}</td><td class="t">{{.Reason}}</td></tr>
{{end}}</table>
{{else}}<p>None.</p>
{{end}}
<h2>Spec</h2>
<pre>{{.Spec}}</pre>
</body>
</html>
{{end}}`
