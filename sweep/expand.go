package sweep

import (
	"fmt"
	"sort"
	"strings"

	"fvsweep/fv2d"
)

// dims returns the study's dimensions: each crossed axis alone, each
// together group, then the grid sequence (varying fastest). The axes of one
// dimension have equally many values and move in step.
func (st *Study) dims() [][]Axis {
	var d [][]Axis
	for _, a := range st.Axes {
		d = append(d, []Axis{a})
	}
	d = append(d, st.Together...)
	if len(st.Grid) > 0 {
		d = append(d, st.Grid)
	}
	return d
}

// Count returns the number of runs of st, the product of its dimensions'
// lengths, without expanding them (math.MaxInt if it overflows).
func (st *Study) Count() int {
	n := 1
	for _, d := range st.dims() {
		n = satMul(n, len(d[0].Values))
	}
	return n
}

// Count returns the number of runs of s before deduplication.
func (s *Spec) Count() int {
	n := 0
	for i := range s.Studies {
		n = satAdd(n, s.Studies[i].Count())
	}
	return n
}

// each calls fn with the parameter settings of every run of st, in odometer
// order with the grid fastest. fn must not keep kv: it is reused.
func (st *Study) each(fn func(kv map[string]string) error) error {
	dims := st.dims()
	kv := make(map[string]string, len(st.Fixed)+len(dims)+1)
	for k, v := range st.Fixed {
		kv[k] = v
	}
	idx := make([]int, len(dims))
	for {
		for i, d := range dims {
			for _, a := range d {
				kv[a.Name] = a.Values[idx[i]]
			}
		}
		if err := fn(kv); err != nil {
			return err
		}
		i := len(dims) - 1
		for ; i >= 0; i-- {
			if idx[i]++; idx[i] < len(dims[i][0].Values) {
				break
			}
			idx[i] = 0
		}
		if i < 0 {
			return nil
		}
	}
}

// runs resolves every run of st and calls fn with its index in expansion
// order, its values and its cost estimate.
func (st *Study) runs(fn func(v fv2d.Values, c fv2d.Cost)) error {
	i := 0
	return st.each(func(kv map[string]string) error {
		v, err := fv2d.Resolve(st.Case, kv)
		if err != nil {
			return fmt.Errorf("study %d: %w (at %s)", st.Index, err, st.point(kv))
		}
		var c fv2d.Cost
		if i < len(st.costs) {
			c = st.costs[i]
		} else {
			c = fv2d.Estimate(v)
		}
		i++
		fn(v, c)
		return nil
	})
}

// Group returns the identity of v without the study's grid parameters: the
// case and every other "k=v", keys sorted. Runs that differ only in their grid
// share a group, the rows of one convergence table.
func (st *Study) Group(v fv2d.Values) string {
	var b strings.Builder
	b.WriteString(v.Case)
	for _, k := range v.Keys() {
		if st.isGrid(k) {
			continue
		}
		b.WriteByte(' ')
		b.WriteString(k)
		b.WriteByte('=')
		b.WriteString(v.Get(k))
	}
	return b.String()
}

func (st *Study) isGrid(name string) bool {
	for _, a := range st.Grid {
		if a.Name == name {
			return true
		}
	}
	return false
}

// Expand returns every job of the spec, one per distinct run: a run that two
// studies share is kept once, with the first study's identity (its Snapshot
// is set if any of them asks for one). Jobs are sorted by Cost, largest
// first, then by ID, so that big runs are dispatched first.
func (s *Spec) Expand() ([]Job, error) {
	seen := map[string]int{}
	var jobs []Job
	for i := range s.Studies {
		st := &s.Studies[i]
		err := st.runs(func(v fv2d.Values, c fv2d.Cost) {
			id := JobID(v)
			if j, dup := seen[id]; dup {
				jobs[j].Snapshot = jobs[j].Snapshot || st.Snapshot
				return
			}
			seen[id] = len(jobs)
			jobs = append(jobs, Job{ID: id, Sweep: s.Name, Study: st.Index, Case: st.Case, Params: v.Map(),
				Refine: st.Refine, Group: st.Group(v), Cost: c.Work(), Snapshot: st.Snapshot})
		})
		if err != nil {
			return nil, fmt.Errorf("spec %s: %w", s.File, err)
		}
	}
	sort.Slice(jobs, func(i, j int) bool {
		if jobs[i].Cost != jobs[j].Cost {
			return jobs[i].Cost > jobs[j].Cost
		}
		return jobs[i].ID < jobs[j].ID
	})
	return jobs, nil
}

// Plan is the expansion of a spec summarised per study.
type Plan struct {
	Sweep   string
	Studies []StudyPlan
	Runs    int     // runs of all studies, before deduplication
	Jobs    int     // distinct runs: what a sweep submits
	Cost    float64 // estimated cell updates of the distinct runs
}

// StudyPlan summarises one study's runs.
type StudyPlan struct {
	Study *Study
	Runs  int
	Cost  float64  // estimated cell updates (cells x steps) of its runs
	Share float64  // Cost as a fraction of the sum over all studies
	Grids []string // distinct "NXxNY" grids in expansion order
}

// Plan expands s and summarises it per study without keeping the jobs.
func (s *Spec) Plan() (*Plan, error) {
	pl := &Plan{Sweep: s.Name}
	seen := map[string]bool{}
	sum := 0.0
	for i := range s.Studies {
		sp := StudyPlan{Study: &s.Studies[i]}
		grids := map[string]bool{}
		err := sp.Study.runs(func(v fv2d.Values, c fv2d.Cost) {
			w := c.Work()
			sp.Runs++
			sp.Cost += w
			if g := v.Get("nx") + "x" + v.Get("ny"); !grids[g] {
				grids[g] = true
				sp.Grids = append(sp.Grids, g)
			}
			if id := JobID(v); !seen[id] {
				seen[id] = true
				pl.Jobs++
				pl.Cost += w
			}
		})
		if err != nil {
			return nil, fmt.Errorf("spec %s: %w", s.File, err)
		}
		pl.Runs += sp.Runs
		sum += sp.Cost
		pl.Studies = append(pl.Studies, sp)
	}
	for i := range pl.Studies {
		if sum > 0 {
			pl.Studies[i].Share = pl.Studies[i].Cost / sum
		}
	}
	return pl, nil
}
