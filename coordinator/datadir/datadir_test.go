package datadir_test

import (
	"context"
	"net"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"fvsweep/coordinator/client"
	"fvsweep/coordinator/datadir"
	"fvsweep/store"
	"fvsweep/sweep/job"
	"fvsweep/sweep/wire"
)

// The layout is the one docs/running.md describes to users.
func TestLayout(t *testing.T) {
	d := datadir.Dir("data")
	for _, c := range []struct{ got, want string }{
		{d.DB(), filepath.Join("data", "fvsweep.db")},
		{d.NATS(), filepath.Join("data", "nats")},
		{d.URLFile(), filepath.Join("data", "coordinator.url")},
	} {
		if c.got != c.want {
			t.Errorf("got %q, want %q", c.got, c.want)
		}
	}
}

func TestCoordinatorURL(t *testing.T) {
	d := datadir.Dir(t.TempDir())
	if u := d.CoordinatorURL(""); u != "" {
		t.Errorf("no URL file: %q, want none", u)
	}
	if err := d.WriteURL("nats://127.0.0.1:4999"); err != nil {
		t.Fatal(err)
	}
	if u := d.CoordinatorURL(""); u != "nats://127.0.0.1:4999" {
		t.Errorf("from the file: %q", u)
	}
	if u := d.CoordinatorURL("nats://elsewhere:4222"); u != "nats://elsewhere:4222" {
		t.Errorf("a given URL goes first: %q", u)
	}
	if err := d.RemoveURL(); err != nil {
		t.Fatal(err)
	}
	if u := d.CoordinatorURL(""); u != "" {
		t.Errorf("after RemoveURL: %q", u)
	}
}

// deadURL is a loopback URL on which nothing listens.
func deadURL(t *testing.T) string {
	l, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	addr := l.Addr().String()
	l.Close()
	return "nats://" + addr
}

// stored makes a data directory whose store holds one sweep of two jobs
// without outcomes.
func stored(t *testing.T) datadir.Dir {
	d := datadir.Dir(t.TempDir())
	db, err := store.Open(d.DB(), store.Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	jobs := []job.Job{
		{ID: job.NewID("burgers-sine nx=16"), Sweep: "s", Case: "burgers-sine", Params: map[string]string{"nx": "16"}, Refine: "nx"},
		{ID: job.NewID("burgers-sine nx=32"), Sweep: "s", Case: "burgers-sine", Params: map[string]string{"nx": "32"}, Refine: "nx"},
	}
	if _, _, err := db.PutSweep(store.SweepRecord{Name: "s", SpecFile: "s.toml", Spec: "name = \"s\"\n"}, jobs); err != nil {
		t.Fatal(err)
	}
	return d
}

// With no coordinator answering (none named, or a URL file left behind by
// one that died) the store is read; a cancel marks it there.
func TestStoreWhenNoCoordinator(t *testing.T) {
	ctx := context.Background()
	d := stored(t)
	for _, left := range []bool{false, true} {
		if left {
			if err := d.WriteURL(deadURL(t)); err != nil {
				t.Fatal(err)
			}
		}
		src, err := datadir.Open(ctx, d, client.DialOptions{Name: "test"})
		if err != nil {
			t.Fatalf("URL file left behind %v: %v", left, err)
		}
		if src.Live() {
			t.Errorf("URL file left behind %v: live source, want the store", left)
		}
		rep, err := src.Status(ctx, "s")
		if err != nil || len(rep.Sweeps) != 1 || rep.Sweeps[0].JobsTotal != 2 || rep.Sweeps[0].Queued != 2 || len(rep.Workers) != 0 {
			t.Errorf("status %+v, %v: want one sweep of 2 queued jobs, no workers", rep, err)
		}
		sw, err := src.Sweep(ctx, "s")
		if err != nil || len(sw.Rows) != 2 || sw.SpecFile != "s.toml" || sw.Spec != "name = \"s\"\n" {
			t.Errorf("sweep %+v, %v", sw, err)
		}
		for _, r := range sw.Rows {
			if r.Status != job.StatusQueued {
				t.Errorf("row %s: status %q, want queued", r.Job.ID, r.Status)
			}
		}
		src.Close()
	}
	if _, live, err := datadir.Cancel(ctx, d, client.DialOptions{Name: "test"}, "s"); err != nil || live {
		t.Fatalf("cancel: live %v, %v", live, err)
	}
	sw, err := datadir.ReadSweep(ctx, d, client.DialOptions{Name: "test"}, "s")
	if err != nil || len(sw.Rows) != 2 {
		t.Fatalf("read after cancel: %+v, %v", sw, err)
	}
	src, err := datadir.Open(ctx, d, client.DialOptions{Name: "test"})
	if err != nil {
		t.Fatal(err)
	}
	defer src.Close()
	if rep, err := src.Status(ctx, "s"); err != nil || !rep.Sweeps[0].Canceled {
		t.Errorf("after cancel: %+v, %v; want canceled", rep, err)
	}
}

func TestOpenWithoutData(t *testing.T) {
	d := datadir.Dir(t.TempDir())
	_, err := datadir.Open(context.Background(), d, client.DialOptions{})
	if err == nil || !strings.Contains(err.Error(), "no coordinator running and no store at "+d.DB()) {
		t.Errorf("empty directory: %v", err)
	}
	if _, err := os.Stat(d.DB()); !os.IsNotExist(err) {
		t.Errorf("opening read-only created the store: %v", err)
	}
	_, err = datadir.Open(context.Background(), d, client.DialOptions{URL: deadURL(t)})
	if err == nil || !strings.Contains(err.Error(), "connecting to NATS") {
		t.Errorf("dead URL, no store: %v; want both failures", err)
	}
}

// A snapshot comes from the URL given or nowhere; without one, from the
// server's files in the directory.
func TestSnapshotSources(t *testing.T) {
	d := datadir.Dir(t.TempDir())
	ref := "fields/" + job.NewID("x")
	if _, err := datadir.Snapshot(context.Background(), d, client.DialOptions{URL: deadURL(t)}, ref); err == nil || !strings.Contains(err.Error(), "connecting to NATS") {
		t.Errorf("dead URL given: %v; want the connection error", err)
	}
	if _, err := datadir.Snapshot(context.Background(), d, client.DialOptions{}, ref); err == nil || !strings.Contains(err.Error(), "no NATS files at "+d.NATS()) {
		t.Errorf("no URL, no files: %v", err)
	}
}

// A server named by the caller that does not answer is an error naming
// it: the store in the directory is neither read nor, by cancel and
// forget, changed (it need not be that server's coordinator's).
func TestNamedServerDoesNotFallBack(t *testing.T) {
	ctx := context.Background()
	d := stored(t)
	dead := deadURL(t)
	o := client.DialOptions{Name: "test", URL: dead}
	if src, err := datadir.Open(ctx, d, o); err == nil || !strings.Contains(err.Error(), dead) {
		if src != nil {
			src.Close()
		}
		t.Errorf("open with %s named: %v; want an error naming it", dead, err)
	}
	if _, err := datadir.ReadSweep(ctx, d, o, "s"); err == nil || !strings.Contains(err.Error(), dead) {
		t.Errorf("read with %s named: %v; want an error naming it", dead, err)
	}
	if _, _, err := datadir.Cancel(ctx, d, o, "s"); err == nil || !strings.Contains(err.Error(), dead) {
		t.Errorf("cancel with %s named: %v; want an error naming it", dead, err)
	}
	if _, _, err := datadir.Forget(ctx, d, o, wire.ForgetRequest{Sweep: "s"}); err == nil || !strings.Contains(err.Error(), dead) {
		t.Errorf("forget with %s named: %v; want an error naming it", dead, err)
	}
	src, err := datadir.Open(ctx, d, client.DialOptions{Name: "test"})
	if err != nil {
		t.Fatal(err)
	}
	defer src.Close()
	if rep, err := src.Status(ctx, "s"); err != nil || rep.Sweeps[0].Canceled {
		t.Errorf("store after a cancel to a dead server: %+v, %v; want it untouched", rep, err)
	}
}

// A sweep that is not there is named with the ones that are.
func TestNotFoundListsSweeps(t *testing.T) {
	ctx := context.Background()
	d := stored(t)
	o := client.DialOptions{Name: "test"}
	for what, err := range map[string]error{
		"read":   func() error { _, err := datadir.ReadSweep(ctx, d, o, "nosuch"); return err }(),
		"cancel": func() error { _, _, err := datadir.Cancel(ctx, d, o, "nosuch"); return err }(),
		"forget": func() error {
			_, _, err := datadir.Forget(ctx, d, o, wire.ForgetRequest{Sweep: "nosuch"})
			return err
		}(),
	} {
		if err == nil || !strings.Contains(err.Error(), `"nosuch": not found; the sweeps are: s`) {
			t.Errorf("%s of an unknown sweep: %v; want the stored sweeps listed", what, err)
		}
	}
}
