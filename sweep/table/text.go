package table

import (
	"fmt"
	"io"
	"slices"
	"strconv"
	"strings"
	"unicode/utf8"
)

// Formats are the names Write accepts.
var Formats = []string{"text", "markdown", "csv", "json"}

// Write writes s in format (one of Formats): text, aligned columns for a
// terminal; markdown, pipe tables; csv, one record per grid and per GCI
// record; json, the model's JSON.
func Write(w io.Writer, format string, s Set) error {
	switch format {
	case "text":
		return writeText(w, s)
	case "markdown":
		return writeMarkdown(w, s)
	case "csv":
		return writeCSV(w, s)
	case "json":
		return writeJSON(w, s)
	}
	return fmt.Errorf("format %q: want one of %s", format, strings.Join(Formats, ", "))
}

// fitted is the group's fitted order with its standard error, "–" without
// a fit.
func (g Group) fitted() string {
	if !g.Fitted {
		return "–"
	}
	s := Num(g.Fit.Order).Format('f', 2)
	if se := Num(g.Fit.OrderSE); se.OK() && se > 0 {
		s += " ± " + se.Format('f', 2)
	}
	return s
}

// verdict is the group's fitted order and verdict in one line, the status
// marked by mark (bold in markdown).
func (g Group) verdict(mark string) string {
	s := fmt.Sprintf("fitted order %s; verdict: %s%s%s", g.fitted(), mark, g.Verdict.Status, mark)
	if g.Verdict.Summary != "" {
		s += " (" + g.Verdict.Summary + ")"
	}
	if t := g.SettleText(); t != "" {
		s += "; " + t
	}
	return s
}

// heading is the one-line title of st in text and markdown.
func (st Study) heading() string {
	s := fmt.Sprintf("study %d", st.Index)
	if st.Label != "" {
		s += " " + st.Label
	}
	s += " (" + st.Case + "): "
	if st.Exact {
		s += fmt.Sprintf("%s, orders in %s", st.Var, NormLabel(st.Norm, st.Var))
	} else {
		s += "no exact solution"
	}
	if len(st.Functionals) > 0 {
		s += "; GCI of " + strings.Join(st.Functionals, ", ")
	}
	return s + fmt.Sprintf("; %d done, %d failed, %d pending", st.Done, st.Failed, st.Pending)
}

// header names the grid columns of st: the errors and orders where the case
// has an exact solution, then the functionals.
func (st Study) header() []string {
	h := []string{"nx", "ny", "h"}
	if st.Exact {
		h = append(h, "L1", "L2", "Linf", "order")
	}
	h = append(h, st.Functionals...)
	return append(h, "wall_s", "status")
}

// cells is one grid row as text cells under st.header().
func (st Study) cells(r GridRow) []string {
	c := []string{strconv.Itoa(r.NX), strconv.Itoa(r.NY), Num(r.H).Format('e', 3)}
	if st.Exact {
		c = append(c, Num(r.L1).Format('e', 3), Num(r.L2).Format('e', 3), Num(r.Linf).Format('e', 3), Num(r.Order).Format('f', 2))
	}
	for _, v := range r.Phi {
		c = append(c, FormatPhi(v))
	}
	return append(c, strconv.FormatFloat(r.WallS, 'g', 3, 64), r.Status)
}

// rowCells are the grid rows of g as text cells under st.header().
func (st Study) rowCells(g Group) [][]string {
	rows := make([][]string, len(g.Rows))
	for i, r := range g.Rows {
		rows[i] = st.cells(r)
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

// gciLeft and lsqLeft are the text columns of GCIHeader and LSQHeader.
var (
	gciLeft = []int{0, 1, 4}
	lsqLeft = []int{0, 1, 2}
)

func writeText(w io.Writer, s Set) error {
	fmt.Fprintf(w, "sweep %s\n", s.Sweep)
	for _, st := range s.Studies {
		fmt.Fprintf(w, "\n%s\n", st.heading())
		head := st.header()
		for _, g := range st.Groups {
			fmt.Fprintf(w, "\n  %s\n", g.Label)
			writeAligned(w, "    ", head, st.rowCells(g), len(head)-1)
			if st.Exact {
				fmt.Fprintf(w, "    %s\n", g.verdict(""))
				for _, x := range g.VerdictWarnings() {
					fmt.Fprintf(w, "      warning: %s\n", x)
				}
			}
			for _, a := range g.AddedLines() {
				fmt.Fprintf(w, "    %s\n", a)
			}
			if cells := g.GCICells(); len(cells) > 0 {
				fmt.Fprintf(w, "    %s:\n", GCICaption)
				writeAligned(w, "      ", GCIHeader, cells, gciLeft...)
			}
			if cells := g.LSQCells(); len(cells) > 0 {
				fmt.Fprintf(w, "    %s:\n", LSQCaption)
				writeAligned(w, "      ", LSQHeader, cells, lsqLeft...)
			}
			for _, r := range g.GCIResults() {
				fmt.Fprintf(w, "    %s\n", r)
			}
			for _, n := range g.GCINotes() {
				fmt.Fprintf(w, "      note: %s\n", n)
			}
			for _, x := range g.GCIWarnings() {
				fmt.Fprintf(w, "      warning: %s\n", x)
			}
		}
	}
	writeFailures(w, s.Failures, "")
	return nil
}

func writeFailures(w io.Writer, fails []Failure, bullet string) {
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

// writeMarkdownList writes items as a list after a blank line, each
// headed by lead; nothing when there are none.
func writeMarkdownList(w io.Writer, lead string, items []string) {
	if len(items) == 0 {
		return
	}
	fmt.Fprintln(w)
	for _, it := range items {
		fmt.Fprintf(w, "- %s%s\n", lead, it)
	}
}

func writeMarkdown(w io.Writer, s Set) error {
	fmt.Fprintf(w, "# sweep %s\n", s.Sweep)
	for _, st := range s.Studies {
		fmt.Fprintf(w, "\n## %s\n", st.heading())
		head := st.header()
		for _, g := range st.Groups {
			fmt.Fprintf(w, "\n### %s\n\n", g.Label)
			writeMarkdownTable(w, head, st.rowCells(g), len(head)-1)
			if st.Exact {
				v := g.verdict("**")
				fmt.Fprintf(w, "\n%s%s\n", strings.ToUpper(v[:1]), v[1:])
				writeMarkdownList(w, "warning: ", g.VerdictWarnings())
			}
			writeMarkdownList(w, "", g.AddedLines())
			if cells := g.GCICells(); len(cells) > 0 {
				fmt.Fprintf(w, "\n%s:\n\n", GCICaption)
				writeMarkdownTable(w, GCIHeader, cells, gciLeft...)
			}
			if cells := g.LSQCells(); len(cells) > 0 {
				fmt.Fprintf(w, "\n%s:\n\n", LSQCaption)
				writeMarkdownTable(w, LSQHeader, cells, lsqLeft...)
			}
			if res := g.GCIResults(); len(res) > 0 {
				fmt.Fprintf(w, "\n%s\n", strings.Join(res, "  \n"))
			}
			writeMarkdownList(w, "note: ", g.GCINotes())
			writeMarkdownList(w, "warning: ", g.GCIWarnings())
		}
	}
	writeFailures(w, s.Failures, "-")
	return nil
}
