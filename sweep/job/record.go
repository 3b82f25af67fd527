package job

import (
	"bytes"
	"math"
	"strconv"
	"unicode/utf8"
)

// A RecordDecoder decodes stored job records as DecodeRecord does, and
// shares equal strings among the jobs it decodes: the jobs of one sweep
// repeat their sweep, case and parameter values many times, and a
// 100,000-job sweep read at once should cost little memory. A record in
// exactly the layout Encoder writes takes a fast path without reflection
// (FuzzJobCodec holds that it decodes as DecodeRecord does); any other goes
// through DecodeRecord. The zero value is ready; it is not safe for
// concurrent use.
type RecordDecoder struct {
	strs map[string]string
}

// Decode decodes one stored job record.
func (d *RecordDecoder) Decode(data []byte) (Job, error) {
	if j, ok := d.fast(data); ok {
		return j, nil
	}
	j, err := DecodeRecord(data)
	if err != nil {
		return Job{}, err
	}
	d.intern(&j)
	return j, nil
}

func (d *RecordDecoder) str(s string) string {
	if t, ok := d.strs[s]; ok {
		return t
	}
	d.strs[s] = s
	return s
}

// bytes is str of string(b), allocating only for a string not seen before.
func (d *RecordDecoder) bytes(b []byte) string {
	if t, ok := d.strs[string(b)]; ok {
		return t
	}
	s := string(b)
	d.strs[s] = s
	return s
}

// intern replaces the strings of j by the shared ones.
func (d *RecordDecoder) intern(j *Job) {
	j.Sweep = d.str(j.Sweep)
	j.Case = d.str(j.Case)
	j.Solver = d.str(j.Solver)
	j.Version = d.str(j.Version)
	j.Refine = d.str(j.Refine)
	j.Group = d.str(j.Group)
	if len(j.Params) == 0 {
		return
	}
	p := make(map[string]string, len(j.Params))
	for k, v := range j.Params {
		p[d.str(k)] = d.str(v)
	}
	j.Params = p
}

// fast decodes a record in exactly the layout Encoder writes and reports
// false for anything else (escapes included).
func (d *RecordDecoder) fast(data []byte) (Job, bool) {
	if d.strs == nil {
		d.strs = make(map[string]string)
	}
	p := jobParser{data: data, d: d}
	var j Job
	ok := p.lit(`{"job_id":`) && p.str(&j.ID) &&
		p.lit(`,"sweep":`) && p.str(&j.Sweep) &&
		p.lit(`,"study":`) && p.int(&j.Study) &&
		p.lit(`,"case":`) && p.str(&j.Case) &&
		(!p.lit(`,"solver":`) || p.str(&j.Solver) && j.Solver != "") &&
		(!p.lit(`,"version":`) || p.str(&j.Version) && j.Version != "") &&
		p.lit(`,"params":`) && p.params(&j.Params) &&
		p.lit(`,"refine":`) && p.str(&j.Refine) &&
		p.lit(`,"group":`) && p.str(&j.Group) &&
		p.lit(`,"cost":`) && p.float(&j.Cost) &&
		p.lit(`,"snapshot":`) && p.bool(&j.Snapshot) &&
		p.lit(`}`) && len(p.data) == 0 &&
		j.Check() == nil
	return j, ok
}

// jobParser consumes data from the front; each method reports whether the
// next token is what it expects in Encoder's form.
type jobParser struct {
	data []byte
	d    *RecordDecoder
}

func (p *jobParser) lit(s string) bool {
	if !bytes.HasPrefix(p.data, []byte(s)) {
		return false
	}
	p.data = p.data[len(s):]
	return true
}

// str reads a string without escapes, control characters or invalid UTF-8.
func (p *jobParser) str(dst *string) bool {
	if len(p.data) == 0 || p.data[0] != '"' {
		return false
	}
	end := bytes.IndexByte(p.data[1:], '"')
	if end < 0 {
		return false
	}
	raw := p.data[1 : 1+end]
	for _, b := range raw {
		if b < 0x20 || b == '\\' {
			return false
		}
	}
	if !utf8.Valid(raw) {
		return false
	}
	*dst = p.d.bytes(raw)
	p.data = p.data[end+2:]
	return true
}

// token cuts the bytes up to the next ',' or '}'.
func (p *jobParser) token() []byte {
	n := bytes.IndexAny(p.data, ",}")
	if n < 0 {
		n = len(p.data)
	}
	t := p.data[:n]
	p.data = p.data[n:]
	return t
}

// int reads a decimal integer in its canonical form.
func (p *jobParser) int(dst *int) bool {
	t := p.token()
	n, err := strconv.Atoi(string(t))
	if err != nil || strconv.Itoa(n) != string(t) {
		return false
	}
	*dst = n
	return true
}

// float reads a number written exactly as appendFloat writes its value.
func (p *jobParser) float(dst *float64) bool {
	t := p.token()
	f, err := strconv.ParseFloat(string(t), 64)
	if err != nil || math.IsInf(f, 0) || !bytes.Equal(appendFloat(nil, f), t) {
		return false
	}
	*dst = f
	return true
}

func (p *jobParser) bool(dst *bool) bool {
	switch {
	case p.lit("true"):
		*dst = true
	case p.lit("false"):
		*dst = false
	default:
		return false
	}
	return true
}

// params reads null or an object of string values with distinct keys.
func (p *jobParser) params(dst *map[string]string) bool {
	if p.lit("null") {
		return true
	}
	if !p.lit("{") {
		return false
	}
	end := bytes.IndexByte(p.data, '}')
	if end < 0 {
		return false
	}
	m := make(map[string]string, bytes.Count(p.data[:end], []byte(":"))) // a size hint

	for first := true; !p.lit("}"); first = false {
		var k, v string
		if !first && !p.lit(",") {
			return false
		}
		if !p.str(&k) || !p.lit(":") || !p.str(&v) {
			return false
		}
		if _, dup := m[k]; dup {
			return false
		}
		m[k] = v
	}
	*dst = m
	return true
}
