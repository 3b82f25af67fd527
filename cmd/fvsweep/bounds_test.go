package main

import (
	"fmt"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	"fvsweep/store"
	"fvsweep/sweep/job"
)

// maxOutcome is a done outcome of j as large as job.DefaultBounds allow:
// every map full, every key of the longest length.
func maxOutcome(t testing.TB, j job.Job) job.Outcome {
	b := job.DefaultBounds()
	key := func(prefix string, i int) string {
		k := prefix + strconv.Itoa(i)
		return k + strings.Repeat("_", b.MaxKey-len(k))
	}
	o := job.Outcome{JobID: j.ID, Sweep: j.Sweep, Status: job.StatusDone, Worker: strings.Repeat("w", b.MaxName),
		Attempts: 1, WallS: 1.25, Steps: 1000, TFinal: 0.1, CellUpdatesPerS: 1e8,
		Errors: map[string]job.Norms{"u": {L1: 1e-3, L2: 2e-3, Linf: 3e-3}}, Totals: map[string]job.Total{},
		Functionals: map[string]float64{}}
	for i := 0; len(o.Errors) < b.MaxVars; i++ {
		o.Errors[key("e", i)] = job.Norms{L1: 1.0 / float64(i+3), L2: 0.123456789, Linf: 0.987654321}
	}
	for i := 0; i < b.MaxVars; i++ {
		o.Totals[key("t", i)] = job.Total{Initial: 1.0 / 3, Final: 1.0/3 + 1e-15}
	}
	for i := 0; i < b.MaxFunctionals; i++ {
		o.Functionals[key("f", i)] = 1.0 / float64(i+7)
	}
	if err := o.CheckBounds(b); err != nil {
		t.Fatal(err)
	}
	return o
}

// A sweep of 10,000 jobs, each with an outcome of the largest size the
// bounds allow, exports and tabulates through a running coordinator (rows
// in parts under the maximum payload). Issue 11 saw one 1 MB outcome make
// export, table and report fail. About 20 s on two cores; -short skips it.
func TestTenThousandLargestOutcomesExportAndTable(t *testing.T) {
	if testing.Short() {
		t.Skip("10,000 outcomes of the largest size: skipped with -short")
	}
	var cfl []string
	for i := 0; i < 2500; i++ {
		cfl = append(cfl, strconv.FormatFloat(0.1+float64(i)*1e-4, 'g', -1, 64))
	}
	src := fmt.Sprintf(`name = "big"
[[study]]
case = "burgers-sine"
fixed = { t_end = 0.05 }
axes = { cfl = [%s] }
refine = { nx = [16, 32, 64, 128] }
`, strings.Join(cfl, ", "))
	sp, err := parseStoredSpec("big.toml", src)
	if err != nil {
		t.Fatal(err)
	}
	jobs, err := sp.Expand()
	if err != nil || len(jobs) != 10000 {
		t.Fatalf("%d jobs, %v", len(jobs), err)
	}
	data := filepath.Join(t.TempDir(), "data")
	db, err := store.Open(filepath.Join(data, "fvsweep.db"), store.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if _, _, err := db.PutSweep(store.SweepRecord{Name: "big", SpecFile: "big.toml", Spec: src, Studies: sp.Settings()}, jobs); err != nil {
		t.Fatal(err)
	}
	outs := make([]job.Outcome, len(jobs))
	for i, j := range jobs {
		outs[i] = maxOutcome(t, j)
	}
	if _, err := db.PutOutcomes(outs); err != nil {
		t.Fatal(err)
	}
	db.Close()
	c := &common{data: data, logLevel: "warn"}
	log, _ := c.logger("test")
	s, err := startService(c, defaultServerFlags(), "", log, nil)
	if err != nil {
		t.Fatal(err)
	}
	defer s.close()
	start := time.Now()
	code, out := capture(t, func() int { return runExport([]string{"big", "--format", "csv", "--data", data}) })
	if lines := strings.Count(out, "\n"); code != 0 || lines != 10001 {
		t.Fatalf("export csv: exit %d, %d lines (want a header and 10,000 rows)\n%.2000s", code, lines, out)
	}
	t.Logf("export of %d bytes in %v", len(out), time.Since(start))
	start = time.Now()
	code, out = capture(t, func() int { return runTable([]string{"big", "--data", data}) })
	if code != 0 || !strings.Contains(out, "cfl") {
		t.Fatalf("table: exit %d\n%.2000s", code, out)
	}
	t.Logf("table of %d bytes in %v", len(out), time.Since(start))
}
