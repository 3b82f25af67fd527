package spec

import (
	"path/filepath"
	"strings"
	"testing"

	"fvsweep/sweep/job"
	"fvsweep/sweep/manifest"
	"fvsweep/sweep/outside"
)

func heron(t *testing.T) *manifest.Manifest {
	t.Helper()
	m, err := ParseManifest("heron.toml", []byte(goodManifest))
	if err != nil {
		t.Fatal(err)
	}
	return m
}

const sideBySide = `name = "side"
[[study]]
case = "vortex"
fixed = { scheme = "muscl", limiter = "minmod", cfl = 0.5, beta = 4 }
axes = { solver = ["fv2d", "heron"] }
refine = { nx = [16, 32] }
`

// A study with a solver axis gives fv2d's runs exactly the IDs they have
// without it, and the program's runs the IDs of outside.Run, with only the
// parameters each solver declares.
func TestSolverAxis(t *testing.T) {
	m := heron(t)
	pl, err := LoadSource("side.toml", []byte(sideBySide), Limits{}, m)
	if err != nil {
		t.Fatal(err)
	}
	if pl.Jobs != 4 || pl.Programs["heron"] != m || len(pl.Studies[0].Solvers) != 2 {
		t.Fatalf("jobs %d programs %v solvers %v", pl.Jobs, pl.Programs, pl.Studies[0].Solvers)
	}
	plain := strings.Replace(sideBySide, `axes = { solver = ["fv2d", "heron"] }`, "", 1)
	ref, err := LoadSource("plain.toml", []byte(plain), Limits{})
	if err != nil {
		t.Fatal(err)
	}
	want := map[string]job.Job{}
	ref.Each(func(j job.Job) error { want[j.ID] = j; return nil })
	jobs, err := pl.Expand()
	if err != nil {
		t.Fatal(err)
	}
	var fv, prog int
	for _, j := range jobs {
		if j.Solver == "" {
			fv++
			w, ok := want[j.ID]
			if !ok || w.Group != j.Group || j.Version != "" || len(w.Params) != len(j.Params) {
				t.Errorf("fv2d job %s %v differs from the plain spec's", j.ID, j.Params)
			}
			continue
		}
		prog++
		if j.Solver != "heron" || j.Version != "0.4.1" || j.SolverLabel() != "heron@0.4.1" {
			t.Errorf("job %s: solver %q version %q", j.ID, j.Solver, j.Version)
		}
		if _, has := j.Params["scheme"]; has {
			t.Errorf("fv2d's scheme reached the program: %v", j.Params)
		}
		if j.Params["limiter"] != "minmod" || j.Params["cfl"] != "0.5" || j.Params["beta"] != "4" {
			t.Errorf("program params %v", j.Params)
		}
		r, err := outside.Resolve(m, "vortex", j.Params)
		if err != nil || r.ID() != j.ID {
			t.Errorf("job %s: outside.Resolve gives %v, %v", j.ID, r, err)
		}
		if !strings.HasPrefix(j.Group, "heron@0.4.1 vortex ") || strings.Contains(j.Group, "nx=") {
			t.Errorf("group %q", j.Group)
		}
	}
	if fv != 2 || prog != 2 {
		t.Errorf("%d fv2d and %d program jobs, want 2 and 2", fv, prog)
	}
	// solver = "heron" alone: only the program's runs, same IDs.
	one := strings.Replace(sideBySide, `axes = { solver = ["fv2d", "heron"] }`, `solver = "heron"`, 1)
	one = strings.Replace(one, `scheme = "muscl", `, ``, 1)
	pl1, err := LoadSource("one.toml", []byte(one), Limits{}, m)
	if err != nil {
		t.Fatal(err)
	}
	got, _ := pl1.Expand()
	if len(got) != 2 || got[0].Solver != "heron" || got[1].Solver != "heron" {
		t.Errorf("solver = heron: %v", got)
	}
	// solver = "fv2d" is the default: the same jobs as no solver at all.
	def := strings.Replace(sideBySide, `axes = { solver = ["fv2d", "heron"] }`, `solver = "fv2d"`, 1)
	pl2, err := LoadSource("def.toml", []byte(def), Limits{})
	if err != nil {
		t.Fatal(err)
	}
	got, _ = pl2.Expand()
	for _, j := range got {
		if _, ok := want[j.ID]; !ok || j.Solver != "" {
			t.Errorf("solver = fv2d: job %v", j)
		}
	}
}

// Errors about solvers and their parameters name the file, line and key,
// as errors about fv2d's parameters do.
func TestSolverErrors(t *testing.T) {
	for _, tc := range []struct{ old, new, want string }{
		{`axes = { solver = ["fv2d", "heron"] }`, `axes = { solver = ["fv2d", "egret"] }`,
			`spec side.toml:5: study 1: axes.solver: unknown solver "egret" (known: fv2d heron; name a program's manifest with --solver FILE)`},
		{`axes = { solver = ["fv2d", "heron"] }`, `solver = ["heron"]`,
			`spec side.toml:5: study 1: solver: want the name of one solver, got a list`},
		{`cfl = 0.5`, `cfl = 1.5`,
			`spec side.toml:4: study 1: fixed.cfl:`},
		{`limiter = "minmod"`, `limiter = "mc"`,
			`spec side.toml:4: study 1: fixed.limiter: "mc" is not one of minmod, vanleer`},
		{`beta = 4`, `beta = 4, width = 2`,
			`spec side.toml:4: study 1: fixed.width: case vortex has no parameter "width"`},
		{`case = "vortex"`, `case = "burgers-sine"`,
			`spec side.toml:5: study 1: axes.solver: solver heron solves euler; case burgers-sine is burgers`},
		{`axes = { solver = ["fv2d", "heron"] }`, "solver = \"heron\"\naxes = { solver = [\"fv2d\"] }",
			`spec side.toml:6: study 1: axes.solver: solver is also set by solver (line 5)`},
	} {
		src := strings.Replace(sideBySide, tc.old, tc.new, 1)
		if tc.new == `case = "burgers-sine"` {
			src = strings.Replace(src, `fixed = { scheme = "muscl", limiter = "minmod", cfl = 0.5, beta = 4 }`, ``, 1)
			src = strings.Replace(src, "case = \"vortex\"\n", "case = \"vortex\"\n\n", 1)
		}
		_, err := LoadSource("side.toml", []byte(src), Limits{}, heron(t))
		if err == nil || !strings.HasPrefix(err.Error(), tc.want) {
			t.Errorf("%s -> %s:\n got %v\nwant %s", tc.old, tc.new, err, tc.want)
		}
	}
	// Without the manifest the spec check knows no heron.
	_, err := LoadSource("side.toml", []byte(sideBySide), Limits{})
	if err == nil || !strings.Contains(err.Error(), `unknown solver "heron" (known: fv2d;`) {
		t.Errorf("no manifest: %v", err)
	}
}

// exampleManifests are the manifests of examples/solvers (their programs
// need not be built to check a spec).
func exampleManifests(t *testing.T) []*manifest.Manifest {
	t.Helper()
	files, _ := filepath.Glob("../../examples/solvers/*/manifest.toml")
	var progs []*manifest.Manifest
	for _, f := range files {
		m, err := LoadManifest(f)
		if err != nil {
			t.Fatal(err)
		}
		progs = append(progs, m)
	}
	return progs
}
