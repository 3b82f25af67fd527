package spec

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"slices"

	"fvsweep/fv2d"
	"fvsweep/sweep/job"
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
// first, then by ID, so that big runs are dispatched first. It holds every
// job at once; Each streams them in the same order.
func (s *Spec) Expand() ([]job.Job, error) {
	var jobs []job.Job
	err := s.Each(func(j job.Job) error {
		jobs = append(jobs, j)
		return nil
	})
	if err != nil {
		return nil, err
	}
	return jobs, nil
}

// Each calls fn with every job of Expand, in the same order, one at a time,
// and stops at the first error fn returns (Each returns it). An error in
// the spec is returned before the first call of fn. Each keeps about 60
// bytes per distinct run, not the jobs: a first pass computes each run's ID
// and cost and sorts those, a second builds each job from its run index
// just before fn gets it. fn owns the job (its Params map is its own).
func (s *Spec) Each(fn func(job.Job) error) error {
	tabs := make([]*runTable, len(s.Studies))
	for i := range s.Studies {
		t, err := newRunTable(&s.Studies[i])
		if err != nil {
			return fmt.Errorf("spec %s: %w", s.File, err)
		}
		tabs[i] = t
	}
	order, err := s.order(tabs)
	if err != nil {
		return err
	}
	var idx []int
	for _, e := range order {
		t := tabs[e.study]
		idx = t.at(e.run, idx)
		if err := t.load(idx); err != nil {
			return fmt.Errorf("spec %s: %w", s.File, err)
		}
		st := t.st
		j := job.Job{ID: hex.EncodeToString(e.id[:]), Sweep: s.Name, Study: st.Index, Case: st.Case,
			Params: t.params(idx), Refine: st.Refine, Group: t.group(idx), Cost: e.cost, Snapshot: e.snap}
		if err := fn(j); err != nil {
			return err
		}
	}
	return nil
}

// run is one distinct run in the first pass of Each.
type run struct {
	cost  float64
	id    [16]byte // JobID, undecoded
	run   int      // index in its study's expansion order
	study int32    // index into Spec.Studies
	snap  bool
}

// order lists the distinct runs of s, largest cost first, then by ID: the
// first study to have a run gives it its identity, and it is a snapshot if
// any study asks for one.
func (s *Spec) order(tabs []*runTable) ([]run, error) {
	seen := make(map[[16]byte]int, min(s.Count(), 1<<20))
	var out []run
	for i, t := range tabs {
		err := t.walk(func(k int, idx []int) error {
			id := t.id(idx)
			if at, dup := seen[id]; dup {
				out[at].snap = out[at].snap || t.st.Snapshot
				return nil
			}
			c, err := t.cost(k, idx)
			if err != nil {
				return err
			}
			seen[id] = len(out)
			out = append(out, run{cost: c.Work(), id: id, run: k, study: int32(i), snap: t.st.Snapshot})
			return nil
		})
		if err != nil {
			return nil, fmt.Errorf("spec %s: %w", s.File, err)
		}
	}
	slices.SortFunc(out, func(a, b run) int {
		switch {
		case a.cost > b.cost:
			return -1
		case a.cost < b.cost:
			return 1
		}
		return bytes.Compare(a.id[:], b.id[:]) // the order of the hex IDs
	})
	return out, nil
}

// runTable gives the canonical parameters of any run of a study from its
// index, without calling fv2d.Resolve per run: a run's values are those of
// run 0 (fixed values and defaults included) with each dimension's axes at
// that run's position, each axis value canonicalised once. Parse has
// resolved and checked every run; a study it did not check (no cost
// estimates) is resolved run by run as the runs are walked. A case that
// completes its values (fv2d.Completer: test=N sets the states) breaks the
// rule "run 0 plus the axes", so its runs are resolved one by one: load
// resolves the run at a position, and value then reads that run's values.
type runTable struct {
	st       *Study
	checked  bool
	complete bool        // the case is an fv2d.Completer: resolve each run
	cur      fv2d.Values // complete: the run load resolved
	dims     [][]Axis
	keys     []string   // every parameter of the case, sorted
	base     []string   // canonical value of keys[k] in run 0
	axis     []int      // keys[k]'s index in flat, -1 when not varied
	flat     []flatAxis // the axes of every dimension
	grid     []bool     // keys[k] is a grid parameter
	buf      []byte     // scratch for the canonical strings
	kv       map[string]string
}

type flatAxis struct {
	dim    int
	values []string // canonical
}

func newRunTable(st *Study) (*runTable, error) {
	t := &runTable{st: st, dims: st.dims(), checked: len(st.costs) == st.Count(), complete: fv2d.IsCompleter(st.Case)}
	kv := st.kv(make([]int, len(t.dims)), nil)
	v0, err := fv2d.Resolve(st.Case, kv)
	if err != nil {
		return nil, fmt.Errorf("study %d: %w (at %s)", st.Index, err, st.point(kv))
	}
	t.keys = v0.Keys()
	pos := make(map[string]int, len(t.keys))
	for k, name := range t.keys {
		pos[name] = k
		t.base = append(t.base, v0.Get(name))
		t.grid = append(t.grid, st.isGrid(name))
		t.axis = append(t.axis, -1)
	}
	// Parse keeps canonical values. In a study it did not check, the
	// run with dimension d at position p and the others at 0 canonicalises
	// the values of d's axes at p.
	idx := make([]int, len(t.dims))
	for d, axes := range t.dims {
		first := len(t.flat)
		for _, a := range axes {
			t.axis[pos[a.Name]] = len(t.flat)
			f := flatAxis{dim: d, values: a.Values}
			if !t.checked {
				f.values = make([]string, len(a.Values))
			}
			t.flat = append(t.flat, f)
		}
		for p := range axes[0].Values {
			if t.checked || t.complete {
				break
			}
			idx[d] = p
			kv = st.kv(idx, kv)
			v, err := fv2d.Resolve(st.Case, kv)
			if err != nil {
				return nil, fmt.Errorf("study %d: %w (at %s)", st.Index, err, st.point(kv))
			}
			for i, a := range axes {
				t.flat[first+i].values[p] = v.Get(a.Name)
			}
		}
		idx[d] = 0
	}
	return t, nil
}

// kv fills m (a new map when nil) with the spec's settings of the run at
// position idx: fixed values and each dimension's axes.
func (st *Study) kv(idx []int, m map[string]string) map[string]string {
	if m == nil {
		m = make(map[string]string, len(st.Fixed)+len(idx)+1)
	}
	for k, v := range st.Fixed {
		m[k] = v
	}
	for i, d := range st.dims() {
		for _, a := range d {
			m[a.Name] = a.Values[idx[i]]
		}
	}
	return m
}

// load resolves the run at idx when the case completes its values (a no-op
// otherwise); value, id, group, params and cost of idx need it first.
func (t *runTable) load(idx []int) error {
	if !t.complete {
		return nil
	}
	t.kv = t.st.kv(idx, t.kv)
	v, err := fv2d.Resolve(t.st.Case, t.kv)
	if err != nil {
		return fmt.Errorf("study %d: %w (at %s)", t.st.Index, err, t.st.point(t.kv))
	}
	t.cur = v
	return nil
}

// value is the canonical value of keys[k] at position idx (the run load
// resolved, for a case that completes its values).
func (t *runTable) value(k int, idx []int) string {
	if t.complete {
		return t.cur.Get(t.keys[k])
	}
	if a := t.axis[k]; a >= 0 {
		f := &t.flat[a]
		return f.values[idx[f.dim]]
	}
	return t.base[k]
}

// walk calls fn with the index and position of every run of the study, in
// expansion order (the grid fastest), each run loaded.
func (t *runTable) walk(fn func(k int, idx []int) error) error {
	idx := make([]int, len(t.dims))
	for k := 0; ; k++ {
		if err := t.load(idx); err != nil {
			return err
		}
		if err := fn(k, idx); err != nil {
			return err
		}
		d := len(t.dims) - 1
		for ; d >= 0; d-- {
			if idx[d]++; idx[d] < len(t.dims[d][0].Values) {
				break
			}
			idx[d] = 0
		}
		if d < 0 {
			return nil
		}
	}
}

// at returns the position of run k (in idx, reused when long enough).
func (t *runTable) at(k int, idx []int) []int {
	idx = slices.Grow(idx[:0], len(t.dims))[:len(t.dims)]
	for d := len(t.dims) - 1; d >= 0; d-- {
		n := len(t.dims[d][0].Values)
		idx[d] = k % n
		k /= n
	}
	return idx
}

// canon appends the canonical "case k=v ..." of the run at idx to dst,
// without the grid parameters when noGrid is set: JobID's and group's text.
func (t *runTable) canon(dst []byte, idx []int, noGrid bool) []byte {
	dst = append(dst, t.st.Case...)
	for k, name := range t.keys {
		if noGrid && t.grid[k] {
			continue
		}
		dst = append(dst, ' ')
		dst = append(dst, name...)
		dst = append(dst, '=')
		dst = append(dst, t.value(k, idx)...)
	}
	return dst
}

// id is the JobID of the run at idx, as bytes.
func (t *runTable) id(idx []int) [16]byte {
	t.buf = t.canon(t.buf[:0], idx, false)
	sum := sha256.Sum256(t.buf)
	return [16]byte(sum[:16])
}

// group is Job.Group of the run at idx: the canonical text without the
// study's grid parameters, the case and every other "k=v", keys sorted.
// Runs that differ only in their grid share a group, the rows of one
// convergence table.
func (t *runTable) group(idx []int) string {
	t.buf = t.canon(t.buf[:0], idx, true)
	return string(t.buf)
}

// params is a new map of every parameter of the run at idx.
func (t *runTable) params(idx []int) map[string]string {
	m := make(map[string]string, len(t.keys))
	for k, name := range t.keys {
		m[name] = t.value(k, idx)
	}
	return m
}

// cost is the estimate of run k at idx: Parse's, or for a study it
// did not check, from resolving the run now.
func (t *runTable) cost(k int, idx []int) (fv2d.Cost, error) {
	if t.checked {
		return t.st.costs[k], nil
	}
	if t.complete {
		return fv2d.Estimate(t.cur), nil
	}
	t.kv = t.st.kv(idx, t.kv)
	v, err := fv2d.Resolve(t.st.Case, t.kv)
	if err != nil {
		return fv2d.Cost{}, fmt.Errorf("study %d: %w (at %s)", t.st.Index, err, t.st.point(t.kv))
	}
	return fv2d.Estimate(v), nil
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
	seen := map[[16]byte]bool{}
	sum := 0.0
	for i := range s.Studies {
		sp := StudyPlan{Study: &s.Studies[i]}
		t, err := newRunTable(sp.Study)
		if err != nil {
			return nil, fmt.Errorf("spec %s: %w", s.File, err)
		}
		nx, _ := slices.BinarySearch(t.keys, "nx")
		ny, _ := slices.BinarySearch(t.keys, "ny")
		grids := map[string]bool{}
		err = t.walk(func(k int, idx []int) error {
			c, err := t.cost(k, idx)
			if err != nil {
				return err
			}
			w := c.Work()
			sp.Runs++
			sp.Cost += w
			if g := t.value(nx, idx) + "x" + t.value(ny, idx); !grids[g] {
				grids[g] = true
				sp.Grids = append(sp.Grids, g)
			}
			if id := t.id(idx); !seen[id] {
				seen[id] = true
				pl.Jobs++
				pl.Cost += w
			}
			return nil
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
