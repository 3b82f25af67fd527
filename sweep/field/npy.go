package field

import (
	"bytes"
	"encoding/binary"
	"fmt"
	"io"
	"math"
	"slices"
	"strings"

	"codeberg.org/sbinet/npyio"
)

// The .npy form of a field (NumPy's format, read and written with
// codeberg.org/sbinet/npyio): a C-order float64 array of shape
// (NY, NX, NV), a[j, i, k] = variable k of cell (i, j); the variable order
// is agreed outside the file (a manifest's variables key).

// maxNPYHeader bounds the header of an .npy file that ReadNPY accepts.
const maxNPYHeader = 4096

// WriteNPY writes c as a little-endian float64 array of shape (NY, NX, NV)
// in format version 1.0 (NumPy's NEP 1: magic, version, header length, a
// Python dict literal padded with spaces to a multiple of 64 bytes and
// ended by a newline, then the data in C order). The header is written
// here, not by npyio: npyio.Write finds the dtype of a nested slice element
// by element, 0.8 s for a 512^2 field of four variables. Tests read what
// it writes with npyio and with NumPy.
func WriteNPY(w io.Writer, c *Cells) error {
	if err := checkShape(c.Names, c.NX, c.NY); err != nil {
		return err
	}
	nv := len(c.Data)
	dict := fmt.Sprintf("{'descr': '<f8', 'fortran_order': False, 'shape': (%d, %d, %d), }", c.NY, c.NX, nv)
	pad := 64 - (10+len(dict)+1)%64
	if pad == 64 {
		pad = 0
	}
	hl := len(dict) + pad + 1
	out := make([]byte, 0, 10+hl+8*c.NX*c.NY*nv)
	out = append(out, "\x93NUMPY\x01\x00"...)
	out = binary.LittleEndian.AppendUint16(out, uint16(hl))
	out = append(out, dict...)
	out = append(out, bytes.Repeat([]byte{' '}, pad)...)
	out = append(out, '\n')
	for n := 0; n < c.NX*c.NY; n++ {
		for _, d := range c.Data {
			out = binary.LittleEndian.AppendUint64(out, math.Float64bits(d[n]))
		}
	}
	_, err := w.Write(out)
	return err
}

// ReadNPY reads an .npy field of nx x ny cells with the variables names
// (their order in the file) from r, reading at most what such a file
// holds. It refuses any other dtype, a Fortran-order array, another shape,
// and a file of another length.
func ReadNPY(r io.Reader, names []string, nx, ny int) (*Cells, error) {
	if err := checkShape(names, nx, ny); err != nil {
		return nil, err
	}
	nv := len(names)
	n := nx * ny * nv
	limit := int64(maxNPYHeader) + 12 + 8*int64(n)
	buf := bytes.NewBuffer(make([]byte, 0, min(limit+1, 1<<30)))
	if _, err := buf.ReadFrom(io.LimitReader(r, limit+1)); err != nil {
		return nil, fmt.Errorf("npy: %w", err)
	}
	b := buf.Bytes()
	if int64(len(b)) > limit {
		return nil, fmt.Errorf("npy: larger than a (%d, %d, %d) float64 array", ny, nx, nv)
	}
	hlen, err := npyHeaderLen(b)
	if err != nil {
		return nil, err
	}
	rd, err := newNPYReader(b)
	if err != nil {
		return nil, fmt.Errorf("npy: %w", err)
	}
	h := rd.Header.Descr
	want := []int{ny, nx, nv}
	switch {
	case strings.Trim(h.Type, `'"`) != "<f8":
		return nil, fmt.Errorf("npy: dtype %q, want '<f8' (little-endian float64)", h.Type)
	case h.Fortran:
		return nil, fmt.Errorf("npy: Fortran order, want C order")
	case !slices.Equal(h.Shape, want):
		return nil, fmt.Errorf("npy: shape %v, want (ny, nx, nvars) = %v", h.Shape, want)
	case len(b)-hlen != 8*n:
		return nil, fmt.Errorf("npy: %d data bytes, want %d for shape %v", len(b)-hlen, 8*n, want)
	}
	flat := make([]float64, n)
	if err := rd.Read(&flat); err != nil {
		return nil, fmt.Errorf("npy: %w", err)
	}
	c := NewCells(names, nx, ny)
	for m := 0; m < nx*ny; m++ {
		for k := range c.Data {
			c.Data[k][m] = flat[m*nv+k]
		}
	}
	return c, nil
}

// npyHeaderLen checks the preamble of an .npy file (magic, version 1 or 2,
// a header of at most maxNPYHeader bytes ending in a newline, inside b)
// and returns the offset of its data, so that the library parses only
// well-formed, bounded headers.
func npyHeaderLen(b []byte) (int, error) {
	if len(b) < 10 || string(b[:6]) != "\x93NUMPY" {
		return 0, fmt.Errorf("npy: not an .npy file")
	}
	var hl, pre int
	switch b[6] {
	case 1:
		hl, pre = int(binary.LittleEndian.Uint16(b[8:10])), 10
	case 2:
		if len(b) < 12 {
			return 0, fmt.Errorf("npy: truncated header")
		}
		u := binary.LittleEndian.Uint32(b[8:12])
		if u > maxNPYHeader {
			return 0, fmt.Errorf("npy: header of %d bytes, want at most %d", u, maxNPYHeader)
		}
		hl, pre = int(u), 12
	default:
		return 0, fmt.Errorf("npy: format version %d, want 1 or 2", b[6])
	}
	if hl > maxNPYHeader || pre+hl > len(b) {
		return 0, fmt.Errorf("npy: header of %d bytes does not fit", hl)
	}
	hdr := b[pre : pre+hl]
	if hl == 0 || hdr[hl-1] != '\n' || !bytes.HasPrefix(bytes.TrimSpace(hdr), []byte("{")) {
		return 0, fmt.Errorf("npy: malformed header")
	}
	return pre + hl, nil
}

// newNPYReader parses the header of b with the library. Its header parser
// assumes well-formed input; a panic on a malformed one is an error here.
func newNPYReader(b []byte) (rd *npyio.Reader, err error) {
	defer func() {
		if r := recover(); r != nil {
			rd, err = nil, fmt.Errorf("malformed header")
		}
	}()
	return npyio.NewReader(bytes.NewReader(b))
}
