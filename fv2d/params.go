package fv2d

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"
)

// Kind is the type of a parameter value.
type Kind int

const (
	Int    Kind = iota // a decimal integer
	Float              // a finite float64
	Choice             // one of Param.Choices
	Bool               // true or false
)

func (k Kind) String() string {
	switch k {
	case Int:
		return "int"
	case Float:
		return "float"
	case Choice:
		return "choice"
	case Bool:
		return "bool"
	}
	return "kind?"
}

// Param declares one key=value parameter of a case: its name, type, default
// and meaning. Min and Max bound Int and Float values; MinOpen/MaxOpen make
// the bound exclusive (cfl in (0, 1]). NaN bounds mean unbounded.
type Param struct {
	Name    string
	Kind    Kind
	Default string
	Choices []string // Kind == Choice
	Min     float64
	Max     float64
	MinOpen bool
	MaxOpen bool
	Doc     string
}

// Unbounded is the value of Param.Min or Param.Max when there is no bound.
var Unbounded = math.NaN()

// Check parses s as a value of p and reports a one-line error naming the
// parameter when s is of the wrong type or out of range.
func (p Param) Check(s string) error {
	switch p.Kind {
	case Int:
		n, err := strconv.Atoi(strings.TrimSpace(s))
		if err != nil {
			return fmt.Errorf("parameter %s: %q is not an integer", p.Name, s)
		}
		return p.checkRange(float64(n), s)
	case Float:
		x, err := strconv.ParseFloat(strings.TrimSpace(s), 64)
		if err != nil {
			return fmt.Errorf("parameter %s: %q is not a number", p.Name, s)
		}
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return fmt.Errorf("parameter %s: %q is not finite", p.Name, s)
		}
		return p.checkRange(x, s)
	case Choice:
		for _, c := range p.Choices {
			if s == c {
				return nil
			}
		}
		return fmt.Errorf("parameter %s: %q is not one of %s", p.Name, s, strings.Join(p.Choices, ", "))
	case Bool:
		if _, err := strconv.ParseBool(s); err != nil {
			return fmt.Errorf("parameter %s: %q is not true or false", p.Name, s)
		}
		return nil
	}
	return fmt.Errorf("parameter %s: unknown kind", p.Name)
}

func (p Param) checkRange(x float64, s string) error {
	if !math.IsNaN(p.Min) && (x < p.Min || (p.MinOpen && x == p.Min)) {
		op := ">="
		if p.MinOpen {
			op = ">"
		}
		return fmt.Errorf("parameter %s: %s out of range (must be %s %s)", p.Name, s, op, fmtBound(p.Min))
	}
	if !math.IsNaN(p.Max) && (x > p.Max || (p.MaxOpen && x == p.Max)) {
		op := "<="
		if p.MaxOpen {
			op = "<"
		}
		return fmt.Errorf("parameter %s: %s out of range (must be %s %s)", p.Name, s, op, fmtBound(p.Max))
	}
	return nil
}

func fmtBound(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }

// Canon returns the canonical spelling of a valid value s of p, so that
// "0.50", "0.5" and "5e-1" give the same job identity.
func (p Param) Canon(s string) string {
	s = strings.TrimSpace(s)
	switch p.Kind {
	case Int:
		n, _ := strconv.Atoi(s)
		return strconv.Itoa(n)
	case Float:
		x, _ := strconv.ParseFloat(s, 64)
		return strconv.FormatFloat(x, 'g', -1, 64)
	case Bool:
		b, _ := strconv.ParseBool(s)
		return strconv.FormatBool(b)
	}
	return s
}

// Values holds the fully resolved parameters of one run: every parameter of
// the case, defaults filled in, each value checked and canonical.
type Values struct {
	Case string
	m    map[string]string
}

// Get returns the canonical value of name; it panics if the case has no such
// parameter (a programming error: Resolve has checked every name).
func (v Values) Get(name string) string {
	s, ok := v.m[name]
	if !ok {
		panic("fv2d: case " + v.Case + " has no parameter " + name)
	}
	return s
}

// Has reports whether the case declares parameter name.
func (v Values) Has(name string) bool { _, ok := v.m[name]; return ok }

// Int returns parameter name as an int.
func (v Values) Int(name string) int { n, _ := strconv.Atoi(v.Get(name)); return n }

// Float returns parameter name as a float64.
func (v Values) Float(name string) float64 {
	x, _ := strconv.ParseFloat(v.Get(name), 64)
	return x
}

// Bool returns parameter name as a bool.
func (v Values) Bool(name string) bool { b, _ := strconv.ParseBool(v.Get(name)); return b }

// Map returns a copy of all resolved parameters.
func (v Values) Map() map[string]string {
	out := make(map[string]string, len(v.m))
	for k, s := range v.m {
		out[k] = s
	}
	return out
}

// Keys returns the parameter names in sorted order.
func (v Values) Keys() []string { return sortedKeys(v.m) }

// String is "case k1=v1 k2=v2 ..." with keys sorted: the canonical identity
// of a run.
func (v Values) String() string {
	var b strings.Builder
	b.WriteString(v.Case)
	for _, k := range v.Keys() {
		b.WriteByte(' ')
		b.WriteString(k)
		b.WriteByte('=')
		b.WriteString(v.m[k])
	}
	return b.String()
}

// Resolve checks the key=value settings kv against the parameters of case
// name, fills in defaults and returns the canonical Values. The error names
// the unknown case, the unknown parameter, or the value that is of the wrong
// type or out of range, in one line.
func Resolve(name string, kv map[string]string) (Values, error) {
	c, err := LookupCase(name)
	if err != nil {
		return Values{}, err
	}
	params := caseParams{own: c.Params(), common: &commonTables[c.Equation()]}
	m := make(map[string]string, len(params.common.list)+len(params.own))
	for _, k := range sortedKeys(kv) {
		p, ok := params.get(k)
		if !ok {
			return Values{}, fmt.Errorf("case %s: unknown parameter %q (known: %s)", name, k, strings.Join(paramNames(ParamsOf(c)), " "))
		}
		if err := p.Check(kv[k]); err != nil {
			return Values{}, fmt.Errorf("case %s: %w", name, err)
		}
		m[k] = p.Canon(kv[k])
	}
	for _, p := range params.own {
		if _, ok := m[p.Name]; !ok {
			m[p.Name] = p.Canon(p.Default)
		}
	}
	for i, p := range params.common.list {
		if _, ok := m[p.Name]; !ok {
			m[p.Name] = params.common.defaults[i]
		}
	}
	v := Values{Case: name, m: m}
	if cc, ok := c.(interface{ Validate(Values) error }); ok {
		if err := cc.Validate(v); err != nil {
			return Values{}, fmt.Errorf("case %s: %w", name, err)
		}
	}
	if cc, ok := c.(Completer); ok {
		set := cc.Complete(v)
		for _, k := range sortedKeys(set) {
			p, ok := params.get(k)
			if !ok {
				return Values{}, fmt.Errorf("case %s: completion sets unknown parameter %q", name, k)
			}
			if err := p.Check(set[k]); err != nil {
				return Values{}, fmt.Errorf("case %s: completion: %w", name, err)
			}
			m[k] = p.Canon(set[k])
		}
	}
	return v, nil
}

// paramTable is a parameter list with its index by name and the canonical
// spelling of each default.
type paramTable struct {
	list     []Param
	index    map[string]int
	defaults []string // defaults[i] is list[i].Canon(list[i].Default)
}

func newParamTable(ps []Param) paramTable {
	t := paramTable{list: ps, index: make(map[string]int, len(ps)), defaults: make([]string, len(ps))}
	for i, p := range ps {
		t.index[p.Name] = i
		t.defaults[i] = p.Canon(p.Default)
	}
	return t
}

// commonTables holds CommonParams of each equation, built once when the
// package is initialised (the limiter and flux tables it names are fixed by
// then) and only read afterwards: Resolve runs once per run of a sweep, and
// rebuilding the list there took about a tenth of checking a large spec.
var commonTables = [...]paramTable{
	Burgers: newParamTable(CommonParams(Burgers)),
	Euler:   newParamTable(CommonParams(Euler)),
}

// caseParams are the parameters of one case as ParamsOf lists them (the
// common ones of its equation, overridden and extended by the case's own),
// without building that list.
type caseParams struct {
	own    []Param
	common *paramTable
}

func (cp caseParams) get(name string) (Param, bool) {
	for _, p := range cp.own {
		if p.Name == name {
			return p, true
		}
	}
	if i, ok := cp.common.index[name]; ok {
		return cp.common.list[i], true
	}
	return Param{}, false
}

// Completer is a case some of whose parameters follow from others: a preset
// (shocktube test=N) fixes the states and the final time that the explicit
// parameters would otherwise give. Resolve calls Complete once the values
// are checked and validated, and stores what it returns (checked and in
// canonical spelling) over them, so that the resolved values are those the
// run uses. Complete must be idempotent: resolving a run's resolved values
// again gives the same values (workers re-resolve a job's parameters).
type Completer interface {
	Complete(v Values) map[string]string
}

// IsCompleter reports whether case name completes its resolved values, so
// that a run's values are not just its settings over the defaults.
func IsCompleter(name string) bool {
	c, err := LookupCase(name)
	if err != nil {
		return false
	}
	_, ok := c.(Completer)
	return ok
}

func sortedKeys(m map[string]string) []string {
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	sort.Strings(keys)
	return keys
}

func paramNames(ps []Param) []string {
	out := make([]string, len(ps))
	for i, p := range ps {
		out[i] = p.Name
	}
	return out
}
