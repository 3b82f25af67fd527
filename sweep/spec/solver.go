package spec

import (
	"fmt"
	"maps"
	"math"
	"slices"
	"strconv"
	"strings"

	"fvsweep/fv2d"
	"fvsweep/sweep/job"
	"fvsweep/sweep/manifest"
	"fvsweep/sweep/outside"
)

// solverKey is the setting that names the solver of a study's runs: the
// study's own key (solver = "heron"), or an axis (axes = { solver = [...] }).
const solverKey = "solver"

// solvers finds the solvers the study m names (its solver key and any
// solver list in fixed, axes or together), sets Study.Solvers and declares
// the parameters of each: fv2d's for fv2d, the case's problem parameters
// and the program's own for a program (package outside). A study that
// names a solver also gets the setting "solver", a choice of the known
// solvers, which its runs vary or fix like any parameter.
func (sp *studyParser) solvers(m map[string]any, c fv2d.Case) error {
	var named []string
	add := func(path []string, key string, raw any) error {
		list, isList := raw.([]any)
		if !isList {
			list = []any{raw}
		}
		for i, v := range list {
			name, ok := v.(string)
			if !ok {
				continue // the value check says why
			}
			p := path
			if isList {
				p = sub(path, strconv.Itoa(i))
			}
			if name != job.BuiltinSolver && sp.progs[name] == nil {
				return sp.fail(p, key, "unknown solver %q (known: %s; name a program's manifest with --solver FILE)",
					name, strings.Join(sp.known(), " "))
			}
			if !slices.Contains(named, name) {
				named = append(named, name)
			}
		}
		return nil
	}
	if raw, ok := m[solverKey]; ok {
		name, isString := raw.(string)
		if !isString {
			return sp.fail(sub(sp.path, solverKey), solverKey, "want the name of one solver, got %s (vary it with axes = { solver = [...] })", typeName(raw))
		}
		if err := add(sub(sp.path, solverKey), solverKey, raw); err != nil {
			return err
		}
		if name != job.BuiltinSolver {
			sp.st.Fixed = map[string]string{solverKey: name}
			if err := sp.claim(solverKey, solverKey, sp.lines.at(sub(sp.path, solverKey))); err != nil {
				return err
			}
		}
	}
	for _, tab := range []string{"fixed", crossKey, axesKey} {
		if t, ok := m[tab].(map[string]any); ok {
			if raw, ok := t[solverKey]; ok {
				if err := add(sub(sp.path, tab, solverKey), tab+"."+solverKey, raw); err != nil {
					return err
				}
			}
		}
	}
	if groups, ok := m["together"].([]any); ok {
		for g, graw := range groups {
			if t, ok := graw.(map[string]any); ok {
				if raw, ok := t[solverKey]; ok {
					key := fmt.Sprintf("together[%d].%s", g+1, solverKey)
					if err := add(sub(sp.path, "together", strconv.Itoa(g), solverKey), key, raw); err != nil {
						return err
					}
				}
			}
		}
	}
	if len(named) == 0 {
		sp.st.Solvers = []string{job.BuiltinSolver}
		for _, prm := range fv2d.ParamsOf(c) {
			sp.params[prm.Name] = prm
		}
		return nil
	}
	sp.st.Solvers = named
	sp.st.programs = map[string]*manifest.Manifest{}
	sp.also = map[string][]fv2d.Param{}
	declare := func(prm fv2d.Param) {
		if _, ok := sp.params[prm.Name]; !ok {
			sp.params[prm.Name] = prm
		} else {
			sp.also[prm.Name] = append(sp.also[prm.Name], prm)
		}
	}
	for _, name := range named {
		if name == job.BuiltinSolver {
			for _, prm := range fv2d.ParamsOf(c) {
				declare(prm)
			}
			continue
		}
		prog := sp.progs[name]
		if err := programFits(prog, c); err != nil {
			path, key := sp.solverPath(m)
			return sp.fail(path, key, "%v", err)
		}
		sp.st.programs[name] = prog
		if sp.used == nil {
			sp.used = map[string]*manifest.Manifest{}
		}
		sp.used[name] = prog
		problem := outside.ProblemParams(c)
		for _, prm := range fv2d.ParamsOf(c) {
			if slices.Contains(problem, prm.Name) {
				declare(prm)
			}
		}
		for _, q := range prog.Params {
			declare(programParam(q))
		}
	}
	sp.params[solverKey] = fv2d.Param{Name: solverKey, Kind: fv2d.Choice, Choices: sp.known(), Default: job.BuiltinSolver,
		Doc: "the solver that runs the study's jobs"}
	return nil
}

// solverPath is the path and key of the first place study m names its
// solver, for an error about the solver itself.
func (sp *studyParser) solverPath(m map[string]any) ([]string, string) {
	if _, ok := m[solverKey]; ok {
		return sub(sp.path, solverKey), solverKey
	}
	for _, tab := range []string{"fixed", crossKey, axesKey} {
		if t, ok := m[tab].(map[string]any); ok {
			if _, ok := t[solverKey]; ok {
				return sub(sp.path, tab, solverKey), tab + "." + solverKey
			}
		}
	}
	return sub(sp.path, "together"), "together"
}

// known lists the solver names a spec may use: fv2d and the given programs.
func (p *parser) known() []string {
	return append([]string{job.BuiltinSolver}, slices.Sorted(maps.Keys(p.progs))...)
}

// programFits refuses a program for case c whose equation differs or
// whose own parameters take a name of the case's problem parameters.
func programFits(m *manifest.Manifest, c fv2d.Case) error {
	if eq := c.Equation().String(); eq != m.Equation {
		return fmt.Errorf("solver %s solves %s; case %s is %s", m.Name, m.Equation, c.Name(), eq)
	}
	problem := outside.ProblemParams(c)
	for _, q := range m.Params {
		if slices.Contains(problem, q.Name) || q.Name == solverKey {
			return fmt.Errorf("solver %s: its parameter %s is also a parameter of case %s", m.Name, q.Name, c.Name())
		}
	}
	return nil
}

// programParam is the declaration of a program's parameter in fv2d's terms,
// so that the spec checks it as it checks fv2d's.
func programParam(q manifest.Param) fv2d.Param {
	prm := fv2d.Param{Name: q.Name, Default: q.Default, Choices: q.Choices, Min: q.Min, Max: q.Max, Doc: q.Doc}
	switch q.Kind {
	case manifest.Int:
		prm.Kind = fv2d.Int
	case manifest.Float:
		prm.Kind = fv2d.Float
	case manifest.Bool:
		prm.Kind = fv2d.Bool
	default:
		prm.Kind = fv2d.Choice
	}
	if math.IsNaN(q.Min) {
		prm.Min = fv2d.Unbounded
	}
	if math.IsNaN(q.Max) {
		prm.Max = fv2d.Unbounded
	}
	return prm
}

// value converts v with prm (paramValue) and checks it against every other
// solver of the study that declares the parameter.
func (sp *studyParser) value(prm fv2d.Param, v any) (string, string) {
	s, msg := paramValue(prm, v)
	if msg != "" {
		return s, msg
	}
	for _, q := range sp.also[prm.Name] {
		if _, msg := paramValue(q, v); msg != "" {
			return "", msg
		}
	}
	return s, msg
}

// resolved is one run of a study as its solver takes it.
type resolved struct {
	solver, version string            // "" for fv2d
	values          fv2d.Values       // fv2d: the run; a program: its case's values (the cost estimate)
	params          map[string]string // every parameter of the run, canonical
	head            string            // "CASE" for fv2d, "NAME@VERSION CASE" for a program
}

// resolveRun resolves the run of st with the settings kv, for the solver
// kv names (fv2d when none). Each solver gets only the settings it
// declares: fv2d's scheme parameters do not reach a program, nor a
// program's own parameters fv2d.
func (st *Study) resolveRun(kv map[string]string) (resolved, error) {
	name := kv[solverKey]
	if name == "" || name == job.BuiltinSolver {
		own := make(map[string]string, len(kv))
		c, err := fv2d.LookupCase(st.Case)
		if err != nil {
			return resolved{}, err
		}
		for _, prm := range fv2d.ParamsOf(c) {
			if v, ok := kv[prm.Name]; ok {
				own[prm.Name] = v
			}
		}
		v, err := fv2d.Resolve(st.Case, own)
		if err != nil {
			return resolved{}, err
		}
		return resolved{values: v, params: v.Map(), head: st.Case}, nil
	}
	m := st.programs[name]
	if m == nil {
		return resolved{}, fmt.Errorf("unknown solver %q", name)
	}
	c, err := fv2d.LookupCase(st.Case)
	if err != nil {
		return resolved{}, err
	}
	problem := outside.ProblemParams(c)
	own := make(map[string]string, len(kv))
	for k, v := range kv {
		if _, isProg := m.Param(k); isProg || slices.Contains(problem, k) {
			own[k] = v
		}
	}
	r, err := outside.Resolve(m, st.Case, own)
	if err != nil {
		return resolved{}, err
	}
	return resolved{solver: m.Name, version: m.Version, values: r.Case, params: r.Params,
		head: m.Name + "@" + m.Version + " " + st.Case}, nil
}

// canon appends the run's identity "HEAD k=v ..." (keys sorted) to dst,
// without the parameters skip names (the grid, for a group): for fv2d
// exactly fv2d.Values.String, for a program outside.Run.Canonical.
func (r *resolved) canon(dst []byte, skip func(string) bool) []byte {
	dst = append(dst, r.head...)
	for _, k := range slices.Sorted(maps.Keys(r.params)) {
		if skip != nil && skip(k) {
			continue
		}
		dst = append(dst, ' ')
		dst = append(dst, k...)
		dst = append(dst, '=')
		dst = append(dst, r.params[k]...)
	}
	return dst
}
