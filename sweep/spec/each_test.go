package spec

import (
	"errors"
	"path/filepath"
	"reflect"
	"slices"
	"sort"
	"strings"
	"testing"

	"fvsweep/fv2d"
	"fvsweep/sweep/job"
	"fvsweep/sweep/outside"
)

// resolveAll is the expansion by definition: every run resolved by
// fv2d.Resolve, its ID from JobID, its group from Study.Group, its cost
// from fv2d.Estimate; duplicates kept once (first study, snapshot if any
// asks); sorted by cost, largest first, then ID.
func resolveAll(t *testing.T, s *Spec) []job.Job {
	t.Helper()
	seen := map[string]int{}
	var jobs []job.Job
	for i := range s.Studies {
		st := &s.Studies[i]
		err := st.each(func(kv map[string]string) error {
			if name := kv["solver"]; name != "" && name != job.BuiltinSolver {
				return resolveProgram(s, st, kv, seen, &jobs)
			}
			v, err := fv2d.Resolve(st.Case, fv2dOnly(st.Case, kv))
			if err != nil {
				return err
			}
			id := job.NewID(v.String())
			if at, dup := seen[id]; dup {
				jobs[at].Snapshot = jobs[at].Snapshot || st.Snapshot
				return nil
			}
			seen[id] = len(jobs)
			jobs = append(jobs, job.Job{ID: id, Sweep: s.Name, Study: st.Index, Case: st.Case, Params: v.Map(),
				Refine: st.Refine, Group: groupOf(st, v), Cost: fv2d.Estimate(v).Work(), Snapshot: st.Snapshot})
			return nil
		})
		if err != nil {
			t.Fatal(err)
		}
	}
	sort.Slice(jobs, func(i, j int) bool {
		if jobs[i].Cost != jobs[j].Cost {
			return jobs[i].Cost > jobs[j].Cost
		}
		return jobs[i].ID < jobs[j].ID
	})
	return jobs
}

// Each (and Expand on it) gives exactly the jobs of the definition, in the
// same order, for the test specs and every example config; so does a
// second Check of the same spec (Check keeps nothing in it).
func TestEachMatchesResolve(t *testing.T) {
	specs := map[string]*Plan{
		"good": mustLoad(t, goodSpec, DefaultLimits()),
		"dup":  mustLoad(t, dupSpec, DefaultLimits()),
		"tube": mustLoad(t, tubeSpec, DefaultLimits()),
	}
	files, _ := filepath.Glob("../../configs/*.toml")
	progs := exampleManifests(t)
	for _, f := range files {
		s, err := Load(f, DefaultLimits(), progs...)
		if err != nil {
			t.Fatal(err)
		}
		specs[f] = s
	}
	side, err := LoadSource("side.toml", []byte(sideBySide), DefaultLimits(), heron(t))
	if err != nil {
		t.Fatal(err)
	}
	specs["side"] = side
	for name, s := range specs {
		want := resolveAll(t, s.Spec)
		got, err := s.Expand()
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if !reflect.DeepEqual(got, want) {
			t.Errorf("%s: Expand differs from the per-run resolution (%d vs %d jobs)", name, len(got), len(want))
			for i := range min(len(got), len(want)) {
				if !reflect.DeepEqual(got[i], want[i]) {
					t.Errorf("first difference at %d:\n got %+v\nwant %+v", i, got[i], want[i])
					break
				}
			}
		}
		pl, err := Check(s.Spec, DefaultLimits())
		if err != nil {
			t.Fatalf("%s: second Check: %v", name, err)
		}
		if again, err := pl.Expand(); err != nil || !reflect.DeepEqual(again, want) {
			t.Errorf("%s: second Check: %d jobs, %v", name, len(again), err)
		}
	}
}

// A spec built by hand with values in other spellings than Parse's
// canonical ones ("0.50", "08") plans the same jobs: Check canonicalises
// through fv2d.Resolve and trusts nothing of Parse.
func TestCheckCanonicalises(t *testing.T) {
	src := study("case = \"spec-test-case\"\naxes = { cfl = [0.5, 0.25] }\ntogether = [{ amp = [0.2, 0.3] }]\nrefine = { nx = [8, 16] }\n")
	want, err := mustLoad(t, src, DefaultLimits()).Expand()
	if err != nil {
		t.Fatal(err)
	}
	s, err := Parse("test.toml", []byte(src))
	if err != nil {
		t.Fatal(err)
	}
	st := &s.Studies[0]
	st.Axes[0].Values = []string{"0.50", "2.5e-1"}
	st.Together[0][0].Values = []string{"0.20", " 0.3"}
	st.Grid[0].Values = []string{"08", "16"}
	pl, err := Check(s, DefaultLimits())
	if err != nil {
		t.Fatal(err)
	}
	got, err := pl.Expand()
	if err != nil || !reflect.DeepEqual(got, want) {
		t.Errorf("hand-written values: %d jobs, %v; want the %d jobs of the parsed spec", len(got), err, len(want))
	}
}

// Each stops at fn's first error and returns it; a job's Params map is its
// own.
func TestEachStops(t *testing.T) {
	s := mustLoad(t, goodSpec, DefaultLimits())
	stop := errors.New("stop")
	n := 0
	err := s.Each(func(j job.Job) error {
		j.Params["limiter"] = "changed"
		if n++; n == 5 {
			return stop
		}
		return nil
	})
	if err != stop || n != 5 {
		t.Fatalf("Each = %v after %d jobs, want stop after 5", err, n)
	}
	jobs, _ := s.Expand()
	for _, j := range jobs {
		if j.Params["limiter"] == "changed" {
			t.Fatal("a job's Params is shared with another expansion")
		}
	}
}

// A spec changed by hand after Parse, with a run that the case refuses,
// fails Check with the study and the run named.
func TestCheckBadRun(t *testing.T) {
	s, err := Parse("test.toml", []byte(study("case = \"spec-test-case\"\naxes = { test = [2, 1], amp = [0.2, 0.9] }\n")))
	if err != nil {
		t.Fatal(err)
	}
	s.Studies[0].Axes[0].Values[1] = "3" // test = 3 needs amp <= 0.5
	pl, err := Check(s, DefaultLimits())
	var se *Error
	if pl != nil || !errors.As(err, &se) || !strings.Contains(err.Error(), "test 3 needs amp") ||
		!strings.Contains(err.Error(), "study 1") || !strings.Contains(err.Error(), "amp=0.9 test=3") {
		t.Fatalf("Check = %v, %v; want a *Error naming the refused run", pl, err)
	}
}

// tubeSpec has axes over the presets of the cases that complete their
// values (shocktube test, quadrants config), with a grid.
const tubeSpec = `name = "tubes"

[[study]]
case = "shocktube"
fixed = { ny = 1 }
axes = { test = [1, 3], flux = ["hll", "hllc"] }
refine = { nx = [20, 40] }

[[study]]
case = "quadrants"
axes = { config = [6, 3] }
refine = { nx = [8, 16] }
`

// A job of a study with an axis over test (config) carries that test's
// (configuration's) states and final time, not those of run 0: Toro (2009)
// ch. 4 tests 1 and 3 (recalled from memory; docs/references.md §1); Lax &
// Liu (1998) configurations 3 and 6 (recalled from memory; §8 there).
// The same holds for a second Check of the spec.
func TestExpandPresetAxis(t *testing.T) {
	want := map[string]map[string]string{
		"test=1":   {"rho_l": "1", "p_l": "1", "rho_r": "0.125", "p_r": "0.1", "t_end": "0.25"},
		"test=3":   {"rho_l": "1", "p_l": "1000", "rho_r": "1", "p_r": "0.01", "t_end": "0.012"},
		"config=3": {"rho_sw": "0.138", "p_sw": "0.029", "t_end": "0.3"},
		"config=6": {"rho_nw": "2", "rho_se": "3", "p_sw": "1", "t_end": "0.3"},
	}
	s := mustLoad(t, tubeSpec, DefaultLimits())
	for pass := range 2 {
		jobs, err := s.Expand()
		if err != nil {
			t.Fatal(err)
		}
		seen := map[string]int{}
		for _, j := range jobs {
			key := "test=" + j.Params["test"]
			if j.Case == "quadrants" {
				key = "config=" + j.Params["config"]
			}
			seen[key]++
			for k, v := range want[key] {
				if j.Params[k] != v {
					t.Errorf("pass %d: job %s %s: %s = %s, want %s", pass, j.ID, key, k, j.Params[k], v)
				}
			}
			if !strings.Contains(j.Group, " t_end="+want[key]["t_end"]+" ") {
				t.Errorf("pass %d: group %q lacks t_end=%s", pass, j.Group, want[key]["t_end"])
			}
		}
		if seen["test=1"] != 4 || seen["test=3"] != 4 || seen["config=3"] != 2 || seen["config=6"] != 2 {
			t.Errorf("pass %d: jobs per preset %v, want 4 4 2 2", pass, seen)
		}
		var err2 error
		if s, err2 = Check(s.Spec, DefaultLimits()); err2 != nil {
			t.Fatal(err2)
		}
	}
}

// groupOf is Job.Group computed from resolved values, the slow way: the
// case and every "k=v" but the study's grid parameters, keys sorted.
// fv2dOnly keeps the settings of kv that fv2d declares for case c.
func fv2dOnly(c string, kv map[string]string) map[string]string {
	cs, _ := fv2d.LookupCase(c)
	out := map[string]string{}
	for _, p := range fv2d.ParamsOf(cs) {
		if v, ok := kv[p.Name]; ok {
			out[p.Name] = v
		}
	}
	return out
}

// resolveProgram is resolveAll for a run of an outside program: the
// settings it declares resolved by outside.Resolve, the ID and group from
// its canonical text.
func resolveProgram(s *Spec, st *Study, kv map[string]string, seen map[string]int, jobs *[]job.Job) error {
	m := s.Programs[kv["solver"]]
	cs, _ := fv2d.LookupCase(st.Case)
	own := map[string]string{}
	for k, v := range kv {
		if _, ok := m.Param(k); ok || slices.Contains(outside.ProblemParams(cs), k) {
			own[k] = v
		}
	}
	r, err := outside.Resolve(m, st.Case, own)
	if err != nil {
		return err
	}
	var group []string
	for _, w := range strings.Fields(r.Canonical()) {
		if k, _, _ := strings.Cut(w, "="); !st.isGrid(k) {
			group = append(group, w)
		}
	}
	if at, dup := seen[r.ID()]; dup {
		(*jobs)[at].Snapshot = (*jobs)[at].Snapshot || st.Snapshot
		return nil
	}
	seen[r.ID()] = len(*jobs)
	*jobs = append(*jobs, job.Job{ID: r.ID(), Sweep: s.Name, Study: st.Index, Case: st.Case, Solver: m.Name, Version: m.Version,
		Params: r.Params, Refine: st.Refine, Group: strings.Join(group, " "), Cost: fv2d.Estimate(r.Case).Work(), Snapshot: st.Snapshot})
	return nil
}

func groupOf(st *Study, v fv2d.Values) string {
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
