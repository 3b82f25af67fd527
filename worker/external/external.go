// Package external is the worker's runner for an outside solver program
// described by a manifest: it gives the program a fresh working folder
// with the case's initial cell averages and a job file, starts it directly
// (argv, never a shell) under a timeout and a memory limit, reads and
// checks the field it writes, and judges it with fv2d.Assess, the code
// that judges fv2d's own runs. Every breakdown is a failed outcome with
// its reason.
package external

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"slices"
	"strings"
	"time"

	"fvsweep/fv2d"
	"fvsweep/sweep/field"
	"fvsweep/sweep/job"
	"fvsweep/sweep/manifest"
	"fvsweep/sweep/outside"
	"fvsweep/worker"
)

// Bounds on what a program may hand back besides its field.
const (
	MaxFunctionals      = 64
	MaxFunctionalsBytes = 16 << 10
)

// Runner runs the jobs of one outside program.
type Runner struct {
	m       *manifest.Manifest
	program string // absolute path of the program
	threads int    // goroutines for the quadratures
}

// New returns the runner of m (checked, as spec.LoadManifest returns it).
// It refuses a program that is not found or not executable, so that a
// worker refuses the solver at start-up rather than failing its jobs.
func New(m *manifest.Manifest) (*Runner, error) {
	if err := m.Check(); err != nil {
		return nil, err
	}
	prog, err := exec.LookPath(m.Command[0])
	if err == nil {
		prog, err = filepath.Abs(prog)
	}
	if err != nil {
		return nil, fmt.Errorf("solver %s: program %s: %w", m.Name, m.Command[0], err)
	}
	if st, err := os.Stat(prog); err != nil || !st.Mode().IsRegular() {
		return nil, fmt.Errorf("solver %s: program %s is not a regular file", m.Name, prog)
	}
	return &Runner{m: m, program: prog, threads: runtime.GOMAXPROCS(0)}, nil
}

// Manifest returns the runner's manifest.
func (r *Runner) Manifest() *manifest.Manifest { return r.m }

// Version is the program's version: the worker pulls the jobs of that
// version only (worker.Versioned).
func (r *Runner) Version() string { return r.m.Version }

// files of a run, inside its working folder.
type files struct {
	dir, input, output, job, functionals string
}

// Run runs jb. Parameters the program or the case refuse, and a job ID
// that does not match them, are Permanent errors; a run that breaks down
// is a failed outcome naming the cause; a failure of this machine (no
// temporary folder, the program could not be started) is an error, so the
// job may be tried again elsewhere.
func (r *Runner) Run(ctx context.Context, jb job.Job) (worker.Result, error) {
	start := time.Now()
	run, err := outside.Resolve(r.m, jb.Case, jb.Params)
	if err != nil {
		return worker.Result{}, worker.Permanent(err)
	}
	if id := run.ID(); id != jb.ID {
		return worker.Result{}, worker.Permanent(fmt.Errorf("job %s: its parameters give ID %s", jb.ID, id))
	}
	p, err := fv2d.SetUp(run.Case)
	if err != nil {
		return worker.Result{}, worker.Permanent(err)
	}
	dir, err := os.MkdirTemp("", "fvsweep-"+r.m.Name+"-")
	if err != nil {
		return worker.Result{}, err
	}
	defer os.RemoveAll(dir)
	res, err := r.runIn(ctx, dir, run, p, jb.Snapshot)
	if err != nil {
		return worker.Result{}, err
	}
	res.Outcome.WallS = time.Since(start).Seconds()
	return res, nil
}

func (r *Runner) runIn(ctx context.Context, dir string, run *outside.Run, p *fv2d.Problem, snapshot bool) (worker.Result, error) {
	m := r.m
	nx, ny, quad := run.Case.Int("nx"), run.Case.Int("ny"), run.Case.Int("quad")
	tEnd := fv2d.FinalTime(p, run.Case)
	f := files{dir: dir, output: filepath.Join(dir, "output."+m.Output),
		job: filepath.Join(dir, "job.json"), functionals: filepath.Join(dir, "functionals.json")}
	init := fv2d.InitialAverages(p, nx, ny, quad, r.threads)
	if m.Input != manifest.None {
		f.input = filepath.Join(dir, "input."+m.Input)
		if err := r.writeInput(f.input, init); err != nil {
			return worker.Result{}, err
		}
	}
	jf, err := run.NewJobFile(p, f.input, f.output, f.functionals).Marshal()
	if err == nil {
		err = os.WriteFile(f.job, jf, 0o644)
	}
	if err != nil {
		return worker.Result{}, err
	}
	vals := map[string]string{manifest.PInput: f.input, manifest.POutput: f.output, manifest.PJob: f.job,
		manifest.PFunctionals: f.functionals, manifest.PDir: m.Dir}
	for k, v := range run.Params {
		vals[k] = v
	}
	argv, err := m.Args(vals)
	if err != nil {
		return worker.Result{}, worker.Permanent(err)
	}
	argv[0] = r.program
	env := []string{"PATH=" + os.Getenv("PATH"), "HOME=" + dir, "TMPDIR=" + dir, "LC_ALL=C", "OMP_NUM_THREADS=1", "OPENBLAS_NUM_THREADS=1"}
	ex, err := execute(ctx, argv, dir, env, m.Timeout, m.Memory)
	if err != nil {
		return worker.Result{}, err
	}
	failed := func(format string, args ...any) (worker.Result, error) {
		return worker.Result{Outcome: job.Outcome{Status: job.StatusFailed, Error: fmt.Sprintf(format, args...)}}, nil
	}
	if why := ex.reason(m.Timeout, m.Memory); why != "" {
		return failed("solver %s: %s", m.Name, why)
	}
	final, err := r.readOutput(f.output, p, nx, ny)
	if err != nil {
		return failed("solver %s: output %s: %v", m.Name, filepath.Base(f.output), err)
	}
	final.T = tEnd
	own, err := readFunctionals(f.functionals)
	if err != nil {
		return failed("solver %s: %s: %v", m.Name, filepath.Base(f.functionals), err)
	}
	a := fv2d.Assess(p, init.Totals(), final, quad, r.threads)
	for k, v := range own {
		if _, dup := a.Functionals[k]; dup {
			return failed("solver %s: %s: %q is a functional of case %s", m.Name, filepath.Base(f.functionals), k, run.Case.Case)
		}
		if a.Functionals == nil {
			a.Functionals = map[string]float64{}
		}
		a.Functionals[k] = v
	}
	out := worker.Result{Outcome: job.Outcome{Status: job.StatusDone, TFinal: tEnd, CPUS: ex.cpuS,
		Errors: worker.OutcomeNorms(a.Errors), Totals: worker.OutcomeTotals(a.Totals), Functionals: a.Functionals}}
	if snapshot {
		out.Snapshot = worker.SnapshotOf(final)
	}
	return out, nil
}

// writeInput writes the initial conserved averages init in the program's
// input format and variable order (CSV adds the cell centres x, y first
// when the variables do not name them).
func (r *Runner) writeInput(path string, init *fv2d.State) error {
	c := fromState(init, r.m.Variables)
	fh, err := os.Create(path)
	if err != nil {
		return err
	}
	if r.m.Input == manifest.CSV {
		if c.Var("x") == nil {
			c = c.WithCentres(init.X0, init.Y0, init.DX, init.DY)
		}
		err = field.WriteCSV(fh, c)
	} else {
		err = field.WriteNPY(fh, c)
	}
	if cerr := fh.Close(); err == nil {
		err = cerr
	}
	return err
}

// fromState returns the interior of s as cells of the variables names:
// conserved or primitive, in any order, x and y the cell centres.
func fromState(s *fv2d.State, names []string) *field.Cells {
	c := field.NewCells(names, s.NX, s.NY)
	w := make([]float64, len(s.U))
	for j := 0; j < s.NY; j++ {
		for i := 0; i < s.NX; i++ {
			n := j*s.NX + i
			idx := s.Index(i, j)
			x, y := s.Center(i, j)
			s.Primitive(i, j, w)
			var rho, u, v, p, mx, my, E float64
			if s.Eq == fv2d.Euler {
				rho, u, v, p = w[0], w[1], w[2], w[3]
				mx, my, E = s.U[1][idx], s.U[2][idx], s.U[3][idx]
			} else {
				u = w[0]
			}
			for k, name := range names {
				var val float64
				switch name {
				case "x":
					val = x
				case "y":
					val = y
				case "rho":
					val = rho
				case "mx":
					val = mx
				case "my":
					val = my
				case "E":
					val = E
				case "u":
					val = u
				case "v":
					val = v
				case "p":
					val = p
				}
				c.Data[k][n] = val
			}
		}
	}
	return c
}

// readOutput reads and checks the program's field: its variables (CSV:
// the header; npy: the manifest's order), row count, the cell centres when
// given, finite and physical values. It returns the conserved state.
func (r *Runner) readOutput(path string, p *fv2d.Problem, nx, ny int) (*fv2d.State, error) {
	fh, err := os.Open(path)
	if errors.Is(err, os.ErrNotExist) {
		return nil, errors.New("missing: the program wrote no output file")
	}
	if err != nil {
		return nil, fmt.Errorf("unreadable: %w", err)
	}
	defer fh.Close()
	if st, err := fh.Stat(); err != nil || !st.Mode().IsRegular() {
		return nil, errors.New("unreadable: not a regular file")
	}
	var c *field.Cells
	if r.m.Output == manifest.CSV {
		c, err = field.ReadCSV(fh, nx, ny)
	} else {
		c, err = field.ReadNPY(fh, r.m.Variables, nx, ny)
	}
	if err != nil {
		return nil, fmt.Errorf("unreadable: %w", err)
	}
	vars, err := variableSet(r.m.Equation, c.Names)
	if err != nil {
		return nil, err
	}
	s := fv2d.NewGrid(p, nx, ny)
	if err := c.CheckCentres(s.X0, s.Y0, s.DX, s.DY); err != nil {
		return nil, fmt.Errorf("x, y do not match the grid: %w", err)
	}
	if err := toState(s, c, vars); err != nil {
		return nil, err
	}
	return s, nil
}

// variableSet says whether names (x, y aside) are the primitive or the
// conserved variables of eq.
func variableSet(eq string, names []string) ([]string, error) {
	var got []string
	for _, n := range names {
		if n != "x" && n != "y" {
			got = append(got, n)
		}
	}
	slices.Sort(got)
	for _, set := range [][]string{manifest.Primitive(eq), manifest.Conserved(eq)} {
		want := slices.Sorted(slices.Values(set))
		if slices.Equal(got, want) {
			return set, nil
		}
	}
	want := strings.Join(manifest.Primitive(eq), ",")
	if eq == manifest.Euler {
		want += " or " + strings.Join(manifest.Conserved(eq), ",")
	}
	return nil, fmt.Errorf("variables %s: want %s (x, y optional)", strings.Join(names, ","), want)
}

// toState fills the conserved state s from cells c holding the variables
// vars (primitive ones through fv2d's SetPrimitive), refusing a non-finite
// or non-physical value (density or pressure not positive, a total energy
// that overflows) with the cell that holds it.
func toState(s *fv2d.State, c *field.Cells, vars []string) error {
	col := make([][]float64, len(vars))
	for k, n := range vars {
		col[k] = c.Var(n)
	}
	conserved := vars[len(vars)-1] == "E" || s.Eq == fv2d.Burgers
	w := make([]float64, len(vars))
	for j := 0; j < s.NY; j++ {
		for i := 0; i < s.NX; i++ {
			n := j*s.NX + i
			for k, d := range col {
				if math.IsNaN(d[n]) || math.IsInf(d[n], 0) {
					return fmt.Errorf("cell (%d,%d): %s = %v is not finite", i, j, vars[k], d[n])
				}
			}
			idx := s.Index(i, j)
			if conserved {
				for k, d := range col {
					s.U[k][idx] = d[n]
				}
				if s.Eq == fv2d.Burgers {
					continue
				}
				s.Primitive(i, j, w) // for the pressure
			} else {
				for k, d := range col {
					w[k] = d[n]
				}
				s.SetPrimitive(i, j, w)
			}
			if rho := w[0]; !(rho > 0) {
				return fmt.Errorf("cell (%d,%d): non-physical density rho = %g", i, j, rho)
			}
			if p := w[3]; !(p > 0) {
				return fmt.Errorf("cell (%d,%d): non-physical pressure p = %g", i, j, p)
			}
			if E := s.U[3][idx]; math.IsInf(E, 0) {
				return fmt.Errorf("cell (%d,%d): total energy E = %g overflows", i, j, E)
			}
		}
	}
	return nil
}

// readFunctionals reads the program's own functionals, when it wrote the
// file: a JSON object of at most MaxFunctionals names, each a finite
// number, in at most MaxFunctionalsBytes.
func readFunctionals(path string) (map[string]float64, error) {
	fh, err := os.Open(path)
	if errors.Is(err, os.ErrNotExist) {
		return nil, nil
	}
	if err != nil {
		return nil, err
	}
	defer fh.Close()
	b, err := io.ReadAll(io.LimitReader(fh, MaxFunctionalsBytes+1))
	if err != nil {
		return nil, err
	}
	if len(b) > MaxFunctionalsBytes {
		return nil, fmt.Errorf("larger than %d bytes", MaxFunctionalsBytes)
	}
	var raw map[string]json.Number
	dec := json.NewDecoder(strings.NewReader(string(b)))
	dec.UseNumber()
	if err := dec.Decode(&raw); err != nil {
		return nil, fmt.Errorf(`want {"name": number, ...}: %v`, err)
	}
	if dec.More() {
		return nil, errors.New("trailing data after the object")
	}
	if len(raw) > MaxFunctionals {
		return nil, fmt.Errorf("%d functionals, at most %d", len(raw), MaxFunctionals)
	}
	out := make(map[string]float64, len(raw))
	for k, n := range raw {
		if !validFunctional(k) {
			return nil, fmt.Errorf("name %q: want 1 to 32 letters, digits or '_'", clean([]byte(k)))
		}
		x, err := n.Float64()
		if err != nil || math.IsInf(x, 0) || math.IsNaN(x) {
			return nil, fmt.Errorf("%s = %s is not a finite number", k, n)
		}
		out[k] = x
	}
	return out, nil
}

func validFunctional(s string) bool {
	if len(s) == 0 || len(s) > 32 {
		return false
	}
	for _, r := range s {
		if !(r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z' || r >= '0' && r <= '9' || r == '_') {
			return false
		}
	}
	return true
}
