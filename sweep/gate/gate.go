// Package gate judges a sweep's convergence tables as pass or fail for a
// build pipeline: every group's order verdict and failed jobs, and, given a
// stored baseline, the growth of its errors and the drop of its orders; the
// judgement is one exit code and a report written as text, JUnit XML or
// Markdown.
//
// The exit codes (Code) tell a pipeline "the scheme regressed" (10 to 14)
// from "the tool could not run" (1 to 3):
//
//	0   every group passed
//	1   the tool could not run: a bad spec, no server, a store or file error
//	2   a bad command line
//	3   results incomplete: a job has no outcome yet
//	10  failed jobs: a run diverged or failed
//	11  order-low: an observed order below the design order's band
//	12  order-high: an observed order above the band
//	13  not judged: pre-asymptotic or insufficient data in a study that is
//	    not informational
//	14  baseline: an error grew or an order dropped beyond the tolerance,
//	    or a group of the baseline is missing
//
// When several apply, the lowest regression code is the exit status (the
// report lists every finding); 3 only when no regression was found.
package gate

import (
	"fmt"
	"math"
	"slices"
	"strings"

	"fvsweep/sweep/table"
	"fvsweep/sweep/verify"
)

// Exit codes of a gate; see the package documentation.
const (
	ExitPass       = 0
	ExitError      = 1
	ExitUsage      = 2
	ExitIncomplete = 3
	ExitFailedJobs = 10
	ExitOrderLow   = 11
	ExitOrderHigh  = 12
	ExitNotJudged  = 13
	ExitBaseline   = 14
)

// Kinds of a Finding.
const (
	KindFailedJobs = "failed-jobs"
	KindIncomplete = "incomplete"
	KindOrderLow   = verify.StatusLow
	KindOrderHigh  = verify.StatusHigh
	KindNotJudged  = "not-judged" // pre-asymptotic or insufficient data
	KindBaseline   = "baseline"
)

var kindCode = map[string]int{
	KindFailedJobs: ExitFailedJobs, KindIncomplete: ExitIncomplete, KindOrderLow: ExitOrderLow,
	KindOrderHigh: ExitOrderHigh, KindNotJudged: ExitNotJudged, KindBaseline: ExitBaseline,
}

// CodeOf returns the exit code of a finding of kind k.
func CodeOf(k string) int { return kindCode[k] }

// Finding is one reason why a group fails.
type Finding struct {
	Kind string
	Msg  string
}

// Case is the judgement of one group: one test case of the JUnit report.
type Case struct {
	StudyIndex int
	Study      string // the study's label, else its case
	Group      string // the group's label
	Ident      string // every parameter but the grid (job.Job.Group)
	Verdict    verify.OrderVerdict
	// Informational is the study's setting: a want of evidence (Skipped)
	// does not fail it.
	Informational bool
	Skipped       bool      // informational and not judged
	Failures      []Finding // empty: the group passed
	Notes         []string  // improvements over the baseline, warnings, why it was skipped
	WallS         float64   // wall seconds of the group's runs
}

// Passed reports whether c has no failure.
func (c *Case) Passed() bool { return len(c.Failures) == 0 }

// Code is the exit code of c: the lowest of its findings' codes, regression
// codes before ExitIncomplete; ExitPass when it has none.
func (c *Case) Code() int { return worst(c.Failures) }

func worst(fs []Finding) int {
	code, best := ExitPass, math.MaxInt
	for _, f := range fs {
		if r := rank(f.Kind); r < best {
			code, best = CodeOf(f.Kind), r
		}
	}
	return code
}

// Report is the judgement of a sweep.
type Report struct {
	Sweep string
	// Baseline names the baseline compared with, "" when none was.
	Baseline string
	Cases    []Case
}

// Code is the exit code of the gate: ExitPass when every case passed, else
// the lowest regression code of any case, else ExitIncomplete.
func (r *Report) Code() int {
	var all []Finding
	for i := range r.Cases {
		all = append(all, r.Cases[i].Failures...)
	}
	return worst(all)
}

// Counts returns how many cases passed (skipped ones included), failed and
// were skipped.
func (r *Report) Counts() (passed, failed, skipped int) {
	for i := range r.Cases {
		c := &r.Cases[i]
		switch {
		case !c.Passed():
			failed++
		default:
			passed++
		}
		if c.Skipped {
			skipped++
		}
	}
	return
}

// Judge judges every group of set: failed and pending grids, the order
// verdict, and, when base is not nil, the comparison with base. Groups of
// base that set does not have fail as missing.
func Judge(set table.Set, base *Baseline) *Report {
	r := &Report{Sweep: set.Sweep}
	reasons := map[string]string{}
	for _, f := range set.Failures {
		reasons[f.JobID] = f.Reason
	}
	var idx map[string]*BaselineGroup
	seen := map[string]bool{}
	if base != nil {
		r.Baseline = base.Name
		idx = base.index()
	}
	for si := range set.Studies {
		st := &set.Studies[si]
		for gi := range st.Groups {
			g := &st.Groups[gi]
			c := judgeGroup(st, g, reasons)
			if base != nil {
				key := groupKey(studyName(st), g.Ident)
				seen[key] = true
				compare(&c, st, g, idx[key])
			}
			r.Cases = append(r.Cases, c)
		}
	}
	if base != nil {
		for _, bg := range base.Groups {
			if seen[groupKey(bg.Study, bg.Group)] {
				continue
			}
			r.Cases = append(r.Cases, Case{Study: bg.Study, Group: bg.Label, Ident: bg.Group,
				Failures: []Finding{{KindBaseline, "in the baseline but not in this run: the spec no longer has this group (write the baseline again if that is meant)"}}})
		}
	}
	return r
}

// studyName is the name a study has in reports and baselines.
func studyName(st *table.Study) string {
	if st.Label != "" {
		return st.Label
	}
	return st.Case
}

func judgeGroup(st *table.Study, g *table.Group, reasons map[string]string) Case {
	c := Case{StudyIndex: st.Index, Study: studyName(st), Group: g.Label, Ident: g.Ident,
		Verdict: g.Verdict, Informational: st.Informational}
	var failed, pending []string
	for _, row := range g.Rows {
		c.WallS += row.WallS
		grid := gridName(row.NX, row.NY)
		switch row.Status {
		case "failed":
			failed = append(failed, grid+": "+oneLine(reasons[row.JobID]))
		case "done":
		default:
			pending = append(pending, grid)
		}
	}
	if len(failed) > 0 {
		c.Failures = append(c.Failures, Finding{KindFailedJobs,
			fmt.Sprintf("%d of %d grids failed: %s", len(failed), len(g.Rows), strings.Join(failed, "; "))})
	}
	if len(pending) > 0 {
		c.Failures = append(c.Failures, Finding{KindIncomplete,
			fmt.Sprintf("%d of %d grids have no outcome yet: %s", len(pending), len(g.Rows), strings.Join(pending, ", "))})
	}
	v := g.Verdict
	msg := v.Summary
	switch v.Status {
	case verify.StatusPass:
		if v.PreAsymptotic {
			c.Notes = append(c.Notes, "passes on the finest pair, but the fit over all grids disagrees (not yet asymptotic)")
		}
	case verify.StatusLow:
		c.Failures = append(c.Failures, Finding{KindOrderLow, msg})
	case verify.StatusHigh:
		c.Failures = append(c.Failures, Finding{KindOrderHigh, msg})
	default: // pre-asymptotic, insufficient data
		if st.Informational {
			c.Skipped = true
			c.Notes = append(c.Notes, "informational study, not judged: "+v.Status+": "+msg)
		} else {
			c.Failures = append(c.Failures, Finding{KindNotJudged, v.Status + ": " + msg})
		}
	}
	for _, w := range v.Warnings {
		c.Notes = append(c.Notes, "warning: "+w)
	}
	return c
}

// gridName is "NXxNY", or "NX" for a grid one cell high.
func gridName(nx, ny int) string {
	if ny <= 1 {
		return fmt.Sprint(nx)
	}
	return fmt.Sprintf("%dx%d", nx, ny)
}

func oneLine(s string) string {
	if s == "" {
		return "no reason recorded"
	}
	s = strings.Join(strings.Fields(s), " ")
	if len(s) > 200 {
		s = s[:200] + "..."
	}
	return s
}

// Summary is one line saying the gate's result and its exit code.
func (r *Report) Summary() string {
	passed, failed, skipped := r.Counts()
	s := fmt.Sprintf("gate %s: %d %s, %d passed, %d failed", r.Sweep, len(r.Cases), plural(len(r.Cases), "group"), passed, failed)
	if skipped > 0 {
		s += fmt.Sprintf(" (%d informational, not judged)", skipped)
	}
	if r.Baseline != "" {
		s += "; baseline " + r.Baseline
	}
	code := r.Code()
	if code == ExitPass {
		return s + ": PASS"
	}
	return s + fmt.Sprintf(": FAIL (exit %d, %s)", code, CodeName(code))
}

// CodeName is a short name of an exit code of the gate.
func CodeName(code int) string {
	switch code {
	case ExitPass:
		return "pass"
	case ExitError:
		return "the tool could not run"
	case ExitUsage:
		return "bad command line"
	}
	for k, c := range kindCode {
		if c == code {
			return k
		}
	}
	return "unknown"
}

func plural(n int, word string) string {
	if n == 1 {
		return word
	}
	return word + "s"
}

// num formats x with the fewest digits that read back as x, "none" when it
// is not finite: the numbers of a baseline comparison, where a tolerance of
// 0 makes the last digit matter.
func num(x float64) string {
	if math.IsNaN(x) || math.IsInf(x, 0) {
		return "none"
	}
	return fmt.Sprint(x)
}

// sortedKinds returns the kinds of fs, worst first, without repeats.
func sortedKinds(fs []Finding) []string {
	var ks []string
	for _, f := range fs {
		if !slices.Contains(ks, f.Kind) {
			ks = append(ks, f.Kind)
		}
	}
	slices.SortFunc(ks, func(a, b string) int { return rank(a) - rank(b) })
	return ks
}

// rank orders kinds as Code does: regressions by code, incomplete last.
func rank(k string) int {
	if c := CodeOf(k); c != ExitIncomplete {
		return c
	}
	return 100
}
