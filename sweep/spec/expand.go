package spec

import (
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"maps"
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

// perRun reports whether the runs of st are resolved one by one for the
// solver each names (resolveRun): the study names its solver.
func (st *Study) perRun() bool {
	_, named := st.origin[solverKey]
	return named || len(st.programs) > 0
}

func (st *Study) isGrid(name string) bool {
	for _, a := range st.Grid {
		if a.Name == name {
			return true
		}
	}
	return false
}

// Expand returns every job of the plan, one per distinct run (see Check),
// sorted by cost, largest first, then by ID, so that big runs are
// dispatched first. It holds every job at once; Each streams them in the
// same order.
func (pl *Plan) Expand() ([]job.Job, error) {
	jobs := make([]job.Job, 0, len(pl.order))
	err := pl.Each(func(j job.Job) error {
		jobs = append(jobs, j)
		return nil
	})
	if err != nil {
		return nil, err
	}
	return jobs, nil
}

// Each calls fn with every job of Expand, in the same order, one at a time,
// and stops at the first error fn returns (Each returns it). It builds each
// job from the plan's run index just before fn gets it, keeping none. fn
// owns the job (its Params map is its own).
func (pl *Plan) Each(fn func(job.Job) error) error {
	tabs := make([]*runTable, len(pl.Studies))
	for i := range pl.Studies {
		t, err := newRunTable(&pl.Studies[i])
		if err != nil {
			return fmt.Errorf("spec %s: %w", pl.File, err)
		}
		tabs[i] = t
	}
	var idx []int
	for _, e := range pl.order {
		t := tabs[e.study]
		idx = t.at(e.run, idx)
		if err := t.load(idx); err != nil {
			return fmt.Errorf("spec %s: %w", pl.File, err)
		}
		st := t.st
		j := job.Job{ID: hex.EncodeToString(e.id[:]), Sweep: pl.Name, Study: st.Index, Case: st.Case,
			Params: t.params(idx), Refine: st.Refine, Group: t.group(idx), Cost: e.cost, Snapshot: e.snap}
		if t.perRun {
			j.Solver, j.Version = t.run.solver, t.run.version
		}
		if err := fn(j); err != nil {
			return err
		}
	}
	return nil
}

// runTable gives the canonical parameters of any run of a study from its
// index, without calling fv2d.Resolve per run: a run's values are those of
// run 0 (fixed values and defaults included) with each dimension's axes at
// that run's position, each axis value canonicalised once. A case that
// completes its values (fv2d.Completer: test=N sets the states) breaks the
// rule "run 0 plus the axes", so its runs are resolved one by one: load
// resolves the run at a position, and value then reads that run's values.
type runTable struct {
	st       *Study
	complete bool        // the case is an fv2d.Completer: resolve each run
	cur      fv2d.Values // complete: the run load resolved
	perRun   bool        // the study names its solver: resolve each run (resolveRun)
	run      resolved    // perRun: the run load resolved
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
	t := &runTable{st: st, dims: st.dims(), complete: fv2d.IsCompleter(st.Case)}
	if st.perRun() {
		t.perRun = true
		return t, nil
	}
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
	// The run with dimension d at position p and the others at 0
	// canonicalises the values of d's axes at p.
	idx := make([]int, len(t.dims))
	for d, axes := range t.dims {
		first := len(t.flat)
		for _, a := range axes {
			t.axis[pos[a.Name]] = len(t.flat)
			t.flat = append(t.flat, flatAxis{dim: d, values: make([]string, len(a.Values))})
		}
		for p := range axes[0].Values {
			if t.complete {
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
	if t.perRun {
		t.kv = t.st.kv(idx, t.kv)
		r, err := t.st.resolveRun(t.kv)
		if err != nil {
			return fmt.Errorf("study %d: %w (at %s)", t.st.Index, err, t.st.point(t.kv))
		}
		t.run = r
		return nil
	}
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

// get is the canonical value of parameter name in the run at idx.
func (t *runTable) get(name string, idx []int) string {
	if t.perRun {
		return t.run.params[name]
	}
	k, _ := slices.BinarySearch(t.keys, name)
	return t.value(k, idx)
}

// id is the JobID of the run at idx, as bytes.
func (t *runTable) id(idx []int) [16]byte {
	if t.perRun {
		t.buf = t.run.canon(t.buf[:0], nil)
	} else {
		t.buf = t.canon(t.buf[:0], idx, false)
	}
	sum := sha256.Sum256(t.buf)
	return [16]byte(sum[:16])
}

// group is Job.Group of the run at idx: the canonical text without the
// study's grid parameters, the case and every other "k=v", keys sorted.
// Runs that differ only in their grid share a group, the rows of one
// convergence table.
func (t *runTable) group(idx []int) string {
	if t.perRun {
		t.buf = t.run.canon(t.buf[:0], t.st.isGrid)
	} else {
		t.buf = t.canon(t.buf[:0], idx, true)
	}
	return string(t.buf)
}

// params is a new map of every parameter of the run at idx.
func (t *runTable) params(idx []int) map[string]string {
	if t.perRun {
		return maps.Clone(t.run.params)
	}
	m := make(map[string]string, len(t.keys))
	for k, name := range t.keys {
		m[name] = t.value(k, idx)
	}
	return m
}
