package spec

import (
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"time"

	"github.com/pelletier/go-toml/v2"

	"fvsweep/sweep/manifest"
)

// MaxManifestBytes bounds the size of a solver manifest file.
const MaxManifestBytes = 64 << 10

var (
	manifestKeys = []string{"name", "version", "equation", "command", "input", "output", "variables", "timeout", "memory", "params"}
	paramKeys    = []string{"kind", "choices", "min", "max", "default", "doc"}
)

// LoadManifest reads the solver manifest at path (TOML; see package
// manifest and docs/own-solver.md), checks it and returns it. A relative
// program path with a slash ("./heron", "bin/heron") is made relative to
// the manifest's folder; a bare name ("python3") is left for a PATH
// lookup. Every error is a *manifest.Error naming the file, line and key.
func LoadManifest(path string) (*manifest.Manifest, error) {
	m, _, err := ReadManifest(path)
	return m, err
}

// ReadManifest is LoadManifest that also returns the bytes it read and
// checked, for a caller that sends the manifest's text on (a submission
// to the coordinator) and must send what was checked.
func ReadManifest(path string) (*manifest.Manifest, []byte, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, nil, fmt.Errorf("manifest %s: %w", path, err)
	}
	defer f.Close()
	src, err := io.ReadAll(io.LimitReader(f, MaxManifestBytes+1))
	if err != nil {
		return nil, nil, fmt.Errorf("manifest %s: %w", path, err)
	}
	if len(src) > MaxManifestBytes {
		return nil, nil, &manifest.Error{File: path, Msg: fmt.Sprintf("file is larger than %d bytes", MaxManifestBytes)}
	}
	dir, err := filepath.Abs(filepath.Dir(path))
	if err != nil {
		return nil, nil, fmt.Errorf("manifest %s: %w", path, err)
	}
	m, err := ParseManifest(path, src)
	if err != nil {
		return nil, nil, err
	}
	m.Dir = dir
	if p := m.Command[0]; !filepath.IsAbs(p) && strings.ContainsRune(p, '/') {
		m.Command[0] = filepath.Join(dir, p)
	}
	return m, src, nil
}

// ParseManifest decodes and checks the manifest src (file names it in
// errors). It leaves Dir empty and the program path as written.
func ParseManifest(file string, src []byte) (*manifest.Manifest, error) {
	var doc map[string]any
	if err := toml.Unmarshal(src, &doc); err != nil {
		e := &manifest.Error{File: file, Msg: "malformed TOML: " + strings.TrimPrefix(err.Error(), "toml: ")}
		var de *toml.DecodeError
		if errors.As(err, &de) {
			e.Line, _ = de.Position()
		}
		return nil, e
	}
	mp := manifestParser{file: file, lines: indexLines(src)}
	m, err := mp.manifest(doc)
	if err == nil {
		err = m.Check()
	}
	var me *manifest.Error
	if errors.As(err, &me) && me.Line == 0 {
		me.Line = mp.lines.at(me.Key)
	}
	if err != nil {
		return nil, err
	}
	return m, nil
}

type manifestParser struct {
	file  string
	lines keyLines
}

func (mp *manifestParser) fail(key []string, format string, args ...any) error {
	return &manifest.Error{File: mp.file, Line: mp.lines.at(key), Key: key, Msg: fmt.Sprintf(format, args...)}
}

func (mp *manifestParser) manifest(doc map[string]any) (*manifest.Manifest, error) {
	for _, k := range mp.lines.ordered(nil, doc) {
		if !slices.Contains(manifestKeys, k) {
			return nil, mp.fail([]string{k}, "unknown key (known: %s)", strings.Join(manifestKeys, ", "))
		}
	}
	m := &manifest.Manifest{File: mp.file}
	var err error
	str := func(key string, dst *string, required bool) {
		if err != nil {
			return
		}
		*dst, err = mp.str(doc, []string{key}, required)
	}
	str("name", &m.Name, true)
	str("version", &m.Version, true)
	str("equation", &m.Equation, true)
	str("input", &m.Input, false)
	str("output", &m.Output, true)
	var timeout, memory string
	str("timeout", &timeout, false)
	str("memory", &memory, false)
	if err != nil {
		return nil, err
	}
	if m.Command, err = mp.strings(doc, "command", true); err != nil {
		return nil, err
	}
	if m.Variables, err = mp.strings(doc, "variables", false); err != nil {
		return nil, err
	}
	if timeout != "" {
		if m.Timeout, err = time.ParseDuration(timeout); err != nil || m.Timeout <= 0 {
			return nil, mp.fail([]string{"timeout"}, "%q: want a duration such as \"90s\", \"15m\" or \"2h\"", timeout)
		}
	}
	if memory != "" {
		if m.Memory, err = ParseBytes(memory); err != nil {
			return nil, mp.fail([]string{"memory"}, "%v", err)
		}
	}
	raw, ok := doc["params"]
	if !ok {
		return m, nil
	}
	tab, ok := raw.(map[string]any)
	if !ok {
		return nil, mp.fail([]string{"params"}, "want a table of parameters, got %s", typeName(raw))
	}
	for _, name := range mp.lines.ordered([]string{"params"}, tab) {
		p, err := mp.param(name, tab[name])
		if err != nil {
			return nil, err
		}
		m.Params = append(m.Params, p)
	}
	return m, nil
}

func (mp *manifestParser) str(t map[string]any, key []string, required bool) (string, error) {
	raw, ok := t[key[len(key)-1]]
	if !ok {
		if required {
			return "", mp.fail(key[:len(key)-1], "missing key %s", key[len(key)-1])
		}
		return "", nil
	}
	s, ok := raw.(string)
	if !ok {
		return "", mp.fail(key, "want a string, got %s", typeName(raw))
	}
	return s, nil
}

func (mp *manifestParser) strings(doc map[string]any, key string, required bool) ([]string, error) {
	raw, ok := doc[key]
	if !ok {
		if required {
			return nil, mp.fail(nil, "missing key %s", key)
		}
		return nil, nil
	}
	list, ok := raw.([]any)
	if !ok {
		return nil, mp.fail([]string{key}, "want a list of strings, got %s", typeName(raw))
	}
	out := make([]string, len(list))
	for i, v := range list {
		s, ok := v.(string)
		if !ok {
			return nil, mp.fail([]string{key, fmt.Sprint(i)}, "want a string, got %s", typeName(v))
		}
		out[i] = s
	}
	return out, nil
}

// param decodes one entry of [params]: an inline or ordinary table.
func (mp *manifestParser) param(name string, raw any) (manifest.Param, error) {
	key := []string{"params", name}
	p := manifest.Param{Name: name, Min: math.NaN(), Max: math.NaN()}
	t, ok := raw.(map[string]any)
	if !ok {
		return p, mp.fail(key, "want a table such as { kind = \"float\", min = 0, max = 1, default = 0.5 }, got %s", typeName(raw))
	}
	for _, k := range mp.lines.ordered(key, t) {
		if !slices.Contains(paramKeys, k) {
			return p, mp.fail(append(key, k), "unknown key (known: %s)", strings.Join(paramKeys, ", "))
		}
	}
	kind, err := mp.str(t, append(key, "kind"), false)
	if err != nil {
		return p, err
	}
	p.Kind = manifest.Kind(kind)
	if p.Doc, err = mp.str(t, append(key, "doc"), false); err != nil {
		return p, err
	}
	if c, ok := t["choices"]; ok {
		list, ok := c.([]any)
		if !ok || len(list) == 0 {
			return p, mp.fail(append(key, "choices"), "want a non-empty list of strings, got %s", typeName(c))
		}
		for i, v := range list {
			s, ok := v.(string)
			if !ok {
				return p, mp.fail(append(key, "choices", fmt.Sprint(i)), "want a string, got %s", typeName(v))
			}
			p.Choices = append(p.Choices, s)
		}
	}
	for _, b := range []struct {
		key string
		dst *float64
	}{{"min", &p.Min}, {"max", &p.Max}} {
		v, ok := t[b.key]
		if !ok {
			continue
		}
		switch x := v.(type) {
		case int64:
			*b.dst = float64(x)
		case float64:
			if math.IsNaN(x) || math.IsInf(x, 0) {
				return p, mp.fail(append(key, b.key), "%v is not a finite number", x)
			}
			*b.dst = x
		default:
			return p, mp.fail(append(key, b.key), "want a number, got %s", typeName(v))
		}
	}
	def, ok := t["default"]
	if !ok {
		return p, mp.fail(key, "missing key default")
	}
	switch x := def.(type) {
	case string:
		p.Default = x
	case int64:
		p.Default = fmt.Sprint(x)
	case float64:
		p.Default = fmt.Sprint(x)
	case bool:
		p.Default = fmt.Sprint(x)
	default:
		return p, mp.fail(append(key, "default"), "want a value, got %s", typeName(def))
	}
	return p, nil
}
