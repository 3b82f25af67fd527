package coordinator_test

import (
	"context"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"fvsweep/coordinator/client"
	"fvsweep/coordinator/server"
	"fvsweep/sweep/field"
	"fvsweep/worker"
)

// A snapshot is read back by reference through a client, and from the
// server's files once the server is gone; bad references are errors.
func TestFieldByReference(t *testing.T) {
	dir := t.TempDir()
	srv, err := server.Start(server.Options{Dir: filepath.Join(dir, "nats")})
	if err != nil {
		t.Fatal(err)
	}
	r := newRigAt(t, srv.ClientURL(), testDelivery)
	r.srv = srv
	r.addWorker(1, worker.FV2D{}.Run)
	r.submit(`name = "snapref"
[[study]]
case = "burgers-sine"
fixed = { nx = 16, t_end = 0.02 }
snapshot = true
`)
	r.wait("snapref", 1, 20*time.Second)
	outs, err := r.db.Outcomes("snapref")
	if err != nil || len(outs) != 1 {
		t.Fatalf("outcomes %v: %v", outs, err)
	}
	var id, ref string
	for k, o := range outs {
		id, ref = k, o.Snapshot
	}
	cl := client.New(r.nc, r.names)
	live, err := cl.Field(context.Background(), ref)
	if err != nil {
		t.Fatal(err)
	}
	if h, _, err := field.Decode(live); err != nil || h.JobID != id {
		t.Fatalf("snapshot of %s: header %+v, %v", id, h, err)
	}
	for _, bad := range []string{"", "nobucket", "/" + id, r.names.FieldBucket() + "/", r.names.FieldBucket() + "/" + strings.Repeat("0", 32)} {
		if _, err := cl.Field(context.Background(), bad); err == nil {
			t.Errorf("reference %q: no error", bad)
		}
	}
	r.close()
	stored, err := server.ReadStoredField(filepath.Join(dir, "nats"), ref)
	if err != nil {
		t.Fatal(err)
	}
	if string(stored) != string(live) {
		t.Errorf("snapshot from the files differs from the one read live")
	}
	if _, err := server.ReadStoredField(filepath.Join(dir, "none"), ref); err == nil || !strings.Contains(err.Error(), "no NATS files") {
		t.Errorf("missing files: %v", err)
	}
}
