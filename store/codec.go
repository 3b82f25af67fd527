package store

import (
	"bytes"
	"encoding/json"
	"fmt"
	"fvsweep/sweep/job"
	"math"
	"slices"
	"strconv"
	"unicode/utf8"
)

// maxKeyLen bounds sweep names and job IDs. Job IDs are 32 hex digits; the
// bound only keeps hostile input away from bbolt's own key size limit.
const maxKeyLen = 512

// checkKey reports whether s can be a sweep name or a job ID.
func checkKey(what, s string) error {
	switch {
	case s == "":
		return fmt.Errorf("empty %s", what)
	case len(s) > maxKeyLen:
		return fmt.Errorf("%s of %d bytes is longer than %d", what, len(s), maxKeyLen)
	}
	return nil
}

func checkFinite(what string, v float64) error {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return fmt.Errorf("%s is %v (JSON has no non-finite numbers)", what, v)
	}
	return nil
}

// CheckOutcome reports why o cannot be stored, or nil. PutOutcomes applies
// the same check to every record; a caller that wants to drop bad records
// rather than fail a whole batch checks them first.
func CheckOutcome(o job.Outcome) error {
	if err := checkKey("job_id", o.JobID); err != nil {
		return err
	}
	if !o.Status.Valid() {
		return fmt.Errorf("job %s: status %q is neither %q nor %q", o.JobID, o.Status, job.StatusDone, job.StatusFailed)
	}
	if o.Attempts < 0 || o.Steps < 0 {
		return fmt.Errorf("job %s: negative attempts or steps", o.JobID)
	}
	check := func(what string, v float64) error {
		if err := checkFinite(what, v); err != nil {
			return fmt.Errorf("job %s: %w", o.JobID, err)
		}
		return nil
	}
	for _, f := range []struct {
		name string
		v    float64
	}{{"wall_s", o.WallS}, {"t_final", o.TFinal}, {"cell_updates_per_s", o.CellUpdatesPerS}} {
		if err := check(f.name, f.v); err != nil {
			return err
		}
	}
	for k, n := range o.Errors {
		for _, f := range []struct {
			name string
			v    float64
		}{{"l1", n.L1}, {"l2", n.L2}, {"linf", n.Linf}} {
			if err := check("errors."+k+"."+f.name, f.v); err != nil {
				return err
			}
		}
	}
	for k, v := range o.Functionals {
		if err := check("functionals."+k, v); err != nil {
			return err
		}
	}
	for k, t := range o.Totals {
		if err := check("totals."+k+".initial", t.Initial); err != nil {
			return err
		}
		if err := check("totals."+k+".final", t.Final); err != nil {
			return err
		}
	}
	return nil
}

// checkJob reports why j cannot be stored as a job of the sweep named name.
func checkJob(j job.Job, name string) error {
	if err := checkKey("job_id", j.ID); err != nil {
		return err
	}
	if j.Sweep != "" && j.Sweep != name {
		return fmt.Errorf("job %s belongs to sweep %q, not %q", j.ID, j.Sweep, name)
	}
	if j.Case == "" {
		return fmt.Errorf("job %s: empty case", j.ID)
	}
	if err := checkFinite("cost", j.Cost); err != nil {
		return fmt.Errorf("job %s: %w", j.ID, err)
	}
	if j.Cost < 0 {
		return fmt.Errorf("job %s: negative cost %g", j.ID, j.Cost)
	}
	return nil
}

// DecodeOutcome decodes a stored result record. Bytes that are not a JSON
// object with a job_id and a known status give an error.
func DecodeOutcome(data []byte) (job.Outcome, error) {
	var o job.Outcome
	if err := json.Unmarshal(data, &o); err != nil {
		return job.Outcome{}, fmt.Errorf("result record: %w", err)
	}
	if err := CheckOutcome(o); err != nil {
		return job.Outcome{}, fmt.Errorf("result record: %w", err)
	}
	return o, nil
}

// DecodeJob decodes a stored job record. Bytes that are not a JSON object
// with a job_id and a case give an error.
func DecodeJob(data []byte) (job.Job, error) {
	var j job.Job
	if err := json.Unmarshal(data, &j); err != nil {
		return job.Job{}, fmt.Errorf("job record: %w", err)
	}
	if err := checkJob(j, j.Sweep); err != nil {
		return job.Job{}, fmt.Errorf("job record: %w", err)
	}
	return j, nil
}

// DecodeSweep decodes a stored sweep record. Bytes that are not a JSON
// object with a name give an error.
func DecodeSweep(data []byte) (SweepRecord, error) {
	var r SweepRecord
	if err := json.Unmarshal(data, &r); err != nil {
		return SweepRecord{}, fmt.Errorf("sweep record: %w", err)
	}
	if err := checkKey("name", r.Name); err != nil {
		return SweepRecord{}, fmt.Errorf("sweep record: %w", err)
	}
	if r.Jobs < 0 {
		return SweepRecord{}, fmt.Errorf("sweep record %q: negative job count", r.Name)
	}
	return r, nil
}

// Status markers as encoding/json writes them. Inside a JSON string a quote
// is escaped, so the first marker found in a record this package wrote is its
// status field.
var (
	markDone   = []byte(`"status":"done"`)
	markFailed = []byte(`"status":"failed"`)
	markStatus = []byte(`"status":"`)
)

// statusOf reads only the status of a stored result record: a scan for the
// marker of the record's status field, and a full decode when the record
// does not have the layout this package writes.
func statusOf(data []byte) (job.Status, error) {
	if i := bytes.Index(data, markStatus); i >= 0 && len(data) > 0 && data[0] == '{' && data[len(data)-1] == '}' {
		switch {
		case bytes.HasPrefix(data[i:], markDone):
			return job.StatusDone, nil
		case bytes.HasPrefix(data[i:], markFailed):
			return job.StatusFailed, nil
		}
	}
	var s struct {
		Status job.Status `json:"status"`
	}
	if err := json.Unmarshal(data, &s); err != nil {
		return "", fmt.Errorf("result record: %w", err)
	}
	if !s.Status.Valid() {
		return "", fmt.Errorf("result record: unknown status %q", s.Status)
	}
	return s.Status, nil
}

// appendJob appends the encoding/json form of j to dst: the same bytes as
// json.Marshal(j) (TestAppendJobMatchesMarshal), without its reflection and
// per-record allocations, which dominated a 100,000-job PutSweep. keys is
// scratch space for sorting the parameter names; the grown one is returned.
func appendJob(dst []byte, j *job.Job, keys []string) ([]byte, []string) {
	dst = append(dst, `{"job_id":`...)
	dst = appendString(dst, j.ID)
	dst = append(dst, `,"sweep":`...)
	dst = appendString(dst, j.Sweep)
	dst = append(dst, `,"study":`...)
	dst = strconv.AppendInt(dst, int64(j.Study), 10)
	dst = append(dst, `,"case":`...)
	dst = appendString(dst, j.Case)
	dst = append(dst, `,"params":`...)
	if j.Params == nil {
		dst = append(dst, "null"...)
	} else {
		keys = keys[:0]
		for k := range j.Params {
			keys = append(keys, k)
		}
		slices.Sort(keys)
		dst = append(dst, '{')
		for i, k := range keys {
			if i > 0 {
				dst = append(dst, ',')
			}
			dst = appendString(dst, k)
			dst = append(dst, ':')
			dst = appendString(dst, j.Params[k])
		}
		dst = append(dst, '}')
	}
	dst = append(dst, `,"refine":`...)
	dst = appendString(dst, j.Refine)
	dst = append(dst, `,"group":`...)
	dst = appendString(dst, j.Group)
	dst = append(dst, `,"cost":`...)
	dst = appendFloat(dst, j.Cost)
	dst = append(dst, `,"snapshot":`...)
	dst = strconv.AppendBool(dst, j.Snapshot)
	return append(dst, '}'), keys
}

// appendFloat writes a finite float64 as encoding/json does: shortest
// decimal, exponent form below 1e-6 and from 1e21 on, "e-07" as "e-7".
func appendFloat(dst []byte, f float64) []byte {
	format := byte('f')
	if abs := math.Abs(f); abs != 0 && (abs < 1e-6 || abs >= 1e21) {
		format = 'e'
	}
	dst = strconv.AppendFloat(dst, f, format, -1, 64)
	if n := len(dst); format == 'e' && n >= 4 && dst[n-4] == 'e' && dst[n-3] == '-' && dst[n-2] == '0' {
		dst[n-2] = dst[n-1]
		dst = dst[:n-1]
	}
	return dst
}

// appendString writes s as a JSON string with encoding/json's escapes:
// quote, backslash, control characters, <, > and & (HTML-safe), U+2028,
// U+2029, and invalid UTF-8 as U+FFFD.
func appendString(dst []byte, s string) []byte {
	const hex = "0123456789abcdef"
	dst = append(dst, '"')
	start := 0
	for i := 0; i < len(s); {
		if b := s[i]; b < utf8.RuneSelf {
			if b >= 0x20 && b != '"' && b != '\\' && b != '<' && b != '>' && b != '&' {
				i++
				continue
			}
			dst = append(dst, s[start:i]...)
			switch b {
			case '"', '\\':
				dst = append(dst, '\\', b)
			case '\b':
				dst = append(dst, '\\', 'b')
			case '\f':
				dst = append(dst, '\\', 'f')
			case '\n':
				dst = append(dst, '\\', 'n')
			case '\r':
				dst = append(dst, '\\', 'r')
			case '\t':
				dst = append(dst, '\\', 't')
			default:
				dst = append(dst, '\\', 'u', '0', '0', hex[b>>4], hex[b&0xF])
			}
			i++
			start = i
			continue
		}
		c, size := utf8.DecodeRuneInString(s[i:])
		switch {
		case c == utf8.RuneError && size == 1:
			dst = append(dst, s[start:i]...)
			dst = append(dst, `\ufffd`...)
		case c == '\u2028' || c == '\u2029':
			dst = append(dst, s[start:i]...)
			dst = append(dst, '\\', 'u', '2', '0', '2', hex[c&0xF])
		default:
			i += size
			continue
		}
		i += size
		start = i
	}
	dst = append(dst, s[start:]...)
	return append(dst, '"')
}

// arena hands out byte slices cut from large blocks, for the keys and values
// of one write transaction: bbolt keeps them until commit, and one block per
// megabyte costs the collector far less than one allocation per record.
type arena struct{ block []byte }

const arenaBlock = 1 << 20

// alloc returns n bytes that stay valid as long as the arena's blocks.
func (a *arena) alloc(n int) []byte {
	if n > cap(a.block)-len(a.block) {
		a.block = make([]byte, 0, max(arenaBlock, n))
	}
	m := len(a.block)
	a.block = a.block[:m+n]
	return a.block[m : m+n : m+n]
}

// decodeJobFast decodes a job record in exactly the layout appendJob writes,
// taking its strings from in, and reports false for anything else (escapes
// included), which the caller then hands to DecodeJob. FuzzDecodeRecords
// holds that whatever it accepts, DecodeJob decodes to the same job.
func decodeJobFast(data []byte, in interner) (job.Job, bool) {
	p := jobParser{data: data, in: in}
	var j job.Job
	ok := p.lit(`{"job_id":`) && p.str(&j.ID) &&
		p.lit(`,"sweep":`) && p.str(&j.Sweep) &&
		p.lit(`,"study":`) && p.int(&j.Study) &&
		p.lit(`,"case":`) && p.str(&j.Case) &&
		p.lit(`,"params":`) && p.params(&j.Params) &&
		p.lit(`,"refine":`) && p.str(&j.Refine) &&
		p.lit(`,"group":`) && p.str(&j.Group) &&
		p.lit(`,"cost":`) && p.float(&j.Cost) &&
		p.lit(`,"snapshot":`) && p.bool(&j.Snapshot) &&
		p.lit(`}`) && len(p.data) == 0 &&
		checkJob(j, j.Sweep) == nil
	return j, ok
}

// jobParser consumes data from the front; each method reports whether the
// next token is what it expects in appendJob's form.
type jobParser struct {
	data []byte
	in   interner
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
	*dst = p.in.bytes(raw)
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
