package main

import (
	"bytes"
	"encoding/xml"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"fvsweep/sweep/field"
	"fvsweep/sweep/field/fieldtest"
)

// vtkFile is the part of a VTK XML image data file the test reads back.
type vtkFile struct {
	XMLName xml.Name `xml:"VTKFile"`
	Type    string   `xml:"type,attr"`
	Image   struct {
		WholeExtent string `xml:"WholeExtent,attr"`
		Origin      string `xml:"Origin,attr"`
		Spacing     string `xml:"Spacing,attr"`
		Piece       struct {
			Extent string `xml:"Extent,attr"`
			Arrays []struct {
				Name   string `xml:"Name,attr"`
				Values string `xml:",chardata"`
			} `xml:"CellData>DataArray"`
		} `xml:"Piece"`
	} `xml:"ImageData"`
}

// 'field' writes a stored snapshot as VTK image data (well-formed XML whose
// extents and spacing are the grid's, values the snapshot's: the layout of
// the VTK file formats document, common practice), as .npy (read back
// equal here, and by NumPy where python3 has it) and as CSV.
func TestFieldFiles(t *testing.T) {
	spec, data := specFiles(t, fieldSpec)
	if code, out := capture(t, func() int { return runRun([]string{spec, "--data", data, "--format", "none", "--log-level", "warn"}) }); code != 0 {
		t.Fatalf("run: exit %d\n%s", code, out)
	}
	c := &common{data: data}
	sd, err := openSweep(c, "field")
	if err != nil || len(sd.rows) != 1 {
		t.Fatal(err)
	}
	raw, err := fetchSnapshot(c, sd.rows[0].Outcome.Snapshot)
	if err != nil {
		t.Fatal(err)
	}
	hdr, want, err := field.Decode(raw)
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	write := func(name string, extra ...string) string {
		t.Helper()
		out := filepath.Join(dir, name)
		var stdout, stderr bytes.Buffer
		args := append([]string{"field", "--job", hdr.JobID[:10], "--data", data, "--out", out}, extra...)
		if code := runField(args, &stdout, &stderr); code != 0 {
			t.Fatalf("field %s: exit %d\n%s", name, code, stderr.String())
		}
		return out
	}
	same := func(what string, k int, got []float64) {
		t.Helper()
		if len(got) != len(want[k]) {
			t.Fatalf("%s %s: %d values, want %d", what, hdr.Vars[k], len(got), len(want[k]))
		}
		for i, x := range got {
			if x != float64(want[k][i]) {
				t.Fatalf("%s %s[%d] = %v, want %v", what, hdr.Vars[k], i, x, want[k][i])
			}
		}
	}

	// VTK.
	b, err := os.ReadFile(write("f.vti"))
	if err != nil {
		t.Fatal(err)
	}
	var v vtkFile
	if err := xml.Unmarshal(b, &v); err != nil {
		t.Fatalf("not well-formed XML: %v", err)
	}
	g := func(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
	ext := fmt.Sprintf("0 %d 0 %d 0 0", hdr.NX, hdr.NY)
	if v.Type != "ImageData" || v.Image.WholeExtent != ext || v.Image.Piece.Extent != ext ||
		v.Image.Origin != g(hdr.X0)+" "+g(hdr.Y0)+" 0" || !strings.HasPrefix(v.Image.Spacing, g(hdr.DX)+" "+g(hdr.DY)+" ") {
		t.Fatalf("VTK grid: type %s extent %q origin %q spacing %q; want extent %q, spacing %g %g", v.Type,
			v.Image.WholeExtent, v.Image.Origin, v.Image.Spacing, ext, hdr.DX, hdr.DY)
	}
	if hdr.NX != 48 || hdr.DX != 10.0/48 {
		t.Fatalf("the vortex grid is 48 cells on [0, 10]: %+v", hdr)
	}
	if len(v.Image.Piece.Arrays) != len(hdr.Vars) {
		t.Fatalf("%d cell arrays, want %d", len(v.Image.Piece.Arrays), len(hdr.Vars))
	}
	for k, a := range v.Image.Piece.Arrays {
		if a.Name != hdr.Vars[k] {
			t.Fatalf("array %d is %s, want %s", k, a.Name, hdr.Vars[k])
		}
		var got []float64
		for _, s := range strings.Fields(a.Values) {
			x, err := strconv.ParseFloat(s, 64)
			if err != nil {
				t.Fatal(err)
			}
			got = append(got, x)
		}
		same("vtk", k, got)
	}

	// .npy, read back here.
	npy := write("f.npy")
	f, err := os.Open(npy)
	if err != nil {
		t.Fatal(err)
	}
	cells, err := field.ReadNPY(f, hdr.Vars, hdr.NX, hdr.NY)
	f.Close()
	if err != nil {
		t.Fatal(err)
	}
	for k := range hdr.Vars {
		same("npy", k, cells.Data[k])
	}
	// ... and by NumPy itself (docs/references.md §11): a[j, i, k] is
	// variable k of cell (i, j). A subtest, so that a skip leaves the CSV
	// checks below to run.
	t.Run("numpy", func(t *testing.T) {
		py := fieldtest.NumPyPython(t, "NumPy does not read the .npy file back")
		script := `import sys, numpy as np
a = np.load(sys.argv[1])
print(a.dtype, a.shape, repr(float(a[3, 5, 0])), repr(float(a[47, 0, a.shape[2]-1])))`
		out, err := exec.Command(py, "-c", script, npy).CombinedOutput()
		if err != nil {
			t.Fatalf("numpy: %v\n%s", err, out)
		}
		last := len(hdr.Vars) - 1
		w := strings.Fields(string(out))
		shape := fmt.Sprintf("(%d, %d, %d)", hdr.NY, hdr.NX, len(hdr.Vars))
		if len(w) != 6 || w[0] != "float64" || strings.Join(w[1:4], " ") != shape {
			t.Fatalf("numpy reads %q, want float64 %s", out, shape)
		}
		a, _ := strconv.ParseFloat(w[4], 64)
		z, _ := strconv.ParseFloat(w[5], 64)
		if a != float64(want[0][3*hdr.NX+5]) || z != float64(want[last][47*hdr.NX]) {
			t.Errorf("numpy reads %s %s, want %v %v", w[4], w[5], want[0][3*hdr.NX+5], want[last][47*hdr.NX])
		}
	})

	// CSV, with the cell centres.
	f, err = os.Open(write("f.txt", "--format", "csv"))
	if err != nil {
		t.Fatal(err)
	}
	cells, err = field.ReadCSV(f, hdr.NX, hdr.NY)
	f.Close()
	if err != nil {
		t.Fatal(err)
	}
	if err := cells.CheckCentres(hdr.X0, hdr.Y0, hdr.DX, hdr.DY); err != nil || cells.Names[0] != "x" {
		t.Fatalf("csv centres: %v %v", cells.Names, err)
	}
	for k, name := range hdr.Vars {
		same("csv", k, cells.Var(name))
	}

	var stdout, stderr bytes.Buffer
	if code := runField([]string{"field", "--job", hdr.JobID, "--data", data, "--out", filepath.Join(dir, "f.bin")}, &stdout, &stderr); code != 2 {
		t.Errorf("unknown format: exit %d, %s", code, stderr.String())
	}
}
