package field

import (
	"bufio"
	"fmt"
	"io"
	"strconv"
)

// WriteVTI writes c as VTK XML image data (.vti, version 0.1, ASCII
// values), which ParaView and VisIt open: a grid of NX x NY cells with
// lower-left corner (x0, y0) and spacings dx, dy, one cell-data array per
// variable (x and y columns, being the geometry, are left out), and the
// time t as the field-data array TimeValue.
func WriteVTI(w io.Writer, c *Cells, x0, y0, dx, dy, t float64) error {
	if err := checkShape(c.Names, c.NX, c.NY); err != nil {
		return err
	}
	g := func(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
	bw := bufio.NewWriterSize(w, 1<<16)
	fmt.Fprintf(bw, "<?xml version=\"1.0\"?>\n<VTKFile type=\"ImageData\" version=\"0.1\" byte_order=\"LittleEndian\">\n")
	ext := fmt.Sprintf("0 %d 0 %d 0 0", c.NX, c.NY)
	fmt.Fprintf(bw, "  <ImageData WholeExtent=\"%s\" Origin=\"%s %s 0\" Spacing=\"%s %s %s\">\n", ext, g(x0), g(y0), g(dx), g(dy), g(dx))
	fmt.Fprintf(bw, "    <FieldData>\n      <DataArray type=\"Float64\" Name=\"TimeValue\" NumberOfTuples=\"1\" format=\"ascii\">%s</DataArray>\n    </FieldData>\n", g(t))
	fmt.Fprintf(bw, "    <Piece Extent=\"%s\">\n      <CellData>\n", ext)
	var buf []byte
	for k, name := range c.Names {
		if name == "x" || name == "y" {
			continue
		}
		fmt.Fprintf(bw, "        <DataArray type=\"Float64\" Name=\"%s\" format=\"ascii\">\n", name)
		for j := 0; j < c.NY; j++ {
			buf = buf[:0]
			for i, x := range c.Data[k][j*c.NX : (j+1)*c.NX] {
				if i > 0 {
					buf = append(buf, ' ')
				}
				buf = strconv.AppendFloat(buf, x, 'g', -1, 64)
			}
			buf = append(buf, '\n')
			bw.Write(buf)
		}
		bw.WriteString("        </DataArray>\n")
	}
	bw.WriteString("      </CellData>\n    </Piece>\n  </ImageData>\n</VTKFile>\n")
	return bw.Flush()
}
