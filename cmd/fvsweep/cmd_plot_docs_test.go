package main

import (
	"bytes"
	"os"
	"strings"
	"testing"

	"fvsweep/sweep/spec"
	"fvsweep/sweep/wire"
)

// The plot examples of docs/figures.md work on the demo sweep
// (configs/blast-limiters.toml): each parses as the plot command's flags,
// and each --job names exactly one job of the demo, in a study that keeps
// snapshots, so no example depends on an ID that only one run made.
func TestFiguresDocExamples(t *testing.T) {
	doc, err := os.ReadFile("../../docs/figures.md")
	if err != nil {
		t.Fatal(err)
	}
	src, err := os.ReadFile("../../configs/blast-limiters.toml")
	if err != nil {
		t.Fatal(err)
	}
	sp, err := spec.LoadSource("blast-limiters.toml", src, spec.DefaultLimits())
	if err != nil {
		t.Fatal(err)
	}
	jobs, err := sp.Expand()
	if err != nil {
		t.Fatal(err)
	}
	rows := make([]wire.Row, len(jobs))
	for i, j := range jobs {
		rows[i] = wire.Row{Job: j}
	}
	n := 0
	for _, line := range strings.Split(string(doc), "\n") {
		cmd, ok := strings.CutPrefix(line, "fvsweep plot ")
		if !ok {
			continue
		}
		n++
		cmd, _, _ = strings.Cut(cmd, ">")
		args := strings.Fields(cmd)
		if args[0] != sp.Name {
			t.Errorf("%q: not the demo sweep %s", line, sp.Name)
		}
		// Flags and arguments are checked before the sweep is opened: an
		// empty data directory fails there (1), bad usage earlier (2).
		var stdout, stderr bytes.Buffer
		if code := runPlot(append(args, "--data", t.TempDir()), &stdout, &stderr); code == 2 {
			t.Errorf("%q: bad usage: %s", line, stderr.String())
		}
		for i, a := range args {
			if a != "--job" || i+1 >= len(args) {
				continue
			}
			r, err := findJob(rows, args[i+1])
			if err != nil {
				t.Errorf("%q: %v", line, err)
			} else if !r.Job.Snapshot {
				t.Errorf("%q: job %s of study %d stores no snapshot", line, r.Job.ID, r.Job.Study)
			}
		}
	}
	if n < 4 {
		t.Errorf("found %d plot examples in docs/figures.md", n)
	}
}
