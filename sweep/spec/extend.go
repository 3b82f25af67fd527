package spec

import (
	"fmt"
	"math"
	"strconv"

	"fvsweep/fv2d"
	"fvsweep/sweep/job"
	"fvsweep/sweep/verify"
)

// extendKey is the key of the refine table that lets a study add grids.
const extendKey = "extend_to"

// extendTo reads refine.extend_to of the refine table t at base: an integer
// above the finest grid that leaves room for at least the next grid
// (verify.NextGrid, the ratio of the last pair).
func (sp *studyParser) extendTo(base []string, t map[string]any) error {
	raw, ok := t[extendKey]
	if !ok {
		return nil
	}
	path, key := sub(base, extendKey), "refine."+extendKey
	n, ok := raw.(int64)
	if !ok {
		return sp.fail(path, key, "want an integer grid size, got %s", typeName(raw))
	}
	lead := sp.st.Grid[0]
	grids := gridInts(lead.Values)
	next := verify.NextGrid(grids)
	if n < int64(next) || n > math.MaxInt32 {
		return sp.fail(path, key, "%d leaves no room for the next grid %s = %d (the finest, %d, times the ratio of the last pair)",
			n, lead.Name, next, grids[len(grids)-1])
	}
	sp.st.ExtendTo, sp.st.extendLine = int(n), sp.lines.at(path)
	if g := sp.st.ExtensionGrids(); len(g) == maxExtension && verify.NextGrid(append(grids, g...)) <= sp.st.ExtendTo {
		return sp.fail(path, key, "%d would add more than %d grids at the ratio of the last pair (%d after %d): lower it",
			n, maxExtension, grids[len(grids)-1], grids[len(grids)-2])
	}
	return nil
}

// maxExtension is the most grids refine.extend_to may add to a group.
const maxExtension = 16

func gridInts(vals []string) []int {
	n := make([]int, len(vals))
	for i, s := range vals {
		n[i] = atoi(s)
	}
	return n
}

// ExtensionGrids are the grids on the refinement axis that the study may add
// to each group, in order: verify.NextGrid of the spec's grids and of each
// added one, up to ExtendTo (at most maxExtension). Nil without
// refine.extend_to.
func (st *Study) ExtensionGrids() []int {
	if st.ExtendTo == 0 || len(st.Grid) == 0 {
		return nil
	}
	grids := gridInts(st.Grid[0].Values)
	var out []int
	for len(out) < maxExtension {
		next := verify.NextGrid(grids)
		if next <= 0 || next > st.ExtendTo {
			return out
		}
		out = append(out, next)
		grids = append(grids, next)
	}
	return out
}

// extensionCount is how many jobs the study may add at most: one per
// group and extension grid.
func (st *Study) extensionCount() int {
	k := len(st.ExtensionGrids())
	if k == 0 {
		return 0
	}
	return satMul(st.Count()/len(st.Grid[0].Values), k)
}

// Extension is what the grids a plan may add cost at most: every group of
// the studies with refine.extend_to refined up to it.
type Extension struct {
	Grids []int   // grids of the refinement axis that may be added (per study)
	Jobs  int     // jobs that may be added
	Cost  float64 // their estimated cell updates
}

// ExtraJob is the job that adds grid n on the refinement axis to the group
// whose two finest jobs are prev and last (coarse, fine): last's parameters
// with the refinement axis set to n and any other grid parameter that
// varies between prev and last (ny following nx) scaled by the same factor
// n / last's, rounded. It is resolved (fv2d.Resolve) and costed; the job
// keeps last's sweep, study, group, solver and snapshot.
func ExtraJob(prev, last job.Job, n int) (job.Job, fv2d.Cost, error) {
	axis := last.Refine
	lastN := atoi(last.Params[axis])
	if axis == "" || lastN <= 0 || n <= lastN {
		return job.Job{}, fv2d.Cost{}, fmt.Errorf("group %q: cannot add grid %s = %d after %s", last.Group, axis, n, last.Params[axis])
	}
	kv := make(map[string]string, len(last.Params))
	for k, v := range last.Params {
		kv[k] = v
	}
	kv[axis] = strconv.Itoa(n)
	for _, other := range []string{"nx", "ny"} {
		if other == axis || prev.Params[other] == last.Params[other] {
			continue
		}
		m := math.Round(float64(atoi(last.Params[other])) * float64(n) / float64(lastN))
		kv[other] = strconv.Itoa(int(m))
	}
	v, err := fv2d.Resolve(last.Case, kv)
	if err != nil {
		return job.Job{}, fv2d.Cost{}, fmt.Errorf("group %q: grid %s = %d: %w", last.Group, axis, n, err)
	}
	c := fv2d.Estimate(v)
	j := job.Job{ID: job.NewID(v.String()), Sweep: last.Sweep, Study: last.Study, Case: last.Case, Solver: last.Solver,
		Params: v.Map(), Refine: axis, Group: last.Group, Cost: c.Work(), Snapshot: last.Snapshot}
	return j, c, nil
}

// extension costs the grids that the studies with refine.extend_to may add
// (Plan.Extension) and refuses an added grid that the case refuses or whose
// memory estimate is over lim.MaxBytes. Each group is walked from its two
// finest grids of the spec.
func (pl *Plan) extension(lim Limits) error {
	for i := range pl.Summary {
		sp := &pl.Summary[i]
		st := sp.Study
		grids := st.ExtensionGrids()
		if len(grids) == 0 {
			continue
		}
		sp.Extension.Grids = grids
		t, err := newRunTable(st)
		if err != nil {
			return fmt.Errorf("spec %s: %w", pl.File, err)
		}
		last := len(t.dims) - 1 // the grid, varying fastest
		nGrid := len(t.dims[last][0].Values)
		var prev job.Job
		err = t.walk(func(_ int, idx []int) error {
			j := job.Job{Study: st.Index, Case: st.Case, Params: t.params(idx), Refine: st.Refine, Group: t.group(idx)}
			switch idx[last] {
			case nGrid - 2:
				prev = j
			case nGrid - 1:
				return pl.extendGroup(sp, prev, j, lim)
			}
			return nil
		})
		if err != nil {
			return err
		}
		pl.Extension.Jobs += sp.Extension.Jobs
		pl.Extension.Cost += sp.Extension.Cost
	}
	return nil
}

// extendGroup adds to sp the cost of the grids one group may add after
// prev and last.
func (pl *Plan) extendGroup(sp *StudyPlan, prev, last job.Job, lim Limits) error {
	st := sp.Study
	for _, n := range sp.Extension.Grids {
		j, c, err := ExtraJob(prev, last, n)
		if err != nil {
			return &Error{File: pl.File, Line: st.extendLine, Study: st.Index, Key: "refine." + extendKey, Msg: err.Error()}
		}
		if c.Bytes > lim.MaxBytes {
			return &Error{File: pl.File, Line: st.extendLine, Study: st.Index, Key: "refine." + extendKey,
				Msg: fmt.Sprintf("grid %sx%s that may be added needs an estimated %s, over the per-job limit of %s: lower %s",
					j.Params["nx"], j.Params["ny"], byteString(c.Bytes), byteString(lim.MaxBytes), extendKey)}
		}
		sp.Extension.Jobs++
		sp.Extension.Cost += c.Work()
		prev, last = last, j
	}
	return nil
}
