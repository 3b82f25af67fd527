package coordinator_test

import (
	"encoding/json"
	"fmt"
	"strings"
	"testing"
	"time"

	"fvsweep/coordinator/client"
	"fvsweep/store"
	"fvsweep/sweep/job"
	"fvsweep/sweep/wire"
)

// A status reply comes in parts of about replyChunk bytes, the sweeps
// first, then the workers; each part's bytes are those of encoding/json
// for a wire.StatusReply (common practice: the reply is plain JSON), with
// sweeps null in a part that has none; the parts joined hold every sweep
// in the store's order and every live worker.
func TestStatusReplyInParts(t *testing.T) {
	r := newRig(t, testDelivery)
	// 150 sweeps of about 2 KB each encoded (a long spec file name of
	// characters encoding/json escapes), every tenth with a queued job of
	// a program no worker offers, so that it has a Waiting map: about 1.2
	// parts.
	for i := range 150 {
		name := fmt.Sprintf("st%03d", i)
		var jobs []job.Job
		if i%10 == 0 {
			jobs = []job.Job{{ID: job.NewID(name), Sweep: name, Case: "burgers-sine", Solver: "heron", Version: "1.0", Params: map[string]string{"nx": "16"}, Refine: "nx"}}
		}
		file := name + "-" + strings.Repeat("<&>", 110) + ".toml"
		if _, _, err := r.db.PutSweep(store.SweepRecord{Name: name, SpecFile: file, Spec: "name = \"" + name + "\"\n"}, jobs); err != nil {
			t.Fatal(err)
		}
	}
	// 200 workers with large reports, about 4 KB each as status counts
	// them: two parts or more of workers alone.
	nc, err := client.Dial(client.DialOptions{URL: r.url, Name: "reporting worker"})
	if err != nil {
		t.Fatal(err)
	}
	defer nc.Close()
	b := wire.DefaultReportBounds()
	for i := range 200 {
		id := fmt.Sprintf("w%02d", i)
		if err := nc.Publish(r.names.WorkerSubject(id), maxReport(t, id, b)); err != nil {
			t.Fatal(err)
		}
	}
	if err := nc.Flush(); err != nil {
		t.Fatal(err)
	}
	for deadline := time.Now().Add(5 * time.Second); len(r.coord.Workers()) < 200; time.Sleep(20 * time.Millisecond) {
		if time.Now().After(deadline) {
			t.Fatalf("%d workers live after 5 s, want 200", len(r.coord.Workers()))
		}
	}
	want, err := r.coord.Status("")
	if err != nil || len(want) != 150 {
		t.Fatalf("status: %d sweeps, %v", len(want), err)
	}

	parts := replyParts(t, r, wire.VerbStatus, wire.SweepRequest{})
	if len(parts) < 4 {
		t.Errorf("%d parts, want 4 or more for about 0.8 MB", len(parts))
	}
	var sweeps []wire.SweepStatus
	var workers []wire.WorkerReport
	workersOnly := 0
	for seq, data := range parts {
		var part wire.StatusReply
		if err := wire.Decode("status reply", data, &part); err != nil {
			t.Fatalf("part %d: %v", seq, err)
		}
		if part.Seq != seq || part.Last != (seq == len(parts)-1) || part.Error != "" {
			t.Fatalf("part %d of %d: seq %d, last %v, error %q", seq, len(parts), part.Seq, part.Last, part.Error)
		}
		if len(data) > wire.MaxMessage {
			t.Errorf("part %d: %d bytes, over the maximum message %d", seq, len(data), wire.MaxMessage)
		}
		if b, _ := json.Marshal(part); string(b) != string(data) {
			t.Errorf("part %d: %d bytes differ from their encoding/json re-encoding (%d bytes):\n%.200s\n%.200s", seq, len(data), len(b), data, b)
		}
		if part.Sweeps == nil && len(part.Workers) > 0 {
			workersOnly++
		}
		if len(workers) > 0 && len(part.Sweeps) > 0 {
			t.Errorf("part %d: sweeps after workers", seq)
		}
		sweeps = append(sweeps, part.Sweeps...)
		workers = append(workers, part.Workers...)
	}
	if workersOnly < 2 {
		t.Errorf("%d parts of workers alone, want 2 or more", workersOnly)
	}
	gb, _ := json.Marshal(sweeps)
	wb, _ := json.Marshal(want)
	if string(gb) != string(wb) {
		t.Errorf("sweeps received (%d, %d bytes) differ from the coordinator's (%d, %d bytes)", len(sweeps), len(gb), len(want), len(wb))
	}
	waiting := 0
	for _, s := range sweeps {
		if len(s.Waiting) > 0 {
			waiting++
		}
	}
	if waiting != 15 || len(workers) != 200 {
		t.Errorf("%d sweeps with jobs waiting, %d workers; want 15 and 200", waiting, len(workers))
	}
}
