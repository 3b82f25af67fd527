// Package outside resolves the runs of an outside solver program: the
// parameters of one run (the case's and the program's), its identity, and
// the job file the program is given. It knows no NATS and runs nothing;
// the spec check and the worker's runner (worker/external) share it.
package outside

import (
	"encoding/json"
	"fmt"
	"maps"
	"slices"
	"strings"

	"fvsweep/fv2d"
	"fvsweep/sweep/job"
	"fvsweep/sweep/manifest"
)

// Run is one resolved run of an outside program.
type Run struct {
	Manifest *manifest.Manifest
	// Case is the case's values as fv2d resolves them (its scheme
	// parameters at their defaults, unused): what fv2d.SetUp takes.
	Case fv2d.Values
	// Params is every parameter of the run, canonical: the case's own, the
	// grid and time (nx ny t_end quad, and gamma for Euler) and the
	// program's own.
	Params map[string]string
}

// ProblemParams are the names of the parameters of case c that describe
// the problem an outside program solves: the case's own and the grid and
// time ones (manifest.Reserved), not fv2d's scheme settings.
func ProblemParams(c fv2d.Case) []string {
	var out []string
	for _, p := range fv2d.ParamsOf(c) {
		own := slices.ContainsFunc(c.Params(), func(q fv2d.Param) bool { return q.Name == p.Name })
		if own || slices.Contains(manifest.Reserved, p.Name) {
			out = append(out, p.Name)
		}
	}
	return out
}

// Resolve checks the settings kv of a run of case caseName by program m:
// every key must be one of the case's problem parameters or one of the
// program's, and every placeholder of the command must have a value. It
// fills in defaults and returns the run with canonical values.
func Resolve(m *manifest.Manifest, caseName string, kv map[string]string) (*Run, error) {
	c, err := fv2d.LookupCase(caseName)
	if err != nil {
		return nil, err
	}
	if eq := c.Equation().String(); eq != m.Equation {
		return nil, fmt.Errorf("solver %s solves %s; case %s is %s", m.Name, m.Equation, caseName, eq)
	}
	problem := ProblemParams(c)
	for _, p := range m.Params {
		if slices.Contains(problem, p.Name) {
			return nil, fmt.Errorf("solver %s: parameter %s is also a parameter of case %s", m.Name, p.Name, caseName)
		}
	}
	caseKV := map[string]string{}
	params := map[string]string{}
	for _, k := range slices.Sorted(maps.Keys(kv)) {
		if p, ok := m.Param(k); ok {
			if err := p.Check(kv[k]); err != nil {
				return nil, fmt.Errorf("solver %s: %w", m.Name, err)
			}
			params[k] = p.Canon(kv[k])
			continue
		}
		if !slices.Contains(problem, k) {
			known := append(slices.Clone(problem), names(m.Params)...)
			return nil, fmt.Errorf("solver %s, case %s: unknown parameter %q (known: %s)", m.Name, caseName, k, strings.Join(known, " "))
		}
		caseKV[k] = kv[k]
	}
	v, err := fv2d.Resolve(caseName, caseKV)
	if err != nil {
		return nil, err
	}
	for _, k := range problem {
		params[k] = v.Get(k)
	}
	for _, p := range m.Params {
		if _, ok := params[p.Name]; !ok {
			params[p.Name] = p.Default
		}
	}
	for _, name := range m.Placeholders() {
		if _, ok := params[name]; !ok && !slices.Contains(manifest.Files, name) {
			return nil, fmt.Errorf("solver %s: its command uses {%s}, which is no parameter of case %s or of the program", m.Name, name, caseName)
		}
	}
	return &Run{Manifest: m, Case: v, Params: params}, nil
}

// Canonical is the identity of the run: "NAME@VERSION CASE k=v ..." with
// the keys sorted. It starts with the program and its version, so that no
// run of an outside program shares an ID with an fv2d run ("CASE k=v ...")
// and a new version is a new run.
func (r *Run) Canonical() string {
	var b strings.Builder
	fmt.Fprintf(&b, "%s@%s %s", r.Manifest.Name, r.Manifest.Version, r.Case.Case)
	for _, k := range slices.Sorted(maps.Keys(r.Params)) {
		fmt.Fprintf(&b, " %s=%s", k, r.Params[k])
	}
	return b.String()
}

// ID is the job ID of the run.
func (r *Run) ID() string { return job.NewID(r.Canonical()) }

// JobFile is the JSON the program finds at {job}: everything about its run.
type JobFile struct {
	Solver    string            `json:"solver"`
	Version   string            `json:"version"`
	JobID     string            `json:"job_id"`
	Case      string            `json:"case"`
	Equation  string            `json:"equation"`
	Params    map[string]string `json:"params"` // every parameter of the run, canonical strings
	NX        int               `json:"nx"`
	NY        int               `json:"ny"`
	X0        float64           `json:"x0"` // the domain [x0, x1] x [y0, y1]
	X1        float64           `json:"x1"`
	Y0        float64           `json:"y0"`
	Y1        float64           `json:"y1"`
	DX        float64           `json:"dx"`
	DY        float64           `json:"dy"`
	Boundary  map[string]string `json:"boundary"`        // west east south north: periodic, transmissive or reflective
	Gamma     float64           `json:"gamma,omitempty"` // Euler only
	TEnd      float64           `json:"t_end"`           // the final time to reach
	Variables []string          `json:"variables"`       // order of the variables in the files
	Input     string            `json:"input,omitempty"` // path of the initial cell averages, "" for none
	InputFmt  string            `json:"input_format"`
	Output    string            `json:"output"` // path to write the final cell averages to
	OutputFmt string            `json:"output_format"`
	Funcs     string            `json:"functionals"` // path where the program may write {"name": value}
}

// NewJobFile describes run r of problem p, with the paths of its files.
func (r *Run) NewJobFile(p *fv2d.Problem, input, output, functionals string) JobFile {
	nx, ny := r.Case.Int("nx"), r.Case.Int("ny")
	m := r.Manifest
	jf := JobFile{
		Solver: m.Name, Version: m.Version, JobID: r.ID(), Case: r.Case.Case, Equation: m.Equation,
		Params: r.Params, NX: nx, NY: ny, X0: p.X0, X1: p.X1, Y0: p.Y0, Y1: p.Y1,
		DX: (p.X1 - p.X0) / float64(nx), DY: (p.Y1 - p.Y0) / float64(ny),
		Boundary: map[string]string{"west": p.BC[fv2d.West].String(), "east": p.BC[fv2d.East].String(),
			"south": p.BC[fv2d.South].String(), "north": p.BC[fv2d.North].String()},
		TEnd: fv2d.FinalTime(p, r.Case), Variables: m.Variables,
		Input: input, InputFmt: m.Input, Output: output, OutputFmt: m.Output, Funcs: functionals,
	}
	if p.Eq == fv2d.Euler {
		jf.Gamma = p.Gamma
	}
	return jf
}

// Marshal is the job file's JSON, indented.
func (jf JobFile) Marshal() ([]byte, error) { return json.MarshalIndent(jf, "", "  ") }

func names(ps []manifest.Param) []string {
	out := make([]string, len(ps))
	for i, p := range ps {
		out[i] = p.Name
	}
	return out
}
