package gate

import (
	"encoding/xml"
	"fmt"
	"io"
	"strings"
)

// The JUnit XML that CI servers read: a testsuites root, one testsuite per
// study, one testcase per group. A failing group has one failure element
// whose type is its worst kind and whose message is the first finding; the
// element's text holds every finding. A skipped group (informational, not
// judged) has a skipped element. The verdict and its numbers of every group
// are in system-out. (Element and attribute names after the JUnit XML
// format that Ant's junit task writes: common practice.)

// JUnitSuites is the root element of the JUnit report.
type JUnitSuites struct {
	XMLName xml.Name `xml:"testsuites"`
	JUnitCounts
	Suites []JUnitSuite `xml:"testsuite"`
}

// JUnitSuite is one study.
type JUnitSuite struct {
	JUnitCounts
	Cases []JUnitCase `xml:"testcase"`
}

// JUnitCounts are the attributes of testsuites and testsuite: a name, the
// counts of their test cases (errors is always 0: a group that could not
// be judged is a failure or skipped) and the seconds they took.
type JUnitCounts struct {
	Name     string `xml:"name,attr"`
	Tests    int    `xml:"tests,attr"`
	Failures int    `xml:"failures,attr"`
	Errors   int    `xml:"errors,attr"`
	Skipped  int    `xml:"skipped,attr"`
	Time     string `xml:"time,attr"`
}

// JUnitCase is one group.
type JUnitCase struct {
	Name      string        `xml:"name,attr"`
	Classname string        `xml:"classname,attr"`
	Time      string        `xml:"time,attr"`
	Failure   *JUnitFailure `xml:"failure,omitempty"`
	Skipped   *JUnitSkipped `xml:"skipped,omitempty"`
	SystemOut string        `xml:"system-out,omitempty"`
}

// JUnitFailure says why a group failed.
type JUnitFailure struct {
	Message string `xml:"message,attr"`
	Type    string `xml:"type,attr"`
	Text    string `xml:",chardata"`
}

// JUnitSkipped says why a group was not judged.
type JUnitSkipped struct {
	Message string `xml:"message,attr"`
}

// JUnit builds the JUnit document of r.
func (r *Report) JUnit() JUnitSuites {
	doc := JUnitSuites{JUnitCounts: JUnitCounts{Name: "fvsweep gate " + r.Sweep}}
	var total float64
	var times []float64    // of each suite
	at := map[string]int{} // study -> index in doc.Suites
	for i := range r.Cases {
		c := &r.Cases[i]
		si, ok := at[c.Study]
		if !ok {
			si = len(doc.Suites)
			at[c.Study] = si
			doc.Suites = append(doc.Suites, JUnitSuite{JUnitCounts: JUnitCounts{Name: r.Sweep + "/" + c.Study}})
			times = append(times, 0)
		}
		s := &doc.Suites[si]
		name := c.Group
		if name == "" {
			name = c.Ident
		}
		tc := JUnitCase{Name: name, Classname: classname(r.Sweep, c.Study), Time: seconds(c.WallS), SystemOut: c.details()}
		if !c.Passed() {
			kinds := sortedKinds(c.Failures)
			var text []string
			for _, f := range c.Failures {
				text = append(text, f.Kind+": "+f.Msg)
			}
			tc.Failure = &JUnitFailure{Type: kinds[0], Message: firstOf(c.Failures, kinds[0]), Text: strings.Join(text, "\n")}
			s.Failures++
		} else if c.Skipped {
			tc.Skipped = &JUnitSkipped{Message: c.Verdict.Status + ": " + c.Verdict.Summary}
			s.Skipped++
		}
		s.Tests++
		s.Cases = append(s.Cases, tc)
		times[si] += c.WallS
		total += c.WallS
	}
	for i := range doc.Suites {
		s := &doc.Suites[i]
		s.Time = seconds(times[i])
		doc.Tests += s.Tests
		doc.Failures += s.Failures
		doc.Skipped += s.Skipped
	}
	doc.Time = seconds(total)
	return doc
}

// WriteJUnit writes the JUnit XML of r.
func (r *Report) WriteJUnit(w io.Writer) error {
	if _, err := io.WriteString(w, xml.Header); err != nil {
		return err
	}
	enc := xml.NewEncoder(w)
	enc.Indent("", "  ")
	if err := enc.Encode(r.JUnit()); err != nil {
		return err
	}
	_, err := io.WriteString(w, "\n")
	return err
}

// firstOf is the message of the first finding of kind k, with the kind.
func firstOf(fs []Finding, k string) string {
	for _, f := range fs {
		if f.Kind == k {
			return k + ": " + f.Msg
		}
	}
	return k
}

// classname is the dotted class name of a study's cases: sweep.study,
// with the dots and spaces of either made underscores.
func classname(sweep, study string) string {
	clean := strings.NewReplacer(".", "_", " ", "_").Replace
	return clean(sweep) + "." + clean(study)
}

func seconds(s float64) string { return fmt.Sprintf("%.3f", s) }

// details is the verdict of c and its notes, a line each.
func (c *Case) details() string {
	lines := []string{"verdict " + c.Verdict.Status + ": " + c.Verdict.Summary, "parameters: " + c.Ident}
	lines = append(lines, c.Notes...)
	return strings.Join(lines, "\n")
}
