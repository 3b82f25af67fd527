package coordinator_test

import (
	"context"
	"encoding/json"
	"fmt"
	"strings"
	"testing"
	"time"

	"fvsweep/coordinator"
	"fvsweep/coordinator/client"
	"fvsweep/store"
	"fvsweep/sweep/job"
	"fvsweep/sweep/wire"
)

// storeWide puts sweep name into r's store with n done jobs, each with
// funcs functionals, and returns the jobs' IDs in dispatch order.
func storeWide(t testing.TB, r *rig, name string, n, funcs int) []string {
	t.Helper()
	jobs := make([]job.Job, n)
	outs := make([]job.Outcome, n)
	ids := make([]string, n)
	for i := range jobs {
		key := fmt.Sprintf("%s nx=%d", name, 16+i)
		jobs[i] = job.Job{ID: job.NewID(key), Sweep: name, Case: "burgers-sine", Params: map[string]string{"nx": fmt.Sprint(16 + i)}, Refine: "nx"}
		ids[i] = jobs[i].ID
		o := job.Outcome{JobID: jobs[i].ID, Sweep: name, Status: job.StatusDone, Worker: "w1", Attempts: 1, WallS: 0.5, Steps: 10 + i,
			Errors: map[string]job.Norms{"rho": {L1: 1e-3, L2: 2e-3, Linf: 5e-3}}, Functionals: map[string]float64{}}
		for k := range funcs {
			o.Functionals[fmt.Sprintf("probe_%04d_<&>", k)] = float64(i*funcs+k) / 7
		}
		outs[i] = o
	}
	if _, _, err := r.db.PutSweep(store.SweepRecord{Name: name, SpecFile: name + ".toml", Spec: "name = \"" + name + "\"\n"}, jobs); err != nil {
		t.Fatal(err)
	}
	if _, err := r.db.PutOutcomes(outs); err != nil {
		t.Fatal(err)
	}
	return ids
}

// A rows reply comes in parts of about replyChunk bytes, numbered from 0,
// the last one marked; the rows joined are those of the store in dispatch
// order, the spec is in the first part only, and a row too large for a
// message (stored before outcomes were bounded) comes without its
// outcome's maps.
func TestRowsReplyInParts(t *testing.T) {
	r := newRig(t, testDelivery)
	ids := storeWide(t, r, "wide", 240, 60)
	// One row of about 1 MiB: 40,000 functionals.
	huge := job.Job{ID: job.NewID("wide huge"), Sweep: "wide", Case: "burgers-sine", Params: map[string]string{"nx": "9999"}, Refine: "nx"}
	if _, err := r.db.AddJobs("wide", []job.Job{huge}); err != nil {
		t.Fatal(err)
	}
	o := job.Outcome{JobID: huge.ID, Sweep: "wide", Status: job.StatusDone, Worker: "w1", Attempts: 1, Functionals: map[string]float64{}}
	for k := range 40000 {
		o.Functionals[fmt.Sprintf("f%05d", k)] = float64(k)
	}
	if _, err := r.db.PutOutcomes([]job.Outcome{o}); err != nil {
		t.Fatal(err)
	}
	want, err := coordinator.Rows(r.db, "wide", nil)
	if err != nil || len(want) != len(ids)+1 {
		t.Fatalf("store: %d rows, %v", len(want), err)
	}
	for i := range want {
		if want[i].Job.ID == huge.ID {
			o := *want[i].Outcome
			o.Errors, o.Functionals, o.Totals = nil, nil, nil
			want[i].Outcome = &o
		}
	}

	var got []wire.Row
	parts := rowsParts(t, r, "wide")
	if len(parts) < 4 {
		t.Errorf("%d parts, want 4 or more for about 1 MB of rows", len(parts))
	}
	for seq, data := range parts {
		var part wire.RowsReply
		if err := wire.Decode("rows reply", data, &part); err != nil {
			t.Fatalf("part %d: %v", seq, err)
		}
		if part.Seq != seq || part.Last != (seq == len(parts)-1) || part.Error != "" || part.Total != len(want) {
			t.Fatalf("part %d of %d: seq %d, last %v, total %d, error %q; want total %d", seq, len(parts), part.Seq, part.Last, part.Total, part.Error, len(want))
		}
		if (seq == 0) != (part.SpecFile == "wide.toml" && part.Spec == "name = \"wide\"\n") {
			t.Errorf("part %d: spec file %q, spec %q; want them in part 0 only", seq, part.SpecFile, part.Spec)
		}
		// A part holds rows up to replyChunk bytes, and goes over it only
		// by one row and the frame around the rows.
		var rows int
		for _, row := range part.Rows {
			b, _ := json.Marshal(row)
			rows += len(b)
		}
		if len(part.Rows) > 1 && rows-4096 > coordinator.ReplyChunk {
			t.Errorf("part %d: %d rows of %d bytes, over %d by more than a row", seq, len(part.Rows), rows, coordinator.ReplyChunk)
		}
		// Its bytes are those of encoding/json for the part (common
		// practice: the reply is plain JSON of wire.RowsReply).
		if b, _ := json.Marshal(part); string(b) != string(data) {
			t.Errorf("part %d: %d bytes differ from their encoding/json re-encoding (%d bytes)", seq, len(data), len(b))
		}
		got = append(got, part.Rows...)
	}
	gb, _ := json.Marshal(got)
	wb, _ := json.Marshal(want)
	if string(gb) != string(wb) {
		t.Errorf("rows received (%d, %d bytes) differ from the store's (%d, %d bytes)", len(got), len(gb), len(want), len(wb))
	}

	// An empty sweep: one part, whose rows are null.
	if _, _, err := r.db.PutSweep(store.SweepRecord{Name: "empty", SpecFile: "e.toml", Spec: "x"}, nil); err != nil {
		t.Fatal(err)
	}
	if parts := rowsParts(t, r, "empty"); len(parts) != 1 || string(parts[0]) != `{"rows":null,"total":0,"spec_file":"e.toml","spec":"x","seq":0,"last":true}` {
		t.Errorf("empty sweep: parts %q", parts)
	}
	cl := client.New(r.nc, r.names)
	if _, err := cl.Rows(context.Background(), "nosuch"); err == nil || !strings.Contains(err.Error(), "nosuch") {
		t.Errorf("unknown sweep: %v, want an error naming it", err)
	}
}

// rowsParts sends a rows request for sweep name and returns the parts of
// the reply as they came, up to the one marked last.
func rowsParts(t *testing.T, r *rig, name string) [][]byte {
	t.Helper()
	return replyParts(t, r, wire.VerbRows, wire.RowsRequest{Sweep: name})
}

// replyParts sends req to the API subject of verb and returns the parts
// of the reply as they came, up to the one marked last.
func replyParts(t *testing.T, r *rig, verb string, req any) [][]byte {
	t.Helper()
	inbox := r.nc.NewRespInbox()
	sub, err := r.nc.SubscribeSync(inbox)
	if err != nil {
		t.Fatal(err)
	}
	defer sub.Unsubscribe()
	data, _ := json.Marshal(req)
	if err := r.nc.PublishRequest(r.names.API(verb), inbox, data); err != nil {
		t.Fatal(err)
	}
	var parts [][]byte
	for {
		m, err := sub.NextMsg(10 * time.Second)
		if err != nil {
			t.Fatalf("%s %s, part %d: %v", verb, data, len(parts), err)
		}
		parts = append(parts, m.Data)
		var part struct {
			Last bool `json:"last"`
		}
		if err := json.Unmarshal(m.Data, &part); err != nil {
			t.Fatalf("%s %s, part %d: %v", verb, data, len(parts)-1, err)
		}
		if part.Last {
			return parts
		}
	}
}

// BenchmarkRowsReply measures a rows request of 2,000 jobs answered in
// parts, as 'fvsweep table' against a running coordinator asks it.
func BenchmarkRowsReply(b *testing.B) {
	r := newRig(b, testDelivery)
	storeWide(b, r, "bench", 2000, 8)
	cl := client.New(r.nc, r.names)
	b.ResetTimer()
	for b.Loop() {
		rows, err := cl.Rows(context.Background(), "bench")
		if err != nil || len(rows) != 2000 {
			b.Fatalf("%d rows, %v", len(rows), err)
		}
	}
}
