package fv2d

import (
	"fmt"
	"strings"
)

// method is one entry of a table of numerical methods (fluxes, limiters):
// the name a parameter value selects, the function, and a one-line
// description with its source.
type method[F any] struct {
	name string
	fn   F
	doc  string
}

// methods is a table of the methods of one kind ("Euler flux", "limiter").
// The order of list is the order of the parameter's choices. Every name the
// package knows for such a method (the choices, the exported name lists, the
// lookups) comes from the table, so a method is added by adding one entry.
type methods[F any] struct {
	kind string
	list []method[F]
}

// names returns the names of the table, in order.
func (t methods[F]) names() []string {
	out := make([]string, len(t.list))
	for i, m := range t.list {
		out[i] = m.name
	}
	return out
}

// byName returns the function called name, or an error naming the kind and
// the known names.
func (t methods[F]) byName(name string) (F, error) {
	for _, m := range t.list {
		if m.name == name {
			return m.fn, nil
		}
	}
	var zero F
	return zero, fmt.Errorf("unknown %s %q (known: %s)", t.kind, name, strings.Join(t.names(), " "))
}
