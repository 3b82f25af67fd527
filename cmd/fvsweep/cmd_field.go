package main

import (
	"bufio"
	"flag"
	"fmt"
	"io"
	"os"
	"strings"

	"fvsweep/sweep/field"
)

func init() {
	register(command{name: "field", args: "SWEEP",
		run:     func(args []string) int { return runField(args, os.Stdout, os.Stderr) },
		summary: "write a job's stored final field as .npy, VTK (.vti) or CSV",
		about: `Writes the stored final field of one job (snapshot = true in its study) to
a file that other tools read:

  npy  NumPy's .npy: float64, shape (ny, nx, nvars), a[j, i, k] variable k
       of cell (i, j), the variables in the order printed
  vtk  VTK XML image data (.vti), which ParaView and VisIt open: one cell
       array per variable, the time as the field array TimeValue
  csv  a header, then one row per cell, x fastest, then y: x,y (the cell
       centre) and the variables

The values are the snapshot's (float32, written as float64). --format
defaults to the extension of --out (.npy, .vti, .csv). The snapshot comes
from the running coordinator's NATS server (or --nats), else from the
server files in --data/nats.`,
		flags: flagSet([]flagDoc{
			{"job", "ID", "the job: its ID, a unique prefix of it, or k=v pairs one job matches", ""},
			{"out", "FILE", "the file to write", ""},
			{"format", "F", "npy, vtk or csv", "the extension of --out"},
		}, commonFlags(false)),
		examples: []string{
			"fvsweep field blast-limiters --job case=quadrants,flux=hllc,nx=200 --out q.vti",
		}})
}

// fieldFormats maps the formats to their file extensions.
var fieldFormats = map[string]string{"npy": ".npy", "vtk": ".vti", "csv": ".csv"}

func runField(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("field", flag.ContinueOnError)
	var c common
	c.register(fs)
	jobID := fs.String("job", "", "")
	out := fs.String("out", "", "")
	format := choiceFlag(fs, "format", "", "npy", "vtk", "csv")
	pos, code, done := parseCommand("field", fs, args)
	if done {
		return code
	}
	if *jobID == "" || *out == "" {
		return usageErr("field", "--job ID and --out FILE are required")
	}
	if *format == "" {
		for f, ext := range fieldFormats {
			if strings.HasSuffix(strings.ToLower(*out), ext) {
				*format = f
			}
		}
	}
	if *format == "" {
		return usageErr("field", "--out %s: give --format npy, vtk or csv, or an --out ending in .npy, .vti or .csv", *out)
	}
	failed := func(err error) int {
		fmt.Fprintf(stderr, "fvsweep field: %v\n", err)
		return 1
	}
	sd, err := openSweep(&c, pos[0])
	if err != nil {
		return failed(err)
	}
	row, err := findJob(sd.rows, *jobID)
	if err != nil {
		return failed(err)
	}
	hdr, data, err := snapshotOf(row, "", func(ref string) ([]byte, error) { return fetchSnapshot(&c, ref) })
	if err != nil {
		return failed(err)
	}
	if err := writeFieldFile(*out, *format, hdr, data); err != nil {
		return failed(err)
	}
	fmt.Fprintf(stdout, "%s: job %s, %dx%d cells, t = %g, variables %s\n", *out, hdr.JobID, hdr.NX, hdr.NY, hdr.T, strings.Join(hdr.Vars, ","))
	return 0
}

// writeFieldFile writes the snapshot hdr, data to path in format.
func writeFieldFile(path, format string, hdr field.Header, data [][]float32) error {
	c := field.NewCells(hdr.Vars, hdr.NX, hdr.NY)
	for k, d := range data {
		for i, x := range d {
			c.Data[k][i] = float64(x)
		}
	}
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	w := bufio.NewWriter(f)
	switch format {
	case "npy":
		err = field.WriteNPY(w, c)
	case "vtk":
		err = field.WriteVTI(w, c, hdr.X0, hdr.Y0, hdr.DX, hdr.DY, hdr.T)
	default:
		err = field.WriteCSV(w, c.WithCentres(hdr.X0, hdr.Y0, hdr.DX, hdr.DY))
	}
	if err == nil {
		err = w.Flush()
	}
	if cerr := f.Close(); err == nil {
		err = cerr
	}
	if err != nil {
		os.Remove(path)
	}
	return err
}
