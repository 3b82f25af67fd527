package field

import (
	"bytes"
	"encoding/xml"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"reflect"
	"strconv"
	"strings"
	"testing"

	"fvsweep/sweep/field/fieldtest"
)

func demoCells(names []string, nx, ny int) *Cells {
	c := NewCells(names, nx, ny)
	for k := range c.Data {
		for n := range c.Data[k] {
			c.Data[k][n] = math.Sin(float64(n+1)*0.37+float64(k)) * math.Pow(10, float64(k-2))
		}
	}
	return c
}

func TestCSVRoundTrip(t *testing.T) {
	c := demoCells([]string{"rho", "u", "v", "p"}, 5, 3).WithCentres(-1, 0, 0.4, 0.5)
	var b bytes.Buffer
	if err := WriteCSV(&b, c); err != nil {
		t.Fatal(err)
	}
	if !strings.HasPrefix(b.String(), "x,y,rho,u,v,p\n-0.8,0.25,") {
		t.Errorf("csv starts %q", b.String()[:40])
	}
	got, err := ReadCSV(strings.NewReader(strings.ReplaceAll(b.String(), "\n", "\r\n")+"\r\n\n"), 5, 3)
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(got, c) {
		t.Errorf("read back differs")
	}
	if err := got.CheckCentres(-1, 0, 0.4, 0.5); err != nil {
		t.Error(err)
	}
	// Rows written y fastest instead of x fastest: the centres name the first wrong cell.
	if err := got.CheckCentres(-1, 0, 0.5, 0.4); err == nil || !strings.Contains(err.Error(), "cell (0,0)") {
		t.Errorf("wrong spacing: %v", err)
	}
}

func TestCSVErrors(t *testing.T) {
	rows := func(n int, row string) string { return strings.Repeat(row+"\n", n) }
	for _, tc := range []struct{ in, want string }{
		{"", "empty file"},
		{"rho,u,rho\n" + rows(4, "1,2,3"), "line 1 (header): field: variable rho named twice"},
		{"rho,,u\n" + rows(4, "1,2,3"), "line 1 (header)"},
		{"u\n" + rows(3, "1"), "3 rows, want nx*ny = 2*2 = 4"},
		{"u\n" + rows(5, "1"), "line 6: more than nx*ny = 2*2 = 4 rows"},
		{"u,v\n" + rows(2, "1,2") + "1\n", "line 4 (cell 0,1): 1 values, want 2"},
		{"u,v\n" + rows(3, "1,2") + "1,2,3\n", "line 5 (cell 1,1): more than 2 values"},
		{"u,v\n1,2\n1,abc\n", `line 3 (cell 1,0): v: "abc" is not a number`},
		{"u\n" + strings.Repeat("1", maxLine+10) + "\n", "line 2: line longer than"},
	} {
		_, err := ReadCSV(strings.NewReader(tc.in), 2, 2)
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%.30q: got %v, want %q", tc.in, err, tc.want)
		}
	}
	c, err := ReadCSV(strings.NewReader("u\nNaN\n1\n-Inf\n 2.5e-1 \n"), 2, 2)
	if err != nil || !math.IsNaN(c.Data[0][0]) || !math.IsInf(c.Data[0][2], -1) || c.Data[0][3] != 0.25 {
		t.Errorf("non-finite values are read as such: %v %v", c, err)
	}
}

func TestNPYRoundTrip(t *testing.T) {
	names := []string{"rho", "mx", "my", "E"}
	c := demoCells(names, 6, 4)
	var b bytes.Buffer
	if err := WriteNPY(&b, c); err != nil {
		t.Fatal(err)
	}
	if !bytes.Contains(b.Bytes(), []byte("'shape': (4, 6, 4)")) || !bytes.Contains(b.Bytes(), []byte("'descr': '<f8'")) {
		t.Errorf("header %q", b.Bytes()[:80])
	}
	if hl := int(b.Bytes()[8]) | int(b.Bytes()[9])<<8; (10+hl)%64 != 0 || b.Bytes()[9+hl] != '\n' {
		t.Errorf("header of %d bytes: NEP 1 wants the data aligned to 64 bytes after a newline", hl)
	}
	got, err := ReadNPY(bytes.NewReader(b.Bytes()), names, 6, 4)
	if err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(got, c) {
		t.Errorf("read back differs")
	}
	for _, tc := range []struct {
		nx, ny int
		edit   func([]byte) []byte
		want   string
	}{
		{4, 6, nil, "shape [4 6 4], want (ny, nx, nvars) = [6 4 4]"},
		{6, 4, func(b []byte) []byte { return b[:len(b)-8] }, "data bytes"},
		{6, 4, func(b []byte) []byte { return append(b, 0, 0, 0, 0, 0, 0, 0, 0) }, "data bytes"},
		{6, 4, func(b []byte) []byte { return bytes.Replace(b, []byte("<f8"), []byte(">f8"), 1) }, "dtype"},
		{6, 4, func(b []byte) []byte {
			return bytes.Replace(b, []byte("False, 'shape': (4, 6, 4), }"), []byte("True, 'shape': (4, 6, 4), } "), 1)
		}, "Fortran"},
		{6, 4, func(b []byte) []byte { return b[:9] }, "not an .npy file"},
		{6, 4, func(b []byte) []byte { b = bytes.Clone(b); b[6] = 9; return b }, "version 9"},
		{6, 4, func(b []byte) []byte { b = bytes.Clone(b); b[8], b[9], b[10], b[11] = 0xff, 0xff, 0xff, 0x7f; return b }, "header of"},
		{6, 4, func(b []byte) []byte { b = bytes.Clone(b); b[8+4+20] = '\n'; b[8+4+21] = 'x'; return b }, "npy"},
	} {
		in := b.Bytes()
		if tc.edit != nil {
			in = tc.edit(bytes.Clone(in))
		}
		_, err := ReadNPY(bytes.NewReader(in), names, tc.nx, tc.ny)
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("got %v, want %q", err, tc.want)
		}
	}
}

// NumPy itself (docs/references.md §11) reads what WriteNPY wrote, and
// ReadNPY reads what NumPy wrote. Without NumPy the test skips, or fails
// where CI=true: .ci/run installs python3-numpy, so there a missing NumPy
// is a broken setup whose skip would hide the check.
func TestNPYWithNumPy(t *testing.T) {
	py := fieldtest.NumPyPython(t, "NumPy does not read WriteNPY's file")
	dir := t.TempDir()
	c := demoCells([]string{"rho", "u", "v", "p"}, 3, 2)
	var b bytes.Buffer
	if err := WriteNPY(&b, c); err != nil {
		t.Fatal(err)
	}
	in, out := filepath.Join(dir, "in.npy"), filepath.Join(dir, "out.npy")
	if err := os.WriteFile(in, b.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	script := `import sys, numpy as np
a = np.load(sys.argv[1])
assert a.shape == (2, 3, 4) and a.dtype == np.float64, (a.shape, a.dtype)
print(repr(float(a[1, 2, 3])), repr(float(a[0, 1, 0])))
np.save(sys.argv[2], a * 2.0)
`
	got, err := exec.Command(py, "-c", script, in, out).CombinedOutput()
	if err != nil {
		t.Fatalf("%v: %s", err, got)
	}
	f := strings.Fields(string(got))
	p12, _ := strconv.ParseFloat(f[0], 64)
	r10, _ := strconv.ParseFloat(f[1], 64)
	if p12 != c.Var("p")[1*3+2] || r10 != c.Var("rho")[1] {
		t.Errorf("numpy reads %s; want %v %v", got, c.Var("p")[5], c.Var("rho")[1])
	}
	fb, err := os.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	back, err := ReadNPY(bytes.NewReader(fb), c.Names, 3, 2)
	if err != nil {
		t.Fatal(err)
	}
	for k := range c.Data {
		for n := range c.Data[k] {
			if back.Data[k][n] != 2*c.Data[k][n] {
				t.Fatalf("var %d cell %d: %v, want %v", k, n, back.Data[k][n], 2*c.Data[k][n])
			}
		}
	}
}

func TestVTI(t *testing.T) {
	c := demoCells([]string{"rho", "u"}, 3, 2).WithCentres(0.5, -1, 0.25, 0.5)
	var b bytes.Buffer
	if err := WriteVTI(&b, c, 0.5, -1, 0.25, 0.5, 0.125); err != nil {
		t.Fatal(err)
	}
	type array struct {
		Type   string `xml:"type,attr"`
		Name   string `xml:"Name,attr"`
		Format string `xml:"format,attr"`
		Text   string `xml:",chardata"`
	}
	var doc struct {
		XMLName xml.Name `xml:"VTKFile"`
		Type    string   `xml:"type,attr"`
		Image   struct {
			WholeExtent string  `xml:"WholeExtent,attr"`
			Origin      string  `xml:"Origin,attr"`
			Spacing     string  `xml:"Spacing,attr"`
			Field       []array `xml:"FieldData>DataArray"`
			Piece       struct {
				Extent string  `xml:"Extent,attr"`
				Cells  []array `xml:"CellData>DataArray"`
			} `xml:"Piece"`
		} `xml:"ImageData"`
	}
	if err := xml.Unmarshal(b.Bytes(), &doc); err != nil {
		t.Fatalf("not well-formed XML: %v", err)
	}
	im := doc.Image
	if doc.Type != "ImageData" || im.WholeExtent != "0 3 0 2 0 0" || im.Piece.Extent != im.WholeExtent ||
		im.Origin != "0.5 -1 0" || im.Spacing != "0.25 0.5 0.25" {
		t.Errorf("geometry %+v", doc)
	}
	if len(im.Field) != 1 || im.Field[0].Name != "TimeValue" || strings.TrimSpace(im.Field[0].Text) != "0.125" {
		t.Errorf("time %+v", im.Field)
	}
	if len(im.Piece.Cells) != 2 {
		t.Fatalf("%d cell arrays, want rho and u", len(im.Piece.Cells))
	}
	for k, a := range im.Piece.Cells {
		want := c.Data[k+2]
		vals := strings.Fields(a.Text)
		if a.Name != c.Names[k+2] || a.Type != "Float64" || a.Format != "ascii" || len(vals) != len(want) {
			t.Fatalf("array %+v", a)
		}
		for n, s := range vals {
			if x, err := strconv.ParseFloat(s, 64); err != nil || x != want[n] {
				t.Errorf("%s[%d] = %s, want %v", a.Name, n, s, want[n])
			}
		}
	}
}

func FuzzReadCSV(f *testing.F) {
	var b bytes.Buffer
	WriteCSV(&b, demoCells([]string{"x", "y", "u"}, 2, 2))
	f.Add(b.String(), 2, 2)
	f.Add("u\n1\n2\n", 1, 2)
	f.Add("rho,u\n1,,\n", 1, 1)
	f.Fuzz(func(t *testing.T, in string, nx, ny int) {
		nx, ny = 1+abs(nx)%8, 1+abs(ny)%8
		c, err := ReadCSV(strings.NewReader(in), nx, ny)
		if err != nil {
			return
		}
		var out bytes.Buffer
		if err := WriteCSV(&out, c); err != nil {
			t.Fatal(err)
		}
		back, err := ReadCSV(&out, nx, ny)
		if err != nil || len(back.Names) != len(c.Names) {
			t.Fatalf("a field read does not read back: %v", err)
		}
		for k := range c.Data {
			for n, x := range c.Data[k] {
				if y := back.Data[k][n]; x != y && !(math.IsNaN(x) && math.IsNaN(y)) {
					t.Fatalf("%v read back as %v", x, y)
				}
			}
		}
	})
}

func FuzzReadNPY(f *testing.F) {
	var b bytes.Buffer
	WriteNPY(&b, demoCells([]string{"u"}, 2, 3))
	f.Add(b.Bytes(), 2, 3)
	f.Add([]byte("\x93NUMPY\x01\x00\x10\x00{'descr': '<f8'\n"), 1, 1)
	f.Fuzz(func(t *testing.T, in []byte, nx, ny int) {
		nx, ny = 1+abs(nx)%8, 1+abs(ny)%8
		c, err := ReadNPY(bytes.NewReader(in), []string{"u"}, nx, ny)
		if err != nil {
			return
		}
		var out bytes.Buffer
		if err := WriteNPY(&out, c); err != nil {
			t.Fatal(err)
		}
		if _, err := ReadNPY(&out, []string{"u"}, nx, ny); err != nil {
			t.Fatalf("a field read does not read back: %v", err)
		}
	})
}

func abs(n int) int {
	if n < 0 {
		return -n
	}
	return n
}
