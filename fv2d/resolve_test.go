package fv2d

import (
	"slices"
	"strings"
	"testing"
)

// Resolve takes a case's parameters as ParamsOf lists them (common ones of
// the equation, overridden and extended by the case's own; ParamsOf's doc):
// with nothing set, a run has exactly those parameters, each at its
// canonical default (a Completer may then fill in some); setting any one to
// its default changes nothing; an unknown name is refused with the list.
func TestResolveUsesParamsOf(t *testing.T) {
	for _, c := range Cases() {
		params := ParamsOf(c)
		v, err := Resolve(c.Name(), nil)
		if err != nil {
			t.Errorf("%s: Resolve with the defaults: %v", c.Name(), err)
			continue
		}
		names := paramNames(params)
		slices.Sort(names)
		if got := v.Keys(); !slices.Equal(got, names) {
			t.Errorf("%s: keys %v, want %v", c.Name(), got, names)
		}
		_, completes := c.(Completer)
		for _, p := range params {
			if !completes && v.Get(p.Name) != p.Canon(p.Default) {
				t.Errorf("%s: %s = %q, want the default %q", c.Name(), p.Name, v.Get(p.Name), p.Canon(p.Default))
			}
			w, err := Resolve(c.Name(), map[string]string{p.Name: p.Default})
			if err != nil || w.String() != v.String() {
				t.Errorf("%s: %s set to its default: %v\n got %s\nwant %s", c.Name(), p.Name, err, w.String(), v.String())
			}
		}
		_, err = Resolve(c.Name(), map[string]string{"no_such": "1"})
		if want := "(known: " + strings.Join(paramNames(params), " ") + ")"; err == nil || !strings.HasSuffix(err.Error(), want) {
			t.Errorf("%s: unknown parameter: %v, want it to end %q", c.Name(), err, want)
		}
	}
}
