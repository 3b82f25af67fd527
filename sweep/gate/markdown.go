package gate

import (
	"fmt"
	"io"
	"strings"
)

// WriteMarkdown writes a short summary of r for a pull-request comment: the
// result line, then a table of the groups that failed or were not judged,
// each with its findings, then the improvements over the baseline. Passing
// groups are only counted.
func (r *Report) WriteMarkdown(w io.Writer) error {
	var b strings.Builder
	fmt.Fprintf(&b, "### %s\n\n", mdEscape(r.Summary()))
	var rows []string
	var better []string
	for i := range r.Cases {
		c := &r.Cases[i]
		for _, n := range c.Notes {
			if strings.HasPrefix(n, "improved") {
				better = append(better, fmt.Sprintf("- %s / %s: %s", mdEscape(c.Study), mdEscape(c.Group), mdEscape(n)))
			}
		}
		if c.Passed() && !c.Skipped {
			continue
		}
		result, why := "not judged", ""
		if !c.Passed() {
			result = "**FAIL** " + strings.Join(sortedKinds(c.Failures), ", ")
			var parts []string
			for _, f := range c.Failures {
				parts = append(parts, mdEscape(f.Kind+": "+f.Msg))
			}
			why = strings.Join(parts, "<br>") // escaped part by part: the breaks stay breaks
		} else {
			why = mdEscape(c.Verdict.Status + ": " + c.Verdict.Summary)
		}
		rows = append(rows, fmt.Sprintf("| %s | %s | %s | %s |", mdEscape(c.Study), mdEscape(c.Group), result, why))
	}
	if len(rows) > 0 {
		b.WriteString("| study | group | result | why |\n|---|---|---|---|\n")
		b.WriteString(strings.Join(rows, "\n"))
		b.WriteString("\n\n")
	}
	if len(better) > 0 {
		b.WriteString("Improvements over the baseline:\n\n")
		b.WriteString(strings.Join(better, "\n"))
		b.WriteString("\n\n")
	}
	_, err := io.WriteString(w, b.String())
	return err
}

// mdEscape keeps s on one table cell: pipes escaped, line breaks as <br>.
func mdEscape(s string) string {
	return strings.NewReplacer("|", `\|`, "\n", "<br>", "<", "&lt;", ">", "&gt;").Replace(s)
}

// WriteText writes r for a terminal: one line per group, its result, study,
// group and verdict, then its findings and notes indented, then the
// summary line.
func (r *Report) WriteText(w io.Writer) error {
	var b strings.Builder
	for i := range r.Cases {
		c := &r.Cases[i]
		result := "pass"
		switch {
		case !c.Passed():
			result = "FAIL"
		case c.Skipped:
			result = "info"
		}
		status := c.Verdict.Status
		if status == "" {
			status = "-"
		}
		fmt.Fprintf(&b, "%-4s  %s / %s  %s", result, c.Study, c.Group, status)
		if c.Verdict.Grids >= 2 {
			fmt.Fprintf(&b, " (order %.3g, fitted %.3g, design %.3g)", c.Verdict.Finest, c.Verdict.Fitted, c.Verdict.Design)
		}
		b.WriteByte('\n')
		for _, f := range c.Failures {
			fmt.Fprintf(&b, "      %s: %s\n", f.Kind, f.Msg)
		}
		for _, n := range c.Notes {
			if !strings.HasPrefix(n, "warning: ") || !c.Passed() {
				fmt.Fprintf(&b, "      %s\n", n)
			}
		}
	}
	b.WriteString(r.Summary())
	b.WriteByte('\n')
	_, err := io.WriteString(w, b.String())
	return err
}
