package manifest

import (
	"math"
	"slices"
	"strings"
	"testing"
	"time"
)

func good() *Manifest {
	nan := math.NaN()
	return &Manifest{
		File: "heron.toml", Name: "heron", Version: "0.4.1", Equation: Euler,
		Command: []string{"./heron", "--grid", "{nx}x{ny}", "--limiter", "{limiter}", "--cfl", "{cfl}",
			"--from", "{input}", "--to", "{output}", "--literal", "{{x}}"},
		Input: CSV, Output: CSV,
		Params: []Param{
			{Name: "limiter", Choices: []string{"minmod", "vanleer"}, Default: "vanleer", Min: nan, Max: nan},
			{Name: "cfl", Kind: Float, Min: 0, Max: 1, Default: "0.80"},
		},
	}
}

func TestCheckFillsDefaults(t *testing.T) {
	m := good()
	if err := m.Check(); err != nil {
		t.Fatal(err)
	}
	if m.Timeout != DefaultTimeout || m.Memory != DefaultMemory {
		t.Errorf("defaults: timeout %v memory %d", m.Timeout, m.Memory)
	}
	if !slices.Equal(m.Variables, []string{"rho", "u", "v", "p"}) {
		t.Errorf("variables %v", m.Variables)
	}
	if m.Params[0].Kind != Choice || m.Params[1].Default != "0.8" {
		t.Errorf("params %+v", m.Params)
	}
	if got := m.Placeholders(); !slices.Equal(got, []string{"nx", "ny", "limiter", "cfl", "input", "output"}) {
		t.Errorf("placeholders %v", got)
	}
}

func TestCheckErrors(t *testing.T) {
	for _, tc := range []struct {
		edit func(*Manifest)
		key  string
		msg  string
	}{
		{func(m *Manifest) { m.Name = "Heron" }, "name", "lower-case"},
		{func(m *Manifest) { m.Name = "fv2d" }, "name", "built-in"},
		{func(m *Manifest) { m.Version = "" }, "version", "want 1 to 64"},
		{func(m *Manifest) { m.Version = "1 2" }, "version", "want 1 to 64"},
		{func(m *Manifest) { m.Equation = "navier" }, "equation", "euler or burgers"},
		{func(m *Manifest) { m.Input = "hdf5" }, "input", "none, csv or npy"},
		{func(m *Manifest) { m.Output = "none" }, "output", "csv or npy"},
		{func(m *Manifest) { m.Variables = []string{"rho", "u", "v"} }, "variables", "want an order"},
		{func(m *Manifest) { m.Variables = []string{"rho", "mx", "v", "p"} }, "variables", "want an order"},
		{func(m *Manifest) { m.Timeout = -time.Second }, "timeout", "more than 0"},
		{func(m *Manifest) { m.Memory = 1000 }, "memory", "at least 1MiB"},
		{func(m *Manifest) { m.Command = nil }, "command", "want the program"},
		{func(m *Manifest) { m.Command[0] = "{dir}/heron" }, "command.0", "no placeholders"},
		{func(m *Manifest) { m.Command[2] = "{nx" }, "command.2", "not closed"},
		{func(m *Manifest) { m.Command[2] = "nx}" }, "command.2", "closes no placeholder"},
		{func(m *Manifest) { m.Command[2] = "{N X}" }, "command.2", "placeholder is a parameter name"},
		{func(m *Manifest) { m.Command[10] = "out.csv" }, "command", "never names {output}"},
		{func(m *Manifest) { m.Input = None }, "command", `input = "none"`},
		{func(m *Manifest) { m.Command[8] = "x" }, "command", "never names {input}"},
		{func(m *Manifest) { m.Params[1].Name = "nx" }, "params.nx", "fvsweep sets"},
		{func(m *Manifest) { m.Params[1].Name = "output" }, "params.output", "fvsweep sets"},
		{func(m *Manifest) { m.Params[1].Name = "Cfl" }, "params.Cfl", "lower-case"},
		{func(m *Manifest) { m.Params[1].Name = "limiter" }, "params.limiter", "declared twice"},
		{func(m *Manifest) { m.Params[1].Kind = "string" }, "params.cfl.kind", "want int, float"},
		{func(m *Manifest) { m.Params[1].Kind = "" }, "params.cfl.kind", "want kind"},
		{func(m *Manifest) { m.Params[1].Min = 2 }, "params.cfl.min", "above max"},
		{func(m *Manifest) { m.Params[1].Default = "" }, "params.cfl.default", "needs a default"},
		{func(m *Manifest) { m.Params[1].Default = "1.5" }, "params.cfl.default", "above its maximum"},
		{func(m *Manifest) { m.Params[1].Choices = []string{"a"} }, "params.cfl.choices", "for kind choice"},
		{func(m *Manifest) { m.Params[0].Choices = []string{"a b"} }, "params.limiter.choices", "want 1 to 64"},
		{func(m *Manifest) { m.Params[0].Choices = []string{"$(rm)"} }, "params.limiter.choices", "want 1 to 64"},
		{func(m *Manifest) { m.Params[0].Min = 0 }, "params.limiter.min", "not choice"},
		{func(m *Manifest) { m.Params[0].Default = "superbee" }, "params.limiter.default", "not one of"},
	} {
		m := good()
		tc.edit(m)
		err := m.Check()
		e, ok := err.(*Error)
		if !ok {
			t.Errorf("%s: got %v, want an *Error", tc.key, err)
			continue
		}
		if got := strings.Join(e.Key, "."); got != tc.key || !strings.Contains(e.Msg, tc.msg) || !strings.HasPrefix(e.Error(), "manifest heron.toml: ") {
			t.Errorf("want key %s and %q, got %v (key %s)", tc.key, tc.msg, e, got)
		}
	}
}

func TestParamCheck(t *testing.T) {
	nan := math.NaN()
	for _, tc := range []struct {
		p    Param
		in   string
		ok   bool
		want string
	}{
		{Param{Name: "n", Kind: Int, Min: 1, Max: 8}, "4", true, "4"},
		{Param{Name: "n", Kind: Int, Min: 1, Max: 8}, "+4", true, "4"},
		{Param{Name: "n", Kind: Int, Min: 1, Max: 8}, "9", false, ""},
		{Param{Name: "n", Kind: Int, Min: 1, Max: 8}, "4.0", false, ""},
		{Param{Name: "n", Kind: Int, Min: 1, Max: 8}, "4 --rm", false, ""},
		{Param{Name: "x", Kind: Float, Min: nan, Max: nan}, "5e-1", true, "0.5"},
		{Param{Name: "x", Kind: Float, Min: nan, Max: nan}, "NaN", false, ""},
		{Param{Name: "x", Kind: Float, Min: nan, Max: nan}, "Inf", false, ""},
		{Param{Name: "x", Kind: Float, Min: nan, Max: nan}, "0.5;ls", false, ""},
		{Param{Name: "b", Kind: Bool, Min: nan, Max: nan}, "true", true, "true"},
		{Param{Name: "b", Kind: Bool, Min: nan, Max: nan}, "1", false, ""},
		{Param{Name: "c", Kind: Choice, Choices: []string{"a", "b"}, Min: nan, Max: nan}, "b", true, "b"},
		{Param{Name: "c", Kind: Choice, Choices: []string{"a", "b"}, Min: nan, Max: nan}, "a b", false, ""},
	} {
		err := tc.p.Check(tc.in)
		if (err == nil) != tc.ok {
			t.Errorf("%s %q: err %v, want ok=%v", tc.p.Kind, tc.in, err, tc.ok)
			continue
		}
		if tc.ok && tc.p.Canon(tc.in) != tc.want {
			t.Errorf("%s %q: canon %q, want %q", tc.p.Kind, tc.in, tc.p.Canon(tc.in), tc.want)
		}
	}
}

func TestArgs(t *testing.T) {
	m := good()
	if err := m.Check(); err != nil {
		t.Fatal(err)
	}
	vals := map[string]string{"nx": "64", "ny": "32", "limiter": "minmod", "cfl": "0.5",
		"input": "/tmp/w/in.csv", "output": "/tmp/w/out.csv"}
	got, err := m.Args(vals)
	if err != nil {
		t.Fatal(err)
	}
	want := []string{"./heron", "--grid", "64x32", "--limiter", "minmod", "--cfl", "0.5",
		"--from", "/tmp/w/in.csv", "--to", "/tmp/w/out.csv", "--literal", "{x}"}
	if !slices.Equal(got, want) {
		t.Errorf("args\n got %q\nwant %q", got, want)
	}
	// A value that would be a second argument or a shell word stays one
	// argument, and a program parameter is checked again before substitution.
	vals["limiter"] = "minmod --evil"
	if _, err := m.Args(vals); err == nil || !strings.Contains(err.Error(), "not one of") {
		t.Errorf("unchecked limiter: %v", err)
	}
	vals["limiter"] = "minmod"
	vals["cfl"] = "2"
	if _, err := m.Args(vals); err == nil || !strings.Contains(err.Error(), "above its maximum") {
		t.Errorf("cfl out of range: %v", err)
	}
	vals["cfl"] = "0.5"
	vals["output"] = "a\x00b"
	if _, err := m.Args(vals); err == nil || !strings.Contains(err.Error(), "NUL") {
		t.Errorf("NUL: %v", err)
	}
	delete(vals, "output")
	if _, err := m.Args(vals); err == nil || !strings.Contains(err.Error(), "{output}") {
		t.Errorf("missing value: %v", err)
	}
}
