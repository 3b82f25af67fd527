package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"fvsweep/coordinator/datadir"
	"fvsweep/store"
)

// forget with no coordinator changes the store directly; with one running,
// it asks the coordinator; either way the store records who forgot what,
// and the next run reruns exactly the forgotten jobs.
func TestForgetCommand(t *testing.T) {
	dir := t.TempDir()
	spec := filepath.Join(dir, "cli.toml")
	if err := os.WriteFile(spec, []byte(cliSpec), 0o644); err != nil {
		t.Fatal(err)
	}
	data := filepath.Join(dir, "data")
	if code, out := capture(t, func() int { return runRun([]string{spec, "--data", data, "--format", "none"}) }); code != 0 {
		t.Fatalf("run: exit %d\n%s", code, out)
	}
	// cliSpec has 4 jobs with max_steps = 1: failed by the step guard.
	code, out := capture(t, func() int { return runForget([]string{"cli", "--failed", "--data", data}) })
	if code != 0 || !strings.Contains(out, "4 outcomes forgotten in") || !strings.Contains(out, "no coordinator running") {
		t.Fatalf("forget --failed: exit %d\n%s", code, out)
	}
	code, out = capture(t, func() int { return runRun([]string{spec, "--data", data, "--format", "none"}) })
	if code != 0 || !strings.Contains(out, "8 jobs, 4 already stored, 4 queued") {
		t.Fatalf("run after forget: exit %d\n%s", code, out)
	}
	if code, _ := capture(t, func() int { return runForget([]string{"cli", "--job", "x", "--failed", "--data", data}) }); code != 2 {
		t.Errorf("forget --job with --failed: exit %d, want 2 (usage)", code)
	}

	c := &common{data: data, logLevel: "warn"}
	log, _ := c.logger("test")
	s, err := startService(c, defaultServerFlags(), "", log, nil)
	if err != nil {
		t.Fatal(err)
	}
	code, out = capture(t, func() int { return runForget([]string{"cli", "--study", "1", "--data", data}) })
	s.close()
	if code != 0 || !strings.Contains(out, "8 outcomes forgotten through the coordinator") {
		t.Fatalf("forget --study 1: exit %d\n%s", code, out)
	}
	db, err := store.Open(datadir.Dir(data).DB(), store.Options{ReadOnly: true})
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	recs, err := db.Forgotten("cli")
	if err != nil || len(recs) != 2 {
		t.Fatalf("forget records: %+v %v", recs, err)
	}
	me := whoAmI()
	if recs[0].What != "failed" || !strings.HasPrefix(recs[0].By, me) || !strings.Contains(recs[0].By, "store opened directly") ||
		recs[1].What != "study 1" || !strings.HasPrefix(recs[1].By, me+" via _INBOX") || len(recs[1].Jobs) != 8 {
		t.Errorf("forget records: %+v", recs)
	}
	if tally, _ := db.Count("cli"); tally.Done+tally.Failed != 0 {
		t.Errorf("after forgetting study 1: %+v", tally)
	}
}
