// Package manifest describes an outside solver program: what it is called,
// which law it solves, how it is started, which files it reads and writes,
// its limits and its own parameters. It checks a manifest and expands the
// program's command line for one run. It imports only the standard library;
// sweep/spec decodes the TOML file into a Manifest.
package manifest

import (
	"fmt"
	"math"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"time"
)

// Manifest is one outside program.
type Manifest struct {
	File      string        // the file it was read from, for errors; "" when built in code
	Dir       string        // the folder of that file: {dir}, and the base of a relative program path
	Name      string        // what specs call it: solver = "NAME"
	Version   string        // part of every job ID: a new version reruns
	Equation  string        // Euler or Burgers
	Command   []string      // argv with {placeholders}; Command[0] the program
	Input     string        // None, CSV or NPY: the initial cell averages it is given
	Output    string        // CSV or NPY: the final cell averages it writes
	Variables []string      // order of the variables in its files (default the primitive ones)
	Timeout   time.Duration // wall-clock limit of one run
	Memory    int64         // resident memory limit of one run, bytes
	Params    []Param       // its own parameters, in file order
}

// The equations, formats and defaults of a manifest.
const (
	Euler   = "euler"
	Burgers = "burgers"

	None = "none"
	CSV  = "csv"
	NPY  = "npy"

	DefaultTimeout = time.Hour
	DefaultMemory  = int64(4) << 30

	MaxTimeout = 7 * 24 * time.Hour
	MinMemory  = int64(1) << 20
)

// The placeholders every command may use besides the parameters.
const (
	PInput       = "input"       // path of the input file (input = csv or npy)
	POutput      = "output"      // path where the program writes its result
	PJob         = "job"         // path of the job file (JSON)
	PFunctionals = "functionals" // path where the program may write {"name": value}
	PDir         = "dir"         // the manifest's folder (scripts beside it)
)

// Files are the placeholders naming files of the run; no parameter may
// have these names.
var Files = []string{PInput, POutput, PJob, PFunctionals, PDir}

// Reserved are the names of the grid and case parameters fvsweep sets for
// every run (besides a case's own); a program parameter may not take them.
var Reserved = []string{"nx", "ny", "t_end", "gamma", "quad"}

// Kind is the type of a program parameter's value.
type Kind string

// The kinds of parameter values.
const (
	Int    Kind = "int"
	Float  Kind = "float"
	Choice Kind = "choice"
	Bool   Kind = "bool"
)

// Param declares one of the program's own parameters. Min and Max are NaN
// when unbounded; they bound Int and Float values (inclusive).
type Param struct {
	Name    string
	Kind    Kind
	Choices []string
	Min     float64
	Max     float64
	Default string
	Doc     string
}

// Error is a manifest error naming the file and the key (a path such as
// ["params", "cfl", "max"]); Line is set by the reader of the file.
type Error struct {
	File string
	Line int
	Key  []string
	Msg  string
}

func (e *Error) Error() string {
	var b strings.Builder
	b.WriteString("manifest ")
	b.WriteString(e.File)
	if e.Line > 0 {
		fmt.Fprintf(&b, ":%d", e.Line)
	}
	b.WriteString(": ")
	if len(e.Key) > 0 {
		b.WriteString(strings.Join(e.Key, "."))
		b.WriteString(": ")
	}
	b.WriteString(e.Msg)
	return b.String()
}

var (
	nameRE    = regexp.MustCompile(`^[a-z][a-z0-9_-]{0,31}$`)
	versionRE = regexp.MustCompile(`^[A-Za-z0-9][A-Za-z0-9._+-]{0,63}$`)
	paramRE   = regexp.MustCompile(`^[a-z][a-z0-9_]{0,31}$`)
)

// Primitive and Conserved are the variable names of equation eq ("euler"
// or "burgers"), in their usual order.
func Primitive(eq string) []string {
	if eq == Euler {
		return []string{"rho", "u", "v", "p"}
	}
	return []string{"u"}
}

// Conserved: see Primitive.
func Conserved(eq string) []string {
	if eq == Euler {
		return []string{"rho", "mx", "my", "E"}
	}
	return []string{"u"}
}

// Check validates m and fills in the defaults (Variables, Timeout, Memory,
// a Param's Kind when it only lists choices). The error is an *Error
// naming the key.
func (m *Manifest) Check() error {
	fail := func(msg string, key ...string) error { return &Error{File: m.File, Key: key, Msg: msg} }
	if !nameRE.MatchString(m.Name) {
		return fail(fmt.Sprintf("%q: want 1 to 32 lower-case letters, digits, '_' or '-', starting with a letter", m.Name), "name")
	}
	if m.Name == "fv2d" {
		return fail(`"fv2d" is the built-in solver's name`, "name")
	}
	if !versionRE.MatchString(m.Version) {
		return fail(fmt.Sprintf("%q: want 1 to 64 letters, digits or . _ + -", m.Version), "version")
	}
	if m.Equation != Euler && m.Equation != Burgers {
		return fail(fmt.Sprintf("%q: want euler or burgers", m.Equation), "equation")
	}
	switch m.Input {
	case "":
		m.Input = None
	case None, CSV, NPY:
	default:
		return fail(fmt.Sprintf("%q: want none, csv or npy", m.Input), "input")
	}
	if m.Output != CSV && m.Output != NPY {
		return fail(fmt.Sprintf("%q: want csv or npy", m.Output), "output")
	}
	if err := m.checkVariables(); err != nil {
		return err
	}
	switch {
	case m.Timeout == 0:
		m.Timeout = DefaultTimeout
	case m.Timeout < 0 || m.Timeout > MaxTimeout:
		return fail(fmt.Sprintf("%s: want more than 0 and at most %s", m.Timeout, MaxTimeout), "timeout")
	}
	switch {
	case m.Memory == 0:
		m.Memory = DefaultMemory
	case m.Memory < MinMemory:
		return fail(fmt.Sprintf("%d bytes: want at least 1MiB", m.Memory), "memory")
	}
	seen := map[string]bool{}
	for i := range m.Params {
		p := &m.Params[i]
		if err := m.checkParam(p); err != nil {
			return err
		}
		if seen[p.Name] {
			return fail("declared twice", "params", p.Name)
		}
		seen[p.Name] = true
	}
	return m.checkCommand()
}

func (m *Manifest) checkVariables() error {
	if len(m.Variables) == 0 {
		m.Variables = Primitive(m.Equation)
		return nil
	}
	got := slices.Clone(m.Variables)
	if len(got) >= 2 && got[0] == "x" && got[1] == "y" {
		got = got[2:]
	}
	slices.Sort(got)
	for _, set := range [][]string{Primitive(m.Equation), Conserved(m.Equation)} {
		want := slices.Clone(set)
		slices.Sort(want)
		if slices.Equal(got, want) {
			return nil
		}
	}
	return &Error{File: m.File, Key: []string{"variables"}, Msg: fmt.Sprintf("%s: want an order of %s or of %s for %s, optionally after x, y",
		strings.Join(m.Variables, ","), strings.Join(Primitive(m.Equation), ","), strings.Join(Conserved(m.Equation), ","), m.Equation)}
}

func (m *Manifest) checkParam(p *Param) error {
	fail := func(msg string, key ...string) error {
		return &Error{File: m.File, Key: append([]string{"params", p.Name}, key...), Msg: msg}
	}
	if !paramRE.MatchString(p.Name) {
		return fail("want 1 to 32 lower-case letters, digits or '_', starting with a letter")
	}
	if slices.Contains(Files, p.Name) || slices.Contains(Reserved, p.Name) {
		return fail("a name fvsweep sets for every run; choose another")
	}
	if p.Kind == "" && len(p.Choices) > 0 {
		p.Kind = Choice
	}
	switch p.Kind {
	case Int, Float, Bool:
		if len(p.Choices) > 0 {
			return fail(fmt.Sprintf("choices are for kind choice, not %s", p.Kind), "choices")
		}
	case Choice:
		if len(p.Choices) == 0 {
			return fail("kind choice needs choices", "choices")
		}
		for _, c := range p.Choices {
			if !safeValue(c) {
				return fail(fmt.Sprintf("%q: want 1 to 64 letters, digits or . _ + - : /", c), "choices")
			}
		}
	case "":
		return fail("want kind (int, float, bool) or choices", "kind")
	default:
		return fail(fmt.Sprintf("%q: want int, float, choice or bool", p.Kind), "kind")
	}
	if (p.Kind == Choice || p.Kind == Bool) && (!math.IsNaN(p.Min) || !math.IsNaN(p.Max)) {
		return fail(fmt.Sprintf("min and max are for int and float, not %s", p.Kind), "min")
	}
	if !math.IsNaN(p.Min) && !math.IsNaN(p.Max) && p.Min > p.Max {
		return fail(fmt.Sprintf("min %g is above max %g", p.Min, p.Max), "min")
	}
	if p.Default == "" {
		return fail("every parameter needs a default", "default")
	}
	if err := p.Check(p.Default); err != nil {
		return fail(err.Error(), "default")
	}
	p.Default = p.Canon(p.Default)
	return nil
}

// safeValue reports whether a choice is a plain word: 1 to 64 letters,
// digits or . _ + - : / (no spaces, quotes, braces or shell words).
func safeValue(s string) bool {
	if len(s) == 0 || len(s) > 64 {
		return false
	}
	for _, r := range s {
		if !(r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z' || r >= '0' && r <= '9' || strings.ContainsRune("._+-:/", r)) {
			return false
		}
	}
	return true
}

func (m *Manifest) checkCommand() error {
	if len(m.Command) == 0 || m.Command[0] == "" {
		return &Error{File: m.File, Key: []string{"command"}, Msg: "want the program and its arguments, e.g. [\"./solver\", \"{input}\"]"}
	}
	uses := map[string]bool{}
	for i, a := range m.Command {
		names, err := placeholders(a)
		if err == nil && i == 0 && len(names) > 0 {
			err = fmt.Errorf("the program path takes no placeholders")
		}
		if err == nil && strings.IndexByte(a, 0) >= 0 {
			err = fmt.Errorf("holds a NUL byte")
		}
		if err != nil {
			return &Error{File: m.File, Key: []string{"command", strconv.Itoa(i)}, Msg: fmt.Sprintf("%q: %v", a, err)}
		}
		for _, n := range names {
			uses[n] = true
		}
	}
	if !uses[POutput] {
		return &Error{File: m.File, Key: []string{"command"}, Msg: "never names {output}, the file the program writes"}
	}
	if m.Input != None && !uses[PInput] {
		return &Error{File: m.File, Key: []string{"command"}, Msg: fmt.Sprintf("input = %q but the command never names {input}", m.Input)}
	}
	if m.Input == None && uses[PInput] {
		return &Error{File: m.File, Key: []string{"command"}, Msg: `names {input} but input = "none"`}
	}
	return nil
}

// Param returns the declaration of the program parameter name.
func (m *Manifest) Param(name string) (Param, bool) {
	for _, p := range m.Params {
		if p.Name == name {
			return p, true
		}
	}
	return Param{}, false
}

// Placeholders returns the names the command uses, each once, in order.
func (m *Manifest) Placeholders() []string {
	var out []string
	for _, a := range m.Command {
		names, _ := placeholders(a)
		for _, n := range names {
			if !slices.Contains(out, n) {
				out = append(out, n)
			}
		}
	}
	return out
}

// Check parses s as a value of p and reports a one-line error naming the
// parameter when it is of the wrong type, out of range or not a choice.
func (p Param) Check(s string) error {
	switch p.Kind {
	case Int:
		n, err := strconv.ParseInt(s, 10, 64)
		if err != nil {
			return fmt.Errorf("parameter %s: %q is not an integer", p.Name, s)
		}
		return p.inRange(float64(n), s)
	case Float:
		x, err := strconv.ParseFloat(s, 64)
		if err != nil || math.IsInf(x, 0) || math.IsNaN(x) {
			return fmt.Errorf("parameter %s: %q is not a finite number", p.Name, s)
		}
		return p.inRange(x, s)
	case Bool:
		if s != "true" && s != "false" {
			return fmt.Errorf("parameter %s: %q is not true or false", p.Name, s)
		}
		return nil
	case Choice:
		if !slices.Contains(p.Choices, s) {
			return fmt.Errorf("parameter %s: %q is not one of %s", p.Name, s, strings.Join(p.Choices, ", "))
		}
		return nil
	}
	return fmt.Errorf("parameter %s: unknown kind %q", p.Name, p.Kind)
}

func (p Param) inRange(x float64, s string) error {
	if !math.IsNaN(p.Min) && x < p.Min {
		return fmt.Errorf("parameter %s: %s is below its minimum %g", p.Name, s, p.Min)
	}
	if !math.IsNaN(p.Max) && x > p.Max {
		return fmt.Errorf("parameter %s: %s is above its maximum %g", p.Name, s, p.Max)
	}
	return nil
}

// Canon is the canonical spelling of a valid value s, so that "0.50" and
// "0.5" are the same run.
func (p Param) Canon(s string) string {
	switch p.Kind {
	case Int:
		n, _ := strconv.ParseInt(s, 10, 64)
		return strconv.FormatInt(n, 10)
	case Float:
		x, _ := strconv.ParseFloat(s, 64)
		return strconv.FormatFloat(x, 'g', -1, 64)
	}
	return s
}
