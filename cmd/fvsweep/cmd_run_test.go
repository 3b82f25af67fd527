package main

import (
	"encoding/json"
	"io"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"fvsweep/coordinator/datadir"
)

// capture runs f with os.Stdout redirected and returns its exit code and
// output.
func capture(t *testing.T, f func() int) (int, string) {
	t.Helper()
	r, w, err := os.Pipe()
	if err != nil {
		t.Fatal(err)
	}
	old := os.Stdout
	os.Stdout = w
	done := make(chan string)
	go func() { b, _ := io.ReadAll(r); done <- string(b) }()
	code := f()
	os.Stdout = old
	w.Close()
	return code, <-done
}

const cliSpec = `name = "cli"
[[study]]
case = "burgers-sine"
fixed = { t_end = 0.05 }
axes = { limiter = ["minmod", "mc"], max_steps = [1, 1000] }
refine = { nx = [16, 32] }
`

// run, then run again (resumes: all stored), then status, table and
// export from the store once no coordinator runs.
func TestRunResumeAndQueryStore(t *testing.T) {
	dir := t.TempDir()
	spec := filepath.Join(dir, "cli.toml")
	if err := os.WriteFile(spec, []byte(cliSpec), 0o644); err != nil {
		t.Fatal(err)
	}
	data := filepath.Join(dir, "data")
	code, out := capture(t, func() int { return runRun([]string{spec, "--data", data, "--log-level", "warn"}) })
	if code != 0 || !strings.Contains(out, "sweep cli: 8 jobs, 0 already stored, 8 queued") {
		t.Fatalf("run: exit %d\n%s", code, out)
	}
	if !strings.Contains(out, "limiter=mc max_steps=1000") || !strings.Contains(out, "step guard") {
		t.Errorf("run output lacks the tables or the failures:\n%s", out)
	}
	if _, err := os.Stat(datadir.Dir(data).URLFile()); !os.IsNotExist(err) {
		t.Errorf("coordinator.url left behind: %v", err)
	}
	code, out = capture(t, func() int { return runRun([]string{spec, "--data", data, "--format", "none"}) })
	if code != 0 || !strings.Contains(out, "8 jobs, 8 already stored, 0 queued") {
		t.Fatalf("second run: exit %d\n%s", code, out)
	}
	code, out = capture(t, func() int { return runStatus([]string{"cli", "--json", "--data", data}) })
	var st map[string]any
	if code != 0 || json.Unmarshal([]byte(out), &st) != nil {
		t.Fatalf("status: exit %d\n%s", code, out)
	}
	for k, want := range map[string]float64{"jobs_total": 8, "done": 4, "failed": 4, "running": 0, "queued": 0} {
		if st[k] != want {
			t.Errorf("status %s = %v, want %v", k, st[k], want)
		}
	}
	if st["sweep"] != "cli" {
		t.Errorf("status sweep = %v", st["sweep"])
	}
	code, out = capture(t, func() int { return runExport([]string{"cli", "--format", "json", "--data", data}) })
	var rows []map[string]any
	if code != 0 || json.Unmarshal([]byte(out), &rows) != nil || len(rows) != 8 {
		t.Fatalf("export: exit %d, %d rows\n%s", code, len(rows), out)
	}
	for _, r := range rows {
		for _, k := range []string{"job_id", "study", "case", "params", "status", "attempts", "worker", "wall_s", "errors", "error"} {
			if _, ok := r[k]; !ok {
				t.Errorf("export row lacks %q", k)
			}
		}
		failed := r["params"].(map[string]any)["max_steps"] == "1"
		if failed != (r["status"] == "failed") || failed != strings.Contains(r["error"].(string), "step guard") {
			t.Errorf("row %v: status %v error %q", r["params"], r["status"], r["error"])
		}
	}
	for _, f := range []string{"csv", "markdown", "json", "text"} {
		code, out = capture(t, func() int { return runTable([]string{"cli", "--format", f, "--data", data}) })
		if code != 0 || !strings.Contains(out, "vanleer") && !strings.Contains(out, "mc") {
			t.Errorf("table --format %s: exit %d\n%s", f, code, out)
		}
	}
	code, out = capture(t, func() int { return runExport([]string{"cli", "--format", "csv", "--data", data}) })
	if lines := strings.Split(strings.TrimSpace(out), "\n"); code != 0 || len(lines) != 9 || !strings.Contains(lines[0], "u_l1") {
		t.Errorf("export csv: exit %d\n%s", code, out)
	}
}

// With a coordinator holding the data directory, submit, status, table,
// export and cancel go to it over NATS.
func TestCommandsAskRunningCoordinator(t *testing.T) {
	dir := t.TempDir()
	spec := filepath.Join(dir, "cli.toml")
	if err := os.WriteFile(spec, []byte(cliSpec), 0o644); err != nil {
		t.Fatal(err)
	}
	data := filepath.Join(dir, "data")
	c := &common{data: data, logLevel: "warn"}
	log, _ := c.logger("test")
	s, err := startService(c, defaultServerFlags(), "", log, nil)
	if err != nil {
		t.Fatal(err)
	}
	defer s.close()
	code, out := capture(t, func() int { return runSubmit([]string{spec, "--data", data}) })
	if code != 0 || !strings.Contains(out, "8 queued") {
		t.Fatalf("submit: exit %d\n%s", code, out)
	}
	code, out = capture(t, func() int { return runStatus([]string{"cli", "--json", "--data", data}) })
	var st map[string]any
	if code != 0 || json.Unmarshal([]byte(out), &st) != nil || st["queued"] != 8.0 || st["workers"] == nil {
		t.Fatalf("status: exit %d\n%s", code, out)
	}
	code, out = capture(t, func() int { return runExport([]string{"cli", "--format", "json", "--data", data}) })
	if code != 0 || strings.Count(out, `"status": "queued"`) != 8 {
		t.Fatalf("export: exit %d\n%s", code, out)
	}
	code, out = capture(t, func() int { return runCancel([]string{"cli", "--data", data}) })
	if code != 0 || !strings.Contains(out, "8 jobs without an outcome dropped") {
		t.Fatalf("cancel: exit %d\n%s", code, out)
	}
	code, out = capture(t, func() int { return runStatus([]string{"--data", data}) })
	if code != 0 || !strings.Contains(out, "canceled") || !strings.Contains(out, "0 live workers") {
		t.Fatalf("status: exit %d\n%s", code, out)
	}
}

// run and submit enforce --job-limit before anything is stored: the spec of
// 8 runs is refused under a limit of 4 and accepted under the default.
func TestRunJobLimit(t *testing.T) {
	dir := t.TempDir()
	spec := filepath.Join(dir, "cli.toml")
	if err := os.WriteFile(spec, []byte(cliSpec), 0o644); err != nil {
		t.Fatal(err)
	}
	data := filepath.Join(dir, "data")
	if code, _ := capture(t, func() int { return runRun([]string{spec, "--data", data, "--job-limit", "4"}) }); code != 1 {
		t.Errorf("run --job-limit 4 of 8 runs: exit %d, want 1", code)
	}
	if _, err := os.Stat(datadir.Dir(data).DB()); !os.IsNotExist(err) {
		t.Errorf("a refused spec left a store behind: %v", err)
	}
	if code, _ := capture(t, func() int { return runRun([]string{spec, "--data", data, "--job-limit", "0"}) }); code != 2 {
		t.Errorf("run --job-limit 0: exit %d, want 2 (usage)", code)
	}
	if code, _ := capture(t, func() int { return runSubmit([]string{spec, "--data", data, "--mem-limit", "1KiB"}) }); code != 1 {
		t.Errorf("submit --mem-limit 1KiB: exit %d, want 1", code)
	}
}
