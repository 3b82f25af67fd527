// Package field is the binary format of a field snapshot: the cell averages
// of a finished run, in a little-endian object:
//
//	"FVF1" | u32 header length | JSON Header | float32 x NV x NX x NY
//
// of the interior cells only, variable by variable, x fastest.
package field

import (
	"encoding/binary"
	"encoding/json"
	"errors"
	"fmt"
	"fvsweep/sweep/job"
	"math"
)

// Header describes a snapshot.
type Header struct {
	JobID string   `json:"job_id"`
	Vars  []string `json:"vars"`
	NX    int      `json:"nx"`
	NY    int      `json:"ny"`
	X0    float64  `json:"x0"`
	Y0    float64  `json:"y0"`
	DX    float64  `json:"dx"`
	DY    float64  `json:"dy"`
	T     float64  `json:"t"`
}

const magic = "FVF1"

// Encode writes a snapshot of the interior values data[k][j*NX+i].
func Encode(h Header, data [][]float32) ([]byte, error) {
	if len(data) != len(h.Vars) {
		return nil, fmt.Errorf("field: %d variables for %d names", len(data), len(h.Vars))
	}
	hdr, err := json.Marshal(h)
	if err != nil {
		return nil, err
	}
	n := h.NX * h.NY
	out := make([]byte, 0, 8+len(hdr)+4*n*len(data))
	out = append(out, magic...)
	out = binary.LittleEndian.AppendUint32(out, uint32(len(hdr)))
	out = append(out, hdr...)
	for k, d := range data {
		if len(d) != n {
			return nil, fmt.Errorf("field: variable %s has %d values, want %d", h.Vars[k], len(d), n)
		}
		for _, x := range d {
			out = binary.LittleEndian.AppendUint32(out, math.Float32bits(x))
		}
	}
	return out, nil
}

// Decode parses a snapshot written by Encode.
func Decode(b []byte) (Header, [][]float32, error) {
	var h Header
	if len(b) < 8 || string(b[:4]) != magic {
		return h, nil, errors.New("field: not an fvsweep field snapshot")
	}
	hl := int(binary.LittleEndian.Uint32(b[4:8]))
	if hl > len(b)-8 {
		return h, nil, errors.New("field: truncated header")
	}
	if err := job.DecodeStrict("field header", b[8:8+hl], &h); err != nil {
		return h, nil, err
	}
	body := b[8+hl:]
	n := h.NX * h.NY
	if h.NX <= 0 || h.NY <= 0 || len(body) != 4*n*len(h.Vars) {
		return h, nil, fmt.Errorf("field: %d data bytes for %d variables of %dx%d", len(body), len(h.Vars), h.NX, h.NY)
	}
	data := make([][]float32, len(h.Vars))
	for k := range data {
		d := make([]float32, n)
		for i := range d {
			d[i] = math.Float32frombits(binary.LittleEndian.Uint32(body[4*(k*n+i):]))
		}
		data[k] = d
	}
	return h, data, nil
}
