package external

import (
	"context"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	"fvsweep/fv2d"
	"fvsweep/sweep/field"
	"fvsweep/sweep/job"
	"fvsweep/sweep/manifest"
	"fvsweep/sweep/outside"
	"fvsweep/worker"
)

// script writes an executable shell script (the program under test; the
// runner itself never uses a shell) and returns its path.
func script(t *testing.T, body string) string {
	t.Helper()
	path := filepath.Join(t.TempDir(), "prog.sh")
	if err := os.WriteFile(path, []byte("#!/bin/sh\n"+body+"\n"), 0o755); err != nil {
		t.Fatal(err)
	}
	return path
}

// cProgram compiles src with the system C compiler, or skips the test.
func cProgram(t *testing.T, src string) string {
	t.Helper()
	cc, err := exec.LookPath("cc")
	if err != nil {
		if cc, err = exec.LookPath("gcc"); err != nil {
			t.Skip("no C compiler (cc or gcc) on this machine")
		}
	}
	dir := t.TempDir()
	if err := os.WriteFile(filepath.Join(dir, "p.c"), []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	bin := filepath.Join(dir, "p")
	if out, err := exec.Command(cc, "-O2", "-o", bin, filepath.Join(dir, "p.c"), "-lm").CombinedOutput(); err != nil {
		t.Fatalf("%s: %v\n%s", cc, err, out)
	}
	return bin
}

func testManifest(t *testing.T, eq string, command []string, input, output string) *manifest.Manifest {
	t.Helper()
	m := &manifest.Manifest{File: "test.toml", Name: "prog", Version: "1", Equation: eq, Command: command,
		Input: input, Output: output, Timeout: 20 * time.Second, Memory: 256 << 20}
	if err := m.Check(); err != nil {
		t.Fatal(err)
	}
	return m
}

// runJob runs case name with kv through a runner of m.
func runJob(t *testing.T, m *manifest.Manifest, name string, kv map[string]string, snapshot bool) (worker.Result, error) {
	t.Helper()
	r, err := New(m)
	if err != nil {
		t.Fatal(err)
	}
	run, err := outside.Resolve(m, name, kv)
	if err != nil {
		t.Fatal(err)
	}
	return r.Run(context.Background(), job.Job{ID: run.ID(), Sweep: "s", Case: name, Solver: m.Name, Params: kv, Snapshot: snapshot})
}

// A program that copies its input to its output hands back the initial
// averages: the runner's errors must be exactly those of fv2d.Assess on
// fv2d's initial averages, with the totals unchanged.
func TestCopyIsJudgedLikeFV2D(t *testing.T) {
	for _, format := range []string{manifest.CSV, manifest.NPY} {
		m := testManifest(t, manifest.Euler, []string{"cp", "{input}", "{output}"}, format, format)
		kv := map[string]string{"nx": "12", "ny": "10", "t_end": "0.5"}
		res, err := runJob(t, m, "vortex", kv, true)
		if err != nil {
			t.Fatal(err)
		}
		o := res.Outcome
		if o.Status != job.StatusDone || o.TFinal != 0.5 || o.WallS <= 0 {
			t.Fatalf("%s: outcome %+v", format, o)
		}
		v, _ := fv2d.Resolve("vortex", kv)
		p, _ := fv2d.SetUp(v)
		init := fv2d.InitialAverages(p, 12, 10, v.Int("quad"), 1)
		init.T = 0.5
		a := fv2d.Assess(p, init.Totals(), init, v.Int("quad"), 1)
		if len(a.Errors) == 0 || len(o.Errors) != len(a.Errors) || len(o.Totals) == 0 {
			t.Fatalf("%s: %d error norms and %d totals, fv2d.Assess gives %d norms", format, len(o.Errors), len(o.Totals), len(a.Errors))
		}
		for k, n := range a.Errors {
			if got := o.Errors[k]; math.Abs(got.L1-n.L1) > 1e-15*n.L1 || math.Abs(got.Linf-n.Linf) > 1e-15*n.Linf || n.L1 == 0 {
				t.Errorf("%s: %s error %+v, fv2d.Assess says %+v", format, k, got, n)
			}
		}
		for k, tot := range o.Totals {
			if math.Abs(tot.Final-tot.Initial) > 1e-14*math.Abs(tot.Initial)+1e-15 {
				t.Errorf("%s: total %s %+v", format, k, tot)
			}
		}
		if res.Snapshot == nil || res.Snapshot.Header.NX != 12 || len(res.Snapshot.Data) != 4 {
			t.Errorf("%s: snapshot %+v", format, res.Snapshot)
		}
	}
}

// The job file names everything about the run.
func TestJobFile(t *testing.T) {
	out := filepath.Join(t.TempDir(), "job.json")
	m := testManifest(t, manifest.Euler, []string{"sh", "-c", `cp "$1" ` + out + ` && cp "$2" "$3"`, "sh", "{job}", "{input}", "{output}"}, manifest.CSV, manifest.CSV)
	if _, err := runJob(t, m, "shocktube", map[string]string{"nx": "8", "ny": "2", "test": "2"}, false); err != nil {
		t.Fatal(err)
	}
	b, err := os.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{`"case": "shocktube"`, `"solver": "prog"`, `"nx": 8`, `"gamma": 1.4`,
		`"west": "transmissive"`, `"t_end": 0.15`, `"x1": 1`, `"test": "2"`, `"input_format": "csv"`, `"variables": [`} {
		if !strings.Contains(string(b), want) {
			t.Errorf("job file lacks %s:\n%s", want, b)
		}
	}
	if strings.Contains(string(b), `"limiter"`) {
		t.Errorf("job file holds fv2d's scheme parameters:\n%s", b)
	}
}

func TestFailures(t *testing.T) {
	kv := map[string]string{"nx": "4", "ny": "3"}
	csv := func(rows ...string) string { return "printf '" + strings.Join(rows, `\n`) + `\n' > "$1"` }
	good := []string{"x,y,u"}
	for j := 0; j < 3; j++ {
		for i := 0; i < 4; i++ {
			good = append(good, strings.Join([]string{ftoa(0.125 + 0.25*float64(i)), ftoa(1.0/6 + float64(j)/3), "1"}, ","))
		}
	}
	for _, tc := range []struct {
		name, body, want string
	}{
		{"exit status", `echo "reading" >&2; echo "bad grid" >&2; exit 3`, "exit status 3; stderr: reading | bad grid"},
		{"signal", `kill -SEGV $$`, "killed by signal segmentation fault"},
		{"missing", `exit 0`, "output output.csv: missing"},
		{"unreadable", `printf 'u\n1\n\x00zz\n' > "$1"`, "unreadable: csv line 3 (cell 1,0)"},
		{"rows", csv("u", "1", "2"), "unreadable: csv: 2 rows, want nx*ny = 4*3 = 12"},
		{"variables", csv(append([]string{"x,y,w"}, good[1:]...)...), "variables x,y,w: want u (x, y optional)"},
		{"non-finite", csv(append(append([]string{"u"}, "1", "1", "1", "1", "1", "nan"), "1", "1", "1", "1", "1", "1")...), "cell (1,1): u = NaN is not finite"},
		{"centres", csv(append([]string{"y,x,u"}, good[1:]...)...), "x, y do not match the grid: cell (0,0)"},
		{"functionals", csv(good...) + `; echo '{"mass": "lots"}' > "$2"`, `functionals.json: want {"name": number`},
		{"functional name", csv(good...) + `; echo '{"a b": 1}' > "$2"`, `functionals.json: name "a b"`},
	} {
		t.Run(tc.name, func(t *testing.T) {
			m := testManifest(t, manifest.Burgers, []string{script(t, tc.body), "{output}", "{functionals}"}, manifest.None, manifest.CSV)
			res, err := runJob(t, m, "burgers-sine", kv, false)
			if err != nil {
				t.Fatal(err)
			}
			if res.Outcome.Status != job.StatusFailed || !strings.Contains(res.Outcome.Error, tc.want) {
				t.Errorf("outcome %s %q, want failed with %q", res.Outcome.Status, res.Outcome.Error, tc.want)
			}
		})
	}
	// The good file passes, with the program's own functional added.
	m := testManifest(t, manifest.Burgers, []string{script(t, csv(good...)+`; echo '{"mass": 0.25}' > "$2"`), "{output}", "{functionals}"}, manifest.None, manifest.CSV)
	res, err := runJob(t, m, "burgers-sine", kv, false)
	if err != nil || res.Outcome.Status != job.StatusDone || res.Outcome.Functionals["mass"] != 0.25 {
		t.Errorf("good output: %+v %v", res.Outcome, err)
	}
}

func ftoa(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }

func TestEulerNonPhysical(t *testing.T) {
	m := testManifest(t, manifest.Euler, []string{script(t, `sed '3s/^[^,]*,[^,]*,[^,]*/0.5,0.5,-1/' "$1" > "$2"`), "{input}", "{output}"}, manifest.CSV, manifest.CSV)
	res, err := runJob(t, m, "vortex", map[string]string{"nx": "4", "ny": "4"}, false)
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(res.Outcome.Error, "cell (1,0): non-physical density rho = -1") && !strings.Contains(res.Outcome.Error, "x, y do not match") {
		t.Errorf("outcome %+v", res.Outcome)
	}
}

func TestTimeout(t *testing.T) {
	m := testManifest(t, manifest.Burgers, []string{script(t, `sleep 30 & sleep 30; echo done > "$1"`), "{output}"}, manifest.None, manifest.CSV)
	m.Timeout = 300 * time.Millisecond
	start := time.Now()
	res, err := runJob(t, m, "burgers-sine", map[string]string{"nx": "4", "ny": "4"}, false)
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(res.Outcome.Error, "killed at the timeout of 300ms") {
		t.Errorf("outcome %+v", res.Outcome)
	}
	if d := time.Since(start); d > 5*time.Second {
		t.Errorf("took %v: the process group was not killed", d)
	}
}

func TestMemoryLimit(t *testing.T) {
	bin := cProgram(t, `#include <stdlib.h>
#include <string.h>
#include <unistd.h>
int main(void) {
	for (int i = 0; i < 1024; i++) {        /* up to 1 GiB, 1 MiB at a time */
		char *p = malloc(1 << 20);
		if (!p) return 7;
		memset(p, 1, 1 << 20);
		usleep(2000);
	}
	return 0;
}`)
	m := testManifest(t, manifest.Burgers, []string{bin, "{output}"}, manifest.None, manifest.CSV)
	m.Memory = 32 << 20
	res, err := runJob(t, m, "burgers-sine", map[string]string{"nx": "4", "ny": "4"}, false)
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(res.Outcome.Error, "over the memory limit: resident") || !strings.Contains(res.Outcome.Error, "> 32.0 MiB") {
		t.Errorf("outcome %+v", res.Outcome)
	}
}

// A program that is not there or cannot be executed is refused at start-up.
func TestProgramRefused(t *testing.T) {
	dir := t.TempDir()
	noexec := filepath.Join(dir, "solver")
	os.WriteFile(noexec, []byte("#!/bin/sh\n"), 0o644)
	for _, prog := range []string{filepath.Join(dir, "absent"), noexec, dir, "no-such-program-anywhere"} {
		m := testManifest(t, manifest.Burgers, []string{prog, "{output}"}, manifest.None, manifest.CSV)
		if _, err := New(m); err == nil {
			t.Errorf("%s: accepted", prog)
		}
	}
}

// Parameters the program or the case refuse, and a job whose ID does not
// match them, are permanent errors, not runs.
func TestRefusedJobs(t *testing.T) {
	m := testManifest(t, manifest.Burgers, []string{"cp", "{input}", "{output}"}, manifest.CSV, manifest.CSV)
	r, err := New(m)
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		jb   job.Job
		want string
	}{
		{job.Job{ID: "x", Case: "vortex", Params: map[string]string{}}, "solver prog solves burgers; case vortex is euler"},
		{job.Job{ID: "x", Case: "burgers-sine", Params: map[string]string{"limiter": "minmod"}}, `unknown parameter "limiter"`},
		{job.Job{ID: "x", Case: "burgers-sine", Params: map[string]string{"nx": "0"}}, "parameter nx: 0 out of range"},
		{job.Job{ID: "x", Case: "burgers-sine", Params: map[string]string{}}, "job x: its parameters give ID"},
	} {
		if _, err := r.Run(context.Background(), tc.jb); err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%+v: %v, want %q", tc.jb, err, tc.want)
		}
	}
}

// toState turns a program's primitive Euler fields into the conserved
// state, with the ideal-gas total energy E = p/(gamma-1) + rho (u^2+v^2)/2
// (common practice; Toro 2009 chapter 1, recalled from memory), takes
// conserved fields as they are, and refuses a cell whose density or
// pressure is not positive, or whose energy overflows, naming it.
func TestToState(t *testing.T) {
	p := &fv2d.Problem{Eq: fv2d.Euler, Gamma: 1.4, X1: 1, Y1: 1}
	cells := func(names []string, rows ...[4]float64) *field.Cells {
		c := field.NewCells(names, 2, 1)
		for n, r := range rows {
			for k := range names {
				c.Data[k][n] = r[k]
			}
		}
		return c
	}
	prim := manifest.Primitive(manifest.Euler)
	cons := manifest.Conserved(manifest.Euler)
	// Toro's test 1, left state (docs/references.md §1): E = 1/0.4; a
	// moving state: E = 1/0.4 + 0.5*1.4*(9+0.25) = 8.975.
	s := fv2d.NewGrid(p, 2, 1)
	if err := toState(s, cells(prim, [4]float64{1, 0, 0, 1}, [4]float64{1.4, 3, -0.5, 1}), prim); err != nil {
		t.Fatal(err)
	}
	for i, want := range [][4]float64{{1, 0, 0, 2.5}, {1.4, 4.2, -0.7, 8.975}} {
		for k := range 4 {
			if got := s.At(k, i, 0); math.Abs(got-want[k]) > 1e-14*math.Max(1, math.Abs(want[k])) {
				t.Errorf("primitive, cell (%d,0): %s = %.17g, want %.17g", i, cons[k], got, want[k])
			}
		}
	}
	s = fv2d.NewGrid(p, 2, 1)
	in := [][4]float64{{1, 0, 0, 2.5}, {1.4, 4.2, -0.7, 8.975}}
	if err := toState(s, cells(cons, in...), cons); err != nil {
		t.Fatal(err)
	}
	for i, want := range in {
		for k := range 4 {
			if got := s.At(k, i, 0); got != want[k] {
				t.Errorf("conserved, cell (%d,0): %s = %.17g, want %.17g as given", i, cons[k], got, want[k])
			}
		}
	}

	good := [4]float64{1, 0, 0, 1}
	for _, tc := range []struct {
		name string
		vars []string
		bad  [4]float64
		want string
	}{
		{"primitive density", prim, [4]float64{-1, 0, 0, 1}, "cell (1,0): non-physical density rho = -1"},
		{"primitive zero density", prim, [4]float64{0, 0, 0, 1}, "cell (1,0): non-physical density rho = 0"},
		{"primitive pressure", prim, [4]float64{1, 0, 0, -0.5}, "cell (1,0): non-physical pressure p = -0.5"},
		{"energy overflow", prim, [4]float64{1, 1e200, 0, 1}, "cell (1,0): total energy E = +Inf overflows"},
		{"conserved density", cons, [4]float64{-1, 0, 0, 2.5}, "cell (1,0): non-physical density rho = -1"},
		// p = (1.4-1) (1 - 4/2) = -0.4 (-0.3999999999999999 in float64).
		{"conserved pressure", cons, [4]float64{1, 2, 0, 1}, "cell (1,0): non-physical pressure p = -0.3999999999999999"},
		{"not finite", prim, [4]float64{1, math.Inf(1), 0, 1}, "cell (1,0): u = +Inf is not finite"},
	} {
		err := toState(fv2d.NewGrid(p, 2, 1), cells(tc.vars, good, tc.bad), tc.vars)
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: got %v, want %q", tc.name, err, tc.want)
		}
	}
}
