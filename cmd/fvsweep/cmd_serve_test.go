package main

import (
	"net"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"fvsweep/coordinator/datadir"
	"fvsweep/store"
	"fvsweep/sweep/job"
)

// serve on a port in use fails at once, says why, and leaves no data
// directory behind it made.
func TestServeOnPortInUse(t *testing.T) {
	l, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	defer l.Close()
	data := filepath.Join(t.TempDir(), "data")
	start := time.Now()
	code, out, errs := runCLI(t, "serve", "--data", data, "--listen", l.Addr().String(), "--log-level", "error")
	if took := time.Since(start); code != 1 || !strings.Contains(errs, "address already in use") || took > 5*time.Second {
		t.Errorf("exit %d after %v, stdout %q, stderr %q; want 1 at once, naming the cause", code, took, out, errs)
	}
	if _, err := os.Stat(data); !os.IsNotExist(err) {
		t.Errorf("data directory left behind: %v", err)
	}
}

// A server named with --nats that does not answer is an error naming it
// (exit 1); the store in --data is neither read nor changed.
func TestNamedServerThatDoesNotAnswer(t *testing.T) {
	d := datadir.Dir(t.TempDir())
	db, err := store.Open(d.DB(), store.Options{})
	if err != nil {
		t.Fatal(err)
	}
	j := job.Job{ID: job.NewID("burgers-sine nx=16"), Sweep: "s", Case: "burgers-sine", Params: map[string]string{"nx": "16"}, Refine: "nx"}
	if _, _, err := db.PutSweep(store.SweepRecord{Name: "s", SpecFile: "s.toml", Spec: "name = \"s\"\n"}, []job.Job{j}); err != nil {
		t.Fatal(err)
	}
	db.Close()
	l, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	dead := "nats://" + l.Addr().String()
	l.Close()
	for _, args := range [][]string{
		{"status"}, {"status", "s"}, {"table", "s"}, {"export", "s", "--format", "csv"},
		{"cancel", "s"}, {"forget", "s"},
	} {
		code, out, errs := runCLI(t, append(args, "--data", string(d), "--nats", dead)...)
		if code != 1 || !strings.Contains(errs, dead) || out != "" {
			t.Errorf("%v --nats %s: exit %d, stdout %q, stderr %q; want 1 naming the URL", args, dead, code, out, errs)
		}
	}
	code, out, _ := runCLI(t, "status", "s", "--data", string(d))
	if code != 0 || strings.Contains(out, "canceled") {
		t.Errorf("status from the store: exit %d, %q; want the sweep not canceled", code, out)
	}
	code, _, errs := runCLI(t, "table", "nosuch", "--data", string(d))
	if code != 1 || !strings.Contains(errs, "the sweeps are: s") {
		t.Errorf("table of an unknown sweep: exit %d, %q; want the stored sweeps named", code, errs)
	}
}
