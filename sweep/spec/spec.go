package spec

import (
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"regexp"
	"slices"
	"sort"
	"strconv"
	"strings"
	"unicode"

	"github.com/pelletier/go-toml/v2"
	"github.com/pelletier/go-toml/v2/unstable"

	"fvsweep/fv2d"
	"fvsweep/sweep/job"
	"fvsweep/sweep/manifest"
	"fvsweep/sweep/verify"
)

// Limits bound what a spec may ask for. A zero field means its default.
type Limits struct {
	MaxJobs  int   // most jobs a spec may expand to, counted before deduplication
	MaxBytes int64 // most estimated solver memory (fv2d.Estimate) of one job
}

// Defaults of Limits and of the per-study verdict tolerance.
const (
	DefaultMaxJobs  = 200_000
	DefaultMaxBytes = 8 << 30 // 8 GiB
	DefaultOrderTol = verify.DefaultOrderTol
	MaxSpecBytes    = 4 << 20 // largest spec file Load reads
)

// DefaultLimits returns 200,000 jobs and 8 GiB per job.
func DefaultLimits() Limits { return Limits{MaxJobs: DefaultMaxJobs, MaxBytes: DefaultMaxBytes} }

func (l Limits) orDefault() Limits {
	if l.MaxJobs <= 0 {
		l.MaxJobs = DefaultMaxJobs
	}
	if l.MaxBytes <= 0 {
		l.MaxBytes = DefaultMaxBytes
	}
	return l
}

// Spec is a parsed sweep spec: every key is known and every value is one
// its parameter accepts, but its runs are not resolved yet (Check does
// that). A Plan refers to its Spec: do not change a Spec once checked.
type Spec struct {
	Name        string // sweep name: letters, digits, '-' and '_'
	Description string
	File        string // file name used in error messages
	Source      string // the TOML text as read
	Studies     []Study
	// Programs are the outside solver programs the studies name, by name.
	Programs map[string]*manifest.Manifest
}

// Axis is one varied parameter: its name and canonical values in file order.
type Axis struct {
	Name    string
	Values  []string
	Line    int    // line of the key in the spec
	Follows string // the axis this one copies (ny follows nx), "" if the spec lists it
}

// Study is one [[study]] table: a case, fixed parameters, crossed axes,
// groups of axes that vary together, and an optional grid sequence.
//
// The runs of a study are the Cartesian product of Axes, the Together groups
// (each group counts as one axis whose i-th value sets the i-th value of
// every member) and Grid (likewise one axis).
type Study struct {
	Index       int // 1-based position of the [[study]] table in the file
	Line        int // line of the [[study]] header
	Label       string
	Case        string
	Fixed       map[string]string // canonical values
	Axes        []Axis            // crossed, in file order
	Together    [][]Axis          // each group's axes have equal lengths
	Refine      string            // the refinement axis ("nx" or "ny"), "" if none
	Grid        []Axis            // Grid[0] is Refine; the others (ny following nx) vary with it
	Snapshot    bool              // store the final fields
	DesignOrder float64           // expected order of accuracy; 0 = from the scheme
	OrderTol    float64           // accepted |observed - design| order
	OrderTolHi  float64           // accepted observed - design above it; = OrderTol unless set
	Var         string            // conserved variable the tables judge
	Norm        string            // l1, l2 or linf
	Functional  string            // functional for the GCI, "" if none
	// Solvers are the solvers of the study's runs, each once, in the order
	// the spec names them: job.BuiltinSolver (fv2d) unless the study says
	// solver = "NAME" or varies solver in its axes.
	Solvers []string

	// Informational, ErrorGrowthTol and OrderDropTol are how a gate judges
	// the study (job.StudySettings).
	Informational  bool
	ErrorGrowthTol float64
	OrderDropTol   float64
	// Uncertainty is how the tables estimate a functional's discretisation
	// error (job.StudySettings.Uncertainty): "celik", "lsq", or "" for the
	// default by the number of grids (the spec's "auto").
	Uncertainty string

	// ExtendTo is refine.extend_to: the largest grid on the refinement axis
	// to which grids are added while a group's order has not settled; 0 if
	// none (see Extension).
	ExtendTo int

	programs       map[string]*manifest.Manifest // the spec's programs; nil for an fv2d-only study
	extendLine     int                           // line of refine.extend_to, 0 if none
	origin         map[string]origin             // parameter -> where the spec sets it
	functionalLine int                           // line of the functional key, 0 if none
}

type origin struct {
	key  string // "fixed.cfl", "cross.limiter", "together[1].flux", "refine.nx"
	line int
}

// Error is a spec error located by file, line and key.
type Error struct {
	File  string
	Line  int    // 1-based; 0 if unknown
	Study int    // 1-based index of the study; 0 at top level
	Key   string // key path inside the study (or the document), "" if none
	Msg   string
}

func (e *Error) Error() string {
	var b strings.Builder
	b.WriteString("spec ")
	b.WriteString(e.File)
	if e.Line > 0 {
		fmt.Fprintf(&b, ":%d", e.Line)
	}
	b.WriteString(": ")
	if e.Study > 0 {
		fmt.Fprintf(&b, "study %d: ", e.Study)
	}
	if e.Key != "" {
		b.WriteString(e.Key)
		b.WriteString(": ")
	}
	b.WriteString(e.Msg)
	return b.String()
}

// Load reads the spec file at path, parses it and checks it against lim:
// Check(Parse(path, contents, progs...), lim).
func Load(path string, lim Limits, progs ...*manifest.Manifest) (*Plan, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("spec %s: %w", path, err)
	}
	defer f.Close()
	src, err := io.ReadAll(io.LimitReader(f, MaxSpecBytes+1))
	if err != nil {
		return nil, fmt.Errorf("spec %s: %w", path, err)
	}
	if len(src) > MaxSpecBytes {
		return nil, &Error{File: path, Msg: fmt.Sprintf("file is larger than %d bytes", MaxSpecBytes)}
	}
	return LoadSource(path, src, lim, progs...)
}

// LoadSource parses the spec src (file names it in errors) and checks it
// against lim: Check(Parse(file, src, progs...), lim).
func LoadSource(file string, src []byte, lim Limits, progs ...*manifest.Manifest) (*Plan, error) {
	s, err := Parse(file, src, progs...)
	if err != nil {
		return nil, err
	}
	return Check(s, lim)
}

// Parse parses the TOML spec src (file names it in errors) and checks every
// key and value against the cases' parameters and those of the solvers that
// run them, one value at a time; it neither resolves the runs nor applies
// limits (see Check). progs are the outside programs a study may name as
// its solver (manifests as spec.LoadManifest returns them); fv2d is always
// known. Every error is a *Error naming the file, line and key.
func Parse(file string, src []byte, progs ...*manifest.Manifest) (*Spec, error) {
	p := &parser{file: file, progs: map[string]*manifest.Manifest{}}
	for _, m := range progs {
		if o, dup := p.progs[m.Name]; dup {
			return nil, &Error{File: file, Msg: fmt.Sprintf("solver %s is given twice (%s and %s)", m.Name, o.File, m.File)}
		}
		p.progs[m.Name] = m
	}
	var doc map[string]any
	if err := toml.Unmarshal(src, &doc); err != nil {
		e := &Error{File: file, Msg: "malformed TOML: " + strings.TrimPrefix(err.Error(), "toml: ")}
		var de *toml.DecodeError
		if errors.As(err, &de) {
			e.Line, _ = de.Position()
		}
		return nil, e
	}
	p.lines = indexLines(src)
	s, err := p.spec(doc)
	if err != nil {
		return nil, err
	}
	s.Source = string(src)
	return s, nil
}

type parser struct {
	file  string
	lines keyLines
	progs map[string]*manifest.Manifest // known programs by name
	used  map[string]*manifest.Manifest // those a study names
}

func (p *parser) fail(study int, path []string, key, format string, args ...any) *Error {
	return &Error{File: p.file, Line: p.lines.at(path), Study: study, Key: key, Msg: fmt.Sprintf(format, args...)}
}

var (
	topKeys   = []string{"name", "description", "study"}
	studyKeys = []string{"case", "label", "fixed", "cross", "together", "refine", "snapshot",
		"design_order", "order_tol", "order_tol_high", "var", "norm", "functional", "solver",
		"informational", "error_growth_tol", "order_drop_tol", "uncertainty"}
	sweepName = regexp.MustCompile(`^[A-Za-z0-9_-]{1,64}$`)
)

func (p *parser) spec(doc map[string]any) (*Spec, error) {
	if err := p.knownKeys(0, nil, "", doc, topKeys); err != nil {
		return nil, err
	}
	s := &Spec{File: p.file}
	name, ok := doc["name"]
	if !ok {
		return nil, &Error{File: p.file, Line: 1, Key: "name", Msg: "missing: every spec needs a sweep name"}
	}
	if s.Name, ok = name.(string); !ok {
		return nil, p.fail(0, []string{"name"}, "name", "want a string, got %s", typeName(name))
	}
	if !sweepName.MatchString(s.Name) {
		return nil, p.fail(0, []string{"name"}, "name",
			"%q: use 1 to 64 letters, digits, '-' or '_' (the name keys NATS subjects and the store)", s.Name)
	}
	if d, ok := doc["description"]; ok {
		if s.Description, ok = d.(string); !ok {
			return nil, p.fail(0, []string{"description"}, "description", "want a string, got %s", typeName(d))
		}
	}
	raw, ok := doc["study"]
	if !ok {
		return nil, &Error{File: p.file, Line: 1, Key: "study", Msg: "missing: add at least one [[study]] table"}
	}
	list, ok := raw.([]any)
	if !ok || len(list) == 0 {
		return nil, p.fail(0, []string{"study"}, "study", "want one or more [[study]] tables, got %s", typeName(raw))
	}
	for i, r := range list {
		st, err := p.study(i, r)
		if err != nil {
			return nil, err
		}
		s.Studies = append(s.Studies, st)
	}
	s.Programs = p.used
	return s, nil
}

// knownKeys refuses a key of m that is not in known.
func (p *parser) knownKeys(study int, path []string, prefix string, m map[string]any, known []string) error {
	for _, k := range p.lines.ordered(path, m) {
		if !slices.Contains(known, k) {
			return p.fail(study, sub(path, k), prefix+keyName(k), "unknown key (known: %s)", strings.Join(known, " "))
		}
	}
	return nil
}

func (p *parser) study(i int, raw any) (Study, error) {
	path := []string{"study", strconv.Itoa(i)}
	st := Study{Index: i + 1, Line: p.lines.at(path), OrderTol: DefaultOrderTol, Norm: "l1", origin: map[string]origin{}}
	m, ok := raw.(map[string]any)
	if !ok {
		return st, p.fail(st.Index, path, "", "want a table, got %s", typeName(raw))
	}
	known := studyKeys
	if _, old := m[axesKey]; old {
		known = append(slices.Clone(studyKeys), axesKey)
	}
	if err := p.knownKeys(st.Index, path, "", m, known); err != nil {
		return st, err
	}
	cv, ok := m["case"]
	if !ok {
		return st, p.fail(st.Index, path, "case", "missing: name the case to run (see 'fvsweep cases')")
	}
	if st.Case, ok = cv.(string); !ok {
		return st, p.fail(st.Index, sub(path, "case"), "case", "want a string, got %s", typeName(cv))
	}
	c, err := fv2d.LookupCase(st.Case)
	if err != nil {
		return st, p.fail(st.Index, sub(path, "case"), "case", "%v", err)
	}
	sp := &studyParser{parser: p, st: &st, path: path, params: map[string]fv2d.Param{}}
	if err := sp.solvers(m, c); err != nil {
		return st, err
	}
	st.Var = c.Equation().Vars()[0]
	steps := []func(map[string]any) error{sp.fixed, sp.axes, sp.together, sp.refine, sp.options}
	for _, step := range steps {
		if err := step(m); err != nil {
			return st, err
		}
	}
	if slices.Contains(c.Equation().Vars(), st.Var) {
		return st, nil
	}
	return st, p.fail(st.Index, sub(path, "var"), "var", "%q is not a conserved variable of %s (one of %s)",
		st.Var, st.Case, strings.Join(c.Equation().Vars(), ", "))
}

// studyParser reads the keys of one [[study]] table.
type studyParser struct {
	*parser
	st     *Study
	path   []string
	params map[string]fv2d.Param
	// also holds the declarations of a parameter by the study's other
	// solvers: a value must suit every solver that takes the parameter.
	also map[string][]fv2d.Param
}

func (sp *studyParser) fail(path []string, key, format string, args ...any) *Error {
	return sp.parser.fail(sp.st.Index, path, key, format, args...)
}

// table returns the table under key, nil if absent.
func (sp *studyParser) table(m map[string]any, key string) (map[string]any, error) {
	raw, ok := m[key]
	if !ok {
		return nil, nil
	}
	t, ok := raw.(map[string]any)
	if !ok {
		return nil, sp.fail(sub(sp.path, key), key, "want a table like { name = ... }, got %s", typeName(raw))
	}
	return t, nil
}

// claim records that parameter name is set at key; a second place is an error.
func (sp *studyParser) claim(name, key string, line int) error {
	if o, dup := sp.st.origin[name]; dup {
		return &Error{File: sp.file, Line: line, Study: sp.st.Index, Key: key,
			Msg: fmt.Sprintf("%s is also set by %s (line %d); give each parameter in one place", name, o.key, o.line)}
	}
	sp.st.origin[name] = origin{key: key, line: line}
	return nil
}

// param returns the declared parameter name, or an error at path naming key.
func (sp *studyParser) param(path []string, key, name string) (fv2d.Param, error) {
	prm, ok := sp.params[name]
	if !ok {
		names := make([]string, 0, len(sp.params))
		for n := range sp.params {
			names = append(names, n)
		}
		sort.Strings(names)
		return prm, sp.fail(path, key, "case %s has no parameter %q (known: %s)", sp.st.Case, name, strings.Join(names, " "))
	}
	return prm, nil
}

func (sp *studyParser) fixed(m map[string]any) error {
	t, err := sp.table(m, "fixed")
	if err != nil || t == nil {
		return err
	}
	if sp.st.Fixed == nil {
		sp.st.Fixed = map[string]string{}
	}
	base := sub(sp.path, "fixed")
	for _, name := range sp.lines.ordered(base, t) {
		path, key := sub(base, name), "fixed."+keyName(name)
		prm, err := sp.param(path, key, name)
		if err != nil {
			return err
		}
		s, msg := sp.value(prm, t[name])
		if msg != "" {
			if _, isList := t[name].([]any); isList {
				msg = "want one value (lists go under cross), got a list"
			}
			return sp.fail(path, key, "%s", msg)
		}
		if err := sp.claim(name, key, sp.lines.at(path)); err != nil {
			return err
		}
		sp.st.Fixed[name] = s
	}
	return nil
}

// axis reads the list raw of parameter name found at path, claimed as key.
// In a together group (distinct false) a value may repeat; the tuples differ.
func (sp *studyParser) axis(path []string, key, name string, raw any, distinct bool) (Axis, error) {
	a := Axis{Name: name, Line: sp.lines.at(path)}
	prm, err := sp.param(path, key, name)
	if err != nil {
		return a, err
	}
	list, ok := raw.([]any)
	if !ok {
		return a, sp.fail(path, key, "want a list of values like [a, b], got %s", typeName(raw))
	}
	if len(list) == 0 {
		return a, sp.fail(path, key, "empty list: an axis needs at least one value")
	}
	seen := map[string]bool{}
	for i, v := range list {
		ep := sub(path, strconv.Itoa(i))
		s, msg := sp.value(prm, v)
		if msg != "" {
			return a, sp.fail(ep, key, "%s", msg)
		}
		if distinct && seen[s] {
			return a, sp.fail(ep, key, "value %s is listed twice", s)
		}
		seen[s] = true
		a.Values = append(a.Values, s)
	}
	return a, sp.claim(name, key, a.Line)
}

// crossKey is the key of the crossed parameters; axesKey its name before
// 0.2, still read (stored specs use it) and deprecated.
const (
	crossKey = "cross"
	axesKey  = "axes"
)

func (sp *studyParser) axes(m map[string]any) error {
	key := crossKey
	if _, ok := m[axesKey]; ok {
		if _, both := m[crossKey]; both {
			return sp.fail(sub(sp.path, axesKey), axesKey, "give the crossed parameters under cross only (axes is its old name)")
		}
		key = axesKey
	}
	t, err := sp.table(m, key)
	if err != nil || t == nil {
		return err
	}
	base := sub(sp.path, key)
	for _, name := range sp.lines.ordered(base, t) {
		a, err := sp.axis(sub(base, name), key+"."+keyName(name), name, t[name], true)
		if err != nil {
			return err
		}
		sp.st.Axes = append(sp.st.Axes, a)
	}
	return nil
}

func (sp *studyParser) together(m map[string]any) error {
	raw, ok := m["together"]
	if !ok {
		return nil
	}
	base := sub(sp.path, "together")
	groups, ok := raw.([]any)
	if !ok || len(groups) == 0 {
		return sp.fail(base, "together", "want a list of tables like [{ a = [..], b = [..] }], got %s", typeName(raw))
	}
	for g, graw := range groups {
		gpath := sub(base, strconv.Itoa(g))
		gkey := fmt.Sprintf("together[%d]", g+1)
		t, ok := graw.(map[string]any)
		if !ok || len(t) == 0 {
			return sp.fail(gpath, gkey, "want a table of equally long lists like { a = [..], b = [..] }, got %s", typeName(graw))
		}
		var group []Axis
		for _, name := range sp.lines.ordered(gpath, t) {
			a, err := sp.axis(sub(gpath, name), gkey+"."+keyName(name), name, t[name], false)
			if err != nil {
				return err
			}
			if len(group) > 0 && len(a.Values) != len(group[0].Values) {
				return sp.fail(sub(gpath, name), gkey+"."+keyName(name), "%d values, but %s has %d: lists that vary together need equal lengths",
					len(a.Values), group[0].Name, len(group[0].Values))
			}
			group = append(group, a)
		}
		if err := sp.distinctTuples(gpath, gkey, group); err != nil {
			return err
		}
		sp.st.Together = append(sp.st.Together, group)
	}
	return nil
}

func (sp *studyParser) distinctTuples(path []string, key string, group []Axis) error {
	seen := map[string]int{}
	for i := range group[0].Values {
		var parts []string
		for _, a := range group {
			parts = append(parts, a.Name+"="+a.Values[i])
		}
		t := strings.Join(parts, " ")
		if j, dup := seen[t]; dup {
			return sp.fail(path, key, "entries %d and %d are the same (%s)", j+1, i+1, t)
		}
		seen[t] = i
	}
	return nil
}

func (sp *studyParser) refine(m map[string]any) error {
	t, err := sp.table(m, "refine")
	if err != nil || t == nil {
		return err
	}
	base := sub(sp.path, "refine")
	names := sp.lines.ordered(base, t)
	if len(names) == 0 {
		return sp.fail(base, "refine", "empty: give the grid sequence, e.g. refine = { nx = [32, 64, 128] }")
	}
	for _, name := range names {
		if name == extendKey {
			continue
		}
		if name != "nx" && name != "ny" {
			return sp.fail(sub(base, name), "refine."+keyName(name), "the refinement axis is nx or ny (or both, varying together)")
		}
	}
	for _, name := range []string{"nx", "ny"} {
		raw, ok := t[name]
		if !ok {
			continue
		}
		path, key := sub(base, name), "refine."+name
		a, err := sp.axis(path, key, name, raw, true)
		if err != nil {
			return err
		}
		if len(a.Values) < 2 {
			return sp.fail(path, key, "a grid sequence needs at least 2 grids")
		}
		for i := 1; i < len(a.Values); i++ {
			if atoi(a.Values[i]) <= atoi(a.Values[i-1]) {
				return sp.fail(sub(path, strconv.Itoa(i)), key, "grids must be listed coarse to fine (%s after %s)", a.Values[i], a.Values[i-1])
			}
		}
		if len(sp.st.Grid) > 0 && len(a.Values) != len(sp.st.Grid[0].Values) {
			return sp.fail(path, key, "%d values, but refine.nx has %d: nx and ny refine together", len(a.Values), len(sp.st.Grid[0].Values))
		}
		sp.st.Grid = append(sp.st.Grid, a)
	}
	if len(sp.st.Grid) == 0 {
		return sp.fail(base, "refine", "give the grid sequence beside %s, e.g. refine = { nx = [32, 64, 128], %s = 512 }", extendKey, extendKey)
	}
	sp.st.Refine = sp.st.Grid[0].Name
	if err := sp.follow(); err != nil {
		return err
	}
	return sp.extendTo(base, t)
}

// follow lets the other grid size follow the refinement axis (square cells
// on a square domain) unless the spec sets it somewhere.
func (sp *studyParser) follow() error {
	other := "ny"
	if sp.st.Refine == "ny" {
		other = "nx"
	}
	if _, set := sp.st.origin[other]; set {
		return nil
	}
	lead := sp.st.Grid[0]
	prm := sp.params[other]
	for i, s := range lead.Values {
		if err := prm.Check(s); err != nil {
			return sp.fail(sub(sp.path, "refine", lead.Name, strconv.Itoa(i)), "refine."+lead.Name,
				"%s follows %s: %s (set %s in fixed to keep it apart)", other, lead.Name, trimParam(err, other), other)
		}
	}
	sp.st.Grid = append(sp.st.Grid, Axis{Name: other, Values: append([]string(nil), lead.Values...), Line: lead.Line, Follows: lead.Name})
	return nil
}

// options reads the study's scalar settings.
func (sp *studyParser) options(m map[string]any) error {
	st := sp.st
	for _, key := range []string{"label", "var", "norm", "functional", "uncertainty"} {
		raw, ok := m[key]
		if !ok {
			continue
		}
		s, ok := raw.(string)
		if !ok || strings.TrimSpace(s) == "" || len(s) > 80 || strings.IndexFunc(s, unicode.IsControl) >= 0 {
			return sp.fail(sub(sp.path, key), key, "want a one-line string of 1 to 80 characters, got %s", typeName(raw))
		}
		switch key {
		case "label":
			st.Label = s
		case "var":
			st.Var = s
		case "norm":
			if s != "l1" && s != "l2" && s != "linf" {
				return sp.fail(sub(sp.path, key), key, "%q is not one of l1, l2, linf", s)
			}
			st.Norm = s
		case "functional":
			st.Functional, st.functionalLine = s, sp.lines.at(sub(sp.path, key))
		case "uncertainty":
			switch s {
			case job.UncertaintyCelik, job.UncertaintyLSQ:
				st.Uncertainty = s
			case "auto":
			default:
				return sp.fail(sub(sp.path, key), key, "%q is not one of celik, lsq, auto", s)
			}
		}
	}
	if st.Label == "" {
		st.Label = st.Case
	}
	var err error
	if st.Snapshot, err = sp.flag(m, "snapshot"); err != nil {
		return err
	}
	if st.Informational, err = sp.flag(m, "informational"); err != nil {
		return err
	}
	if st.ErrorGrowthTol, err = sp.number(m, "error_growth_tol", job.DefaultErrorGrowthTol, false); err != nil {
		return err
	}
	if st.OrderDropTol, err = sp.number(m, "order_drop_tol", job.DefaultOrderDropTol, false); err != nil {
		return err
	}
	if st.DesignOrder, err = sp.number(m, "design_order", 0, true); err != nil {
		return err
	}
	if st.OrderTol, err = sp.number(m, "order_tol", DefaultOrderTol, false); err != nil {
		return err
	}
	st.OrderTolHi, err = sp.number(m, "order_tol_high", st.OrderTol, false)
	return err
}

// flag reads true or false under key, false if absent.
func (sp *studyParser) flag(m map[string]any, key string) (bool, error) {
	raw, ok := m[key]
	if !ok {
		return false, nil
	}
	b, ok := raw.(bool)
	if !ok {
		return false, sp.fail(sub(sp.path, key), key, "want true or false, got %s", typeName(raw))
	}
	return b, nil
}

// number reads a finite number >= 0 (> 0 if positive) under key, def if absent.
func (sp *studyParser) number(m map[string]any, key string, def float64, positive bool) (float64, error) {
	raw, ok := m[key]
	if !ok {
		return def, nil
	}
	var x float64
	switch v := raw.(type) {
	case int64:
		x = float64(v)
	case float64:
		x = v
	default:
		return 0, sp.fail(sub(sp.path, key), key, "want a number, got %s", typeName(raw))
	}
	if math.IsNaN(x) || math.IsInf(x, 0) || x < 0 || (positive && x == 0) || x > 100 {
		bound := ">= 0"
		if positive {
			bound = "> 0"
		}
		return 0, sp.fail(sub(sp.path, key), key, "%v is out of range (a finite number %s and <= 100)", raw, bound)
	}
	return x, nil
}

// paramValue converts the TOML value v to the canonical string of prm, or
// returns a one-line message saying why it cannot.
func paramValue(prm fv2d.Param, v any) (string, string) {
	var s string
	switch x := v.(type) {
	case string:
		if prm.Kind != fv2d.Choice {
			return "", fmt.Sprintf("want %s, got the string %q", kindName(prm), x)
		}
		s = x
	case int64:
		if prm.Kind == fv2d.Bool {
			return "", fmt.Sprintf("want %s, got the integer %d", kindName(prm), x)
		}
		s = strconv.FormatInt(x, 10)
	case float64:
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return "", fmt.Sprintf("%v is not a finite number", x)
		}
		if prm.Kind != fv2d.Float {
			return "", fmt.Sprintf("want %s, got the float %v", kindName(prm), x)
		}
		s = strconv.FormatFloat(x, 'g', -1, 64)
	case bool:
		if prm.Kind != fv2d.Bool {
			return "", fmt.Sprintf("want %s, got the boolean %v", kindName(prm), x)
		}
		s = strconv.FormatBool(x)
	default:
		return "", fmt.Sprintf("want %s, got %s", kindName(prm), typeName(v))
	}
	if err := prm.Check(s); err != nil {
		return "", trimParam(err, prm.Name)
	}
	return prm.Canon(s), ""
}

// trimParam drops fv2d's "parameter NAME: " prefix; the key already names it.
func trimParam(err error, name string) string {
	return strings.TrimPrefix(err.Error(), "parameter "+name+": ")
}

func kindName(p fv2d.Param) string {
	switch p.Kind {
	case fv2d.Int:
		return "an integer"
	case fv2d.Float:
		return "a number"
	case fv2d.Bool:
		return "true or false"
	}
	return "one of " + strings.Join(p.Choices, ", ")
}

// typeName describes a decoded TOML value for error messages.
func typeName(v any) string {
	switch x := v.(type) {
	case string:
		return fmt.Sprintf("the string %q", x)
	case int64:
		return fmt.Sprintf("the integer %d", x)
	case float64:
		return fmt.Sprintf("the float %v", x)
	case bool:
		return fmt.Sprintf("the boolean %v", x)
	case []any:
		if len(x) == 0 {
			return "an empty list"
		}
		return "a list"
	case map[string]any:
		return "a table"
	}
	return "a date or time"
}

// point names the varied values of a run, for error messages.
func (st *Study) point(kv map[string]string) string {
	var parts []string
	for _, d := range st.dims() {
		for _, a := range d {
			parts = append(parts, a.Name+"="+kv[a.Name])
		}
	}
	if len(parts) == 0 {
		return "the fixed parameters"
	}
	sort.Strings(parts)
	return strings.Join(parts, " ")
}

// ParseBytes reads a size such as "8GiB", "512M", "1.5e9" or "4096" in
// bytes; K, M, G and T are powers of 1024, with or without "iB" or "B".
func ParseBytes(s string) (int64, error) {
	t := strings.ToUpper(strings.TrimSpace(s))
	t = strings.TrimSuffix(strings.TrimSuffix(t, "B"), "I")
	mult := 1.0
	if n := len(t); n > 0 {
		if i := strings.IndexByte("KMGT", t[n-1]); i >= 0 {
			t, mult = strings.TrimSpace(t[:n-1]), math.Pow(1024, float64(i+1))
		}
	}
	x, err := strconv.ParseFloat(t, 64)
	if err != nil || !(x > 0) || x*mult > math.MaxInt64/2 {
		return 0, fmt.Errorf("size %q: want a positive number of bytes, e.g. 8GiB", s)
	}
	return int64(x * mult), nil
}

func byteString(b int64) string {
	x, u := float64(b), 0
	for x >= 1024 && u < 4 {
		x /= 1024
		u++
	}
	return fmt.Sprintf("%.4g %s", x, [...]string{"B", "KiB", "MiB", "GiB", "TiB"}[u])
}

func countString(n int) string {
	if n == math.MaxInt {
		return "more than 9.2e18"
	}
	return strconv.Itoa(n)
}

func satAdd(a, b int) int {
	if a > math.MaxInt-b {
		return math.MaxInt
	}
	return a + b
}

func satMul(a, b int) int {
	if a != 0 && b > math.MaxInt/a {
		return math.MaxInt
	}
	return a * b
}

func atoi(s string) int { n, _ := strconv.Atoi(s); return n }

var bareKey = regexp.MustCompile(`^[A-Za-z0-9_-]+$`)

// keyName spells a TOML key as a bare key or, failing that, quoted.
func keyName(k string) string {
	if bareKey.MatchString(k) {
		return k
	}
	return strconv.Quote(k)
}

func sub(path []string, keys ...string) []string {
	return append(path[:len(path):len(path)], keys...)
}

// keyLines maps each key path of a TOML document (tables, keys and array
// elements; array elements by decimal index) to its line, and remembers the
// order in which the keys appear. Built from the syntax tree of
// pelletier/go-toml's unstable parser after the document decoded cleanly.
type keyLines struct {
	line map[string]int
	seq  map[string]int
}

func pathKey(path []string) string { return strings.Join(path, "\x00") }

func indexLines(src []byte) keyLines {
	kl := keyLines{line: map[string]int{}, seq: map[string]int{}}
	var p unstable.Parser
	p.Reset(src)
	arrays := map[string]int{} // [[array table]] path -> tables so far
	var table []string
	for p.NextExpression() {
		e := p.Expression()
		switch e.Kind {
		case unstable.Table, unstable.ArrayTable:
			table = nil
			it := e.Key()
			for it.Next() {
				k := it.Node()
				table = append(table, string(k.Data))
				ps := pathKey(table)
				line := lineOf(&p, k)
				kl.set(ps, line)
				if e.Kind == unstable.ArrayTable && it.IsLast() {
					arrays[ps]++
					table = append(table, strconv.Itoa(arrays[ps]-1))
					kl.set(pathKey(table), line)
				} else if n := arrays[ps]; n > 0 {
					table = append(table, strconv.Itoa(n-1))
				}
			}
		case unstable.KeyValue:
			kl.keyValue(&p, table, e)
		}
	}
	return kl
}

func (kl keyLines) keyValue(p *unstable.Parser, prefix []string, kv *unstable.Node) {
	path := sub(prefix)
	line := 0
	it := kv.Key()
	for it.Next() {
		k := it.Node()
		line = lineOf(p, k)
		path = append(path, string(k.Data))
		kl.set(pathKey(path), line)
	}
	kl.value(p, path, kv.Value(), line)
}

func (kl keyLines) value(p *unstable.Parser, path []string, v *unstable.Node, line int) {
	switch v.Kind {
	case unstable.Array:
		it := v.Children()
		for i := 0; it.Next(); {
			c := it.Node()
			if c.Kind == unstable.Comment {
				continue
			}
			cl := line
			if c.Kind != unstable.Array { // arrays carry no byte range
				cl = lineOf(p, c)
			}
			ep := sub(path, strconv.Itoa(i))
			kl.set(pathKey(ep), cl)
			kl.value(p, ep, c, cl)
			i++
		}
	case unstable.InlineTable:
		it := v.Children()
		for it.Next() {
			if c := it.Node(); c.Kind == unstable.KeyValue {
				kl.keyValue(p, path, c)
			}
		}
	}
}

func lineOf(p *unstable.Parser, n *unstable.Node) int { return p.Shape(n.Raw).Start.Line }

func (kl keyLines) set(path string, line int) {
	if _, ok := kl.line[path]; !ok {
		kl.line[path] = line
		kl.seq[path] = len(kl.seq)
	}
}

// at returns the line of path or of its nearest ancestor with one, 0 if none.
func (kl keyLines) at(path []string) int {
	for n := len(path); n > 0; n-- {
		if l, ok := kl.line[pathKey(path[:n])]; ok {
			return l
		}
	}
	return 0
}

// ordered returns the keys of the table m at path in file order.
func (kl keyLines) ordered(path []string, m map[string]any) []string {
	keys := make([]string, 0, len(m))
	for k := range m {
		keys = append(keys, k)
	}
	rank := make(map[string]int, len(keys))
	for _, k := range keys {
		r, ok := kl.seq[pathKey(sub(path, k))]
		if !ok {
			r = math.MaxInt
		}
		rank[k] = r
	}
	sort.Slice(keys, func(i, j int) bool {
		if ri, rj := rank[keys[i]], rank[keys[j]]; ri != rj {
			return ri < rj
		}
		return keys[i] < keys[j]
	})
	return keys
}
