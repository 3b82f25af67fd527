package manifest

import (
	"fmt"
	"strings"
)

// A command argument is literal text with placeholders {name} (name: a
// lower-case letter, then lower-case letters, digits or '_'); "{{" and "}}"
// stand for a literal brace. Any other brace is an error.

// placeholders returns the names in argument a, in order, or an error
// describing the first malformed brace.
func placeholders(a string) ([]string, error) {
	var names []string
	err := scan(a, func(lit string) {}, func(name string) { names = append(names, name) })
	return names, err
}

// scan walks a, calling lit for each run of literal text and ph for each
// placeholder name.
func scan(a string, lit func(string), ph func(string)) error {
	for i := 0; i < len(a); {
		switch c := a[i]; {
		case c == '{' && strings.HasPrefix(a[i:], "{{"):
			lit("{")
			i += 2
		case c == '}' && strings.HasPrefix(a[i:], "}}"):
			lit("}")
			i += 2
		case c == '}':
			return fmt.Errorf("'}' at byte %d closes no placeholder (write }} for a brace)", i)
		case c == '{':
			end := strings.IndexByte(a[i:], '}')
			if end < 0 {
				return fmt.Errorf("'{' at byte %d is not closed (write {{ for a brace)", i)
			}
			name := a[i+1 : i+end]
			if !paramRE.MatchString(name) {
				return fmt.Errorf("{%s}: a placeholder is a parameter name of lower-case letters, digits and '_'", name)
			}
			ph(name)
			i += end + 1
		default:
			j := strings.IndexAny(a[i:], "{}")
			if j < 0 {
				j = len(a) - i
			}
			lit(a[i : i+j])
			i += j
		}
	}
	return nil
}

// Args expands the command for one run: each placeholder is replaced, in
// place, by its value in vals (the run's case parameters, the program's
// parameters and the file paths). A value of a declared program parameter
// is checked against its declaration again here; no value may hold a NUL
// byte. The result is an argv, each element one argument: it is never
// given to a shell. A placeholder without a value is an error.
func (m *Manifest) Args(vals map[string]string) ([]string, error) {
	out := make([]string, len(m.Command))
	for i, a := range m.Command {
		var b strings.Builder
		var bad error
		err := scan(a, func(lit string) { b.WriteString(lit) }, func(name string) {
			v, ok := vals[name]
			switch {
			case bad != nil:
				return
			case !ok:
				bad = fmt.Errorf("solver %s: command argument %d uses {%s}, which this run has no value for", m.Name, i, name)
				return
			case strings.IndexByte(v, 0) >= 0:
				bad = fmt.Errorf("solver %s: the value of {%s} holds a NUL byte", m.Name, name)
				return
			}
			if p, ok := m.Param(name); ok {
				if err := p.Check(v); err != nil {
					bad = fmt.Errorf("solver %s: %w", m.Name, err)
					return
				}
			}
			b.WriteString(v)
		})
		if err == nil {
			err = bad
		}
		if err != nil {
			return nil, err
		}
		out[i] = b.String()
	}
	return out, nil
}
