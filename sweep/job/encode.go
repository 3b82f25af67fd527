package job

import (
	"math"
	"slices"
	"strconv"
	"unicode/utf8"
)

// An Encoder writes jobs in their JSON form: the same bytes as
// json.Marshal (FuzzJobCodec), without its reflection and per-record
// allocations, which dominated a 100,000-job store write. It reuses its
// buffers; the zero value is ready. It is not safe for concurrent use.
type Encoder struct {
	buf  []byte
	keys []string // the parameter names, sorted
}

// Encode returns the JSON form of j, valid until the next call. A cost that
// is not finite is written as strconv writes it, which is not JSON: check
// the job first (Job.Check).
func (e *Encoder) Encode(j *Job) []byte {
	dst := append(e.buf[:0], `{"job_id":`...)
	dst = appendString(dst, j.ID)
	dst = append(dst, `,"sweep":`...)
	dst = appendString(dst, j.Sweep)
	dst = append(dst, `,"study":`...)
	dst = strconv.AppendInt(dst, int64(j.Study), 10)
	dst = append(dst, `,"case":`...)
	dst = appendString(dst, j.Case)
	if j.Solver != "" {
		dst = append(dst, `,"solver":`...)
		dst = appendString(dst, j.Solver)
	}
	if j.Version != "" {
		dst = append(dst, `,"version":`...)
		dst = appendString(dst, j.Version)
	}
	dst = append(dst, `,"params":`...)
	if j.Params == nil {
		dst = append(dst, "null"...)
	} else {
		keys := e.keys[:0]
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
		e.keys = keys
	}
	dst = append(dst, `,"refine":`...)
	dst = appendString(dst, j.Refine)
	dst = append(dst, `,"group":`...)
	dst = appendString(dst, j.Group)
	dst = append(dst, `,"cost":`...)
	dst = appendFloat(dst, j.Cost)
	dst = append(dst, `,"snapshot":`...)
	dst = strconv.AppendBool(dst, j.Snapshot)
	e.buf = append(dst, '}')
	return e.buf
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
