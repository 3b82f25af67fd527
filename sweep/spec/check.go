package spec

import (
	"bytes"
	"fmt"
	"slices"
	"strings"

	"fvsweep/fv2d"
)

// Plan is a checked spec: every run of it resolved, its cost estimated and
// within the limits. It holds the distinct runs in the order of Each
// (largest cost first, then by ID) and a summary per study. Check makes it;
// nothing changes it afterwards.
type Plan struct {
	*Spec           // the spec checked; it must not change
	Runs    int     // runs of all studies, before deduplication
	Jobs    int     // distinct runs: what a sweep submits
	Cost    float64 // estimated cell updates of the distinct runs
	Summary []StudyPlan
	// Extension is what the grids of refine.extend_to may add at most.
	Extension Extension

	order []run // the distinct runs, in the order Each gives them
}

// StudyPlan summarises one study's runs.
type StudyPlan struct {
	Study *Study
	Runs  int
	Cost  float64  // estimated cell updates (cells x steps) of its runs
	Share float64  // Cost as a fraction of the sum over all studies
	Grids []string // distinct "NXxNY" grids in expansion order
	// Extension is what the study's refine.extend_to may add at most.
	Extension Extension
}

// run is one distinct run of a Plan: about 60 bytes, not the job.
type run struct {
	cost  float64
	id    [16]byte // JobID, undecoded
	run   int      // index in its study's expansion order
	study int32    // index into Spec.Studies
	snap  bool
}

// Check resolves every run of s (fv2d.Resolve), estimates its cost
// (fv2d.Estimate) and refuses a spec that expands to more than lim.MaxJobs
// runs, holds a run whose memory estimate exceeds lim.MaxBytes, a run the
// case refuses, or a functional the case does not report. The error is a
// *Error naming the file, the study, and the key or the run: the first bad
// run in expansion order. A zero field of lim means its default.
//
// A run that two studies share is planned once, with the first study's
// identity; it is a snapshot if any of them asks for one.
func Check(s *Spec, lim Limits) (*Plan, error) {
	lim = lim.orDefault()
	if err := checkCount(s, lim); err != nil {
		return nil, err
	}
	costs := make([][]fv2d.Cost, len(s.Studies))
	for i := range s.Studies {
		c, err := checkRuns(s.File, &s.Studies[i], lim)
		if err != nil {
			return nil, err
		}
		costs[i] = c
	}
	pl, err := plan(s, costs)
	if err != nil {
		return nil, err
	}
	if err := pl.extension(lim); err != nil {
		return nil, err
	}
	return pl, nil
}

// checkCount refuses a spec that expands to more than MaxJobs runs, with
// the jobs that refine.extend_to may add, without expanding it.
func checkCount(s *Spec, lim Limits) error {
	total, big, extra := 0, 0, 0
	for i := range s.Studies {
		n := s.Studies[i].Count()
		total = satAdd(total, n)
		extra = satAdd(extra, s.Studies[i].extensionCount())
		if n > s.Studies[big].Count() {
			big = i
		}
	}
	if satAdd(total, extra) <= lim.MaxJobs {
		return nil
	}
	st := &s.Studies[big]
	msg := fmt.Sprintf("the spec expands to %s jobs (this study %s), over the job limit of %d",
		countString(total), countString(st.Count()), lim.MaxJobs)
	if extra > 0 {
		msg = fmt.Sprintf("the spec expands to %s jobs and %s may add %s more, over the job limit of %d",
			countString(total), extendKey, countString(extra), lim.MaxJobs)
	}
	return &Error{File: s.File, Line: st.Line, Study: st.Index, Msg: msg}
}

// checkRuns resolves every run of st, checks its memory estimate and
// returns the estimates in expansion order. fv2d.Estimate sets up the case
// and samples its initial state, so it runs once per run, in expansion
// order: the error reported is that of the first bad run. A pool of
// goroutines did not pay on two cores (BenchmarkParse100k, medians of 5:
// 2.99 s with the pool, 2.89 s with this loop).
func checkRuns(file string, st *Study, lim Limits) ([]fv2d.Cost, error) {
	costs := make([]fv2d.Cost, 0, st.Count())
	var first fv2d.Values
	err := st.each(func(kv map[string]string) error {
		var v fv2d.Values
		var err error
		if st.perRun() {
			var r resolved
			r, err = st.resolveRun(kv)
			v = r.values
		} else {
			v, err = fv2d.Resolve(st.Case, kv)
		}
		if err != nil {
			return &Error{File: file, Line: st.Line, Study: st.Index, Msg: fmt.Sprintf("%v (at %s)", err, st.point(kv))}
		}
		c := fv2d.Estimate(v)
		if c.Bytes > lim.MaxBytes {
			o := st.origin["nx"]
			if o.line == 0 {
				o = origin{line: st.Line}
			}
			return &Error{File: file, Line: o.line, Study: st.Index, Key: o.key,
				Msg: fmt.Sprintf("grid %sx%s (at %s) needs an estimated %s, over the per-job limit of %s",
					v.Get("nx"), v.Get("ny"), st.point(kv), byteString(c.Bytes), byteString(lim.MaxBytes))}
		}
		if len(costs) == 0 {
			first = v
		}
		costs = append(costs, c)
		return nil
	})
	if err != nil {
		return nil, err
	}
	if st.Functional == "" {
		return costs, nil
	}
	return costs, checkFunctional(file, st, first)
}

// checkFunctional refuses a functional that the case, set up with the
// study's first run v, does not report.
func checkFunctional(file string, st *Study, v fv2d.Values) error {
	c, err := fv2d.LookupCase(st.Case)
	if err != nil {
		return err
	}
	prob, err := c.Setup(v)
	if err != nil {
		return &Error{File: file, Line: st.Line, Study: st.Index, Msg: fmt.Sprintf("case %s: %v", st.Case, err)}
	}
	var names []string
	for _, f := range prob.Functionals {
		if f.Name == st.Functional {
			return nil
		}
		names = append(names, f.Name)
	}
	return &Error{File: file, Line: st.functionalLine, Study: st.Index, Key: "functional",
		Msg: fmt.Sprintf("case %s has no functional %q (it has: %s)", st.Case, st.Functional, strings.Join(names, " "))}
}

// plan lists the distinct runs of s with the estimates costs[study][run],
// largest cost first, then by ID, and sums them per study.
func plan(s *Spec, costs [][]fv2d.Cost) (*Plan, error) {
	pl := &Plan{Spec: s}
	seen := make(map[[16]byte]int, min(s.Count(), 1<<20))
	sum := 0.0
	for i := range s.Studies {
		sp := StudyPlan{Study: &s.Studies[i]}
		t, err := newRunTable(sp.Study)
		if err != nil {
			return nil, fmt.Errorf("spec %s: %w", s.File, err)
		}
		grids := map[string]bool{}
		err = t.walk(func(k int, idx []int) error {
			w := costs[i][k].Work()
			sp.Runs++
			sp.Cost += w
			if g := t.get("nx", idx) + "x" + t.get("ny", idx); !grids[g] {
				grids[g] = true
				sp.Grids = append(sp.Grids, g)
			}
			id := t.id(idx)
			if at, dup := seen[id]; dup {
				pl.order[at].snap = pl.order[at].snap || sp.Study.Snapshot
				return nil
			}
			seen[id] = len(pl.order)
			pl.order = append(pl.order, run{cost: w, id: id, run: k, study: int32(i), snap: sp.Study.Snapshot})
			pl.Cost += w
			return nil
		})
		if err != nil {
			return nil, fmt.Errorf("spec %s: %w", s.File, err)
		}
		pl.Runs += sp.Runs
		sum += sp.Cost
		pl.Summary = append(pl.Summary, sp)
	}
	for i := range pl.Summary {
		if sum > 0 {
			pl.Summary[i].Share = pl.Summary[i].Cost / sum
		}
	}
	pl.Jobs = len(pl.order)
	slices.SortFunc(pl.order, func(a, b run) int {
		switch {
		case a.cost > b.cost:
			return -1
		case a.cost < b.cost:
			return 1
		}
		return bytes.Compare(a.id[:], b.id[:]) // the order of the hex IDs
	})
	return pl, nil
}
