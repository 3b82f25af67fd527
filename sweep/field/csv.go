package field

import (
	"bufio"
	"bytes"
	"errors"
	"fmt"
	"io"
	"strconv"
	"strings"
)

// The CSV form of a field: one header line naming the variables, then one
// line per cell, x fastest, then y, exactly NX*NY of them, values separated
// by commas. Numbers are anything strconv.ParseFloat reads; WriteCSV
// writes the shortest form that reads back to the same float64. Lines end
// in "\n" or "\r\n"; blank lines after the last row are allowed.

// maxLine bounds one line of a CSV field.
const maxLine = 64 << 10

// WriteCSV writes c as CSV.
func WriteCSV(w io.Writer, c *Cells) error {
	if err := checkShape(c.Names, c.NX, c.NY); err != nil {
		return err
	}
	bw := bufio.NewWriterSize(w, 1<<16)
	bw.WriteString(strings.Join(c.Names, ","))
	bw.WriteByte('\n')
	var buf []byte
	for n := 0; n < c.NX*c.NY; n++ {
		buf = buf[:0]
		for k, d := range c.Data {
			if k > 0 {
				buf = append(buf, ',')
			}
			buf = strconv.AppendFloat(buf, d[n], 'g', -1, 64)
		}
		buf = append(buf, '\n')
		if _, err := bw.Write(buf); err != nil {
			return err
		}
	}
	return bw.Flush()
}

// ReadCSV reads a CSV field of nx x ny cells. Its errors name the line and
// the cell (i,j) at fault: a header that is not a list of distinct names,
// a row with the wrong number of values, a value that is not a number, too
// few or too many rows. NaN and infinities are read as such; the caller
// decides what is physical.
func ReadCSV(r io.Reader, nx, ny int) (*Cells, error) {
	if err := checkShape([]string{"v"}, nx, ny); err != nil {
		return nil, err
	}
	br := bufio.NewReaderSize(r, maxLine)
	line, err := readLine(br)
	if err != nil {
		if errors.Is(err, io.EOF) {
			return nil, errors.New("csv: empty file, want a header line")
		}
		return nil, fmt.Errorf("csv line 1: %w", err)
	}
	names := strings.Split(string(line), ",")
	for i := range names {
		names[i] = strings.TrimSpace(names[i])
	}
	if err := checkShape(names, nx, ny); err != nil {
		return nil, fmt.Errorf("csv line 1 (header): %w", err)
	}
	c := NewCells(names, nx, ny)
	nv, n := len(names), nx*ny
	for row := 0; ; row++ {
		line, err := readLine(br)
		lineNo := row + 2
		if errors.Is(err, io.EOF) {
			if row < n {
				return nil, fmt.Errorf("csv: %d rows, want nx*ny = %d*%d = %d", row, nx, ny, n)
			}
			return c, nil
		}
		if err != nil {
			return nil, fmt.Errorf("csv line %d: %w", lineNo, err)
		}
		if row >= n {
			if len(bytes.TrimSpace(line)) == 0 {
				row--
				continue
			}
			return nil, fmt.Errorf("csv line %d: more than nx*ny = %d*%d = %d rows", lineNo, nx, ny, n)
		}
		i, j := row%nx, row/nx
		for k := 0; k < nv; k++ {
			var field []byte
			if k < nv-1 {
				comma := bytes.IndexByte(line, ',')
				if comma < 0 {
					return nil, fmt.Errorf("csv line %d (cell %d,%d): %d values, want %d", lineNo, i, j, k+1, nv)
				}
				field, line = line[:comma], line[comma+1:]
			} else {
				if bytes.IndexByte(line, ',') >= 0 {
					return nil, fmt.Errorf("csv line %d (cell %d,%d): more than %d values", lineNo, i, j, nv)
				}
				field = line
			}
			x, err := strconv.ParseFloat(string(bytes.TrimSpace(field)), 64)
			if err != nil {
				return nil, fmt.Errorf("csv line %d (cell %d,%d): %s: %q is not a number", lineNo, i, j, names[k], truncate(field))
			}
			c.Data[k][row] = x
		}
	}
}

// readLine returns the next line without its line ending; io.EOF when
// there is none. A line longer than maxLine is an error.
func readLine(br *bufio.Reader) ([]byte, error) {
	line, err := br.ReadSlice('\n')
	if errors.Is(err, bufio.ErrBufferFull) {
		return nil, fmt.Errorf("line longer than %d bytes", maxLine)
	}
	if errors.Is(err, io.EOF) {
		if len(line) == 0 {
			return nil, io.EOF
		}
		err = nil
	}
	if err != nil {
		return nil, err
	}
	line = bytes.TrimSuffix(line, []byte{'\n'})
	return bytes.TrimSuffix(line, []byte{'\r'}), nil
}

func truncate(b []byte) string {
	if len(b) > 40 {
		return string(b[:40]) + "..."
	}
	return string(b)
}
