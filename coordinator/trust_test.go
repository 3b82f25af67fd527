package coordinator_test

import (
	"context"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/nats-io/nats.go"
	"github.com/nats-io/nats.go/jetstream"

	"fvsweep/coordinator"
	"fvsweep/coordinator/client"
	"fvsweep/sweep/field"
	"fvsweep/sweep/job"
	"fvsweep/sweep/wire"
	"fvsweep/worker"
)

// honest is the outcome the real runner of the trust tests returns.
func honest(context.Context, job.Job) (worker.Result, error) {
	return worker.Result{Outcome: job.Outcome{Status: job.StatusDone, Steps: 7, WallS: 0.01, TFinal: 0.05,
		Errors: map[string]job.Norms{"u": {L1: 0.5, L2: 0.6, Linf: 0.7}}}}, nil
}

// publishResult publishes o on subject with ticket in its header ("" for none).
func publishResult(t *testing.T, js jetstream.JetStream, subject string, o job.Outcome, ticket string) {
	t.Helper()
	data, err := job.EncodeOutcome(o)
	if err != nil {
		t.Fatal(err)
	}
	m := nats.NewMsg(subject)
	m.Data = data
	if ticket != "" {
		m.Header.Set(wire.TicketHeader, ticket)
	}
	if _, err := js.PublishMsg(context.Background(), m); err != nil {
		t.Fatal(err)
	}
}

// waitRefused waits until the coordinator has refused n results.
func waitRefused(t *testing.T, c *coordinator.Coordinator, n int64) {
	t.Helper()
	for deadline := time.Now().Add(10 * time.Second); c.RefusedResults() < n; time.Sleep(10 * time.Millisecond) {
		if time.Now().After(deadline) {
			t.Fatalf("%d results refused, want %d", c.RefusedResults(), n)
		}
	}
}

// Every forgery issue 11 found, and a few more, is refused and counted
// while the jobs are queued: no ticket, a wrong ticket, the right ticket
// on another job's subject, a job of another sweep, a snapshot the job did
// not ask for, and range violations with the right ticket. Then the real
// results are stored; after done, a forgery is refused and counted, and a
// second copy of the real delivery's result is a no-op, not counted.
func TestForgedOutcomesAreRefused(t *testing.T) {
	r := newRig(t, testDelivery)
	r.submit(smallSpec)
	r.submit(`name = "other"
[[study]]
case = "burgers-sine"
fixed = { t_end = 0.05, nx = 8 }
`)
	jobs, err := r.db.Jobs("small")
	if err != nil {
		t.Fatal(err)
	}
	a, b := jobs[0], jobs[1]
	ticket := func(j job.Job) string {
		q, ok, err := r.db.Queue(j.Sweep, j.ID)
		if err != nil || !ok || len(q.Tickets) != 1 {
			t.Fatalf("queue record of %s: %+v %v %v", j.ID, q, ok, err)
		}
		return q.Tickets[0]
	}
	ta := ticket(a)
	js, _ := jetstream.New(r.nc)
	fake := func(change func(*job.Outcome)) job.Outcome {
		o := job.Outcome{JobID: a.ID, Sweep: "small", Status: job.StatusDone, Worker: "forger", Attempts: 1, Steps: 3,
			Errors: map[string]job.Norms{"u": {L1: 1e-12, L2: 1e-12, Linf: 1e-12}}}
		if change != nil {
			change(&o)
		}
		return o
	}
	subjA := r.names.ResultSubject("small", a.ID)
	many := map[string]float64{}
	for i := 0; i < 100; i++ {
		many["f"+strconv.Itoa(i)] = 1
	}
	forgeries := []struct {
		name    string
		subject string
		o       job.Outcome
		ticket  string
	}{
		{"no ticket", subjA, fake(nil), ""},
		{"wrong ticket", subjA, fake(nil), strings.Repeat("0", 32)},
		{"another job's subject", r.names.ResultSubject("small", b.ID), fake(nil), ta},
		{"another sweep's job", r.names.ResultSubject("other", a.ID), fake(func(o *job.Outcome) { o.Sweep = "other" }), ta},
		{"snapshot not asked for", subjA, fake(func(o *job.Outcome) { o.Snapshot = r.names.FieldBucket() + "/" + a.ID }), ta},
		{"negative norm", subjA, fake(func(o *job.Outcome) { o.Errors = map[string]job.Norms{"u": {L1: -1}} }), ta},
		{"wall_s -5", subjA, fake(func(o *job.Outcome) { o.WallS = -5 }), ta},
		{"steps 2^62", subjA, fake(func(o *job.Outcome) { o.Steps = 1 << 62 }), ta},
		{"done with an error", subjA, fake(func(o *job.Outcome) { o.Error = "but also failed" }), ta},
		{"100 functionals", subjA, fake(func(o *job.Outcome) { o.Functionals = many }), ta},
	}
	for _, f := range forgeries {
		publishResult(t, js, f.subject, f.o, f.ticket)
	}
	waitRefused(t, r.coord, int64(len(forgeries)))
	if tally, _ := r.db.Count("small"); tally.Done+tally.Failed != 0 {
		t.Fatalf("a forgery was stored: %+v", tally)
	}

	w := r.addWorker(2, honest)
	r.wait("small", 6, 20*time.Second)
	outs, _ := r.db.Outcomes("small")
	for id, o := range outs {
		if o.Steps != 7 || o.Worker != w.ID() || o.Errors["u"].L1 != 0.5 {
			t.Errorf("job %s: stored %+v, want the real result", id, o)
		}
	}

	// After done: a forgery with a wrong ticket is refused and counted; the
	// real delivery's result again (a redelivery) is a no-op.
	publishResult(t, js, subjA, fake(nil), strings.Repeat("1", 32))
	waitRefused(t, r.coord, int64(len(forgeries))+1)
	publishResult(t, js, subjA, fake(nil), ta)
	waitEmpty(t, js, r.names.ResultStream())
	if n := r.coord.RefusedResults(); n != int64(len(forgeries))+1 {
		t.Errorf("%d refused, want %d (a duplicate of a real delivery is not a forgery)", n, len(forgeries)+1)
	}
	if o, _, _ := r.db.Outcome(a.ID); o.Steps != 7 || o.Worker != w.ID() {
		t.Errorf("after done, outcome %+v", o)
	}
	cl := client.New(r.nc, r.names)
	st, err := cl.Status(context.Background(), "small")
	if err != nil || st.RefusedResults != int64(len(forgeries))+1 {
		t.Errorf("status: refused %d, %v", st.RefusedResults, err)
	}
}

// A job whose message a hostile worker acked without a result is queued
// again: by a resubmission (a message ID per publish: the duplicate window
// does not swallow it) and by the coordinator's reconcile on its own. A job
// nakked to its delivery limit is failed with what happened.
func TestRemovedJobsAreQueuedAgain(t *testing.T) {
	d := coordinator.Delivery{AckWait: 300 * time.Millisecond, MaxDeliver: 2}
	r := newRig(t, d, func(c *coordinator.Config) { c.Reconcile = 150 * time.Millisecond })
	js, _ := jetstream.New(r.nc)
	cons, err := js.Consumer(context.Background(), r.names.JobStream(), r.names.WorkerConsumer())
	if err != nil {
		t.Fatal(err)
	}
	take := func(settle func(jetstream.Msg)) {
		t.Helper()
		b, err := cons.Fetch(1, jetstream.FetchMaxWait(2*time.Second))
		if err != nil {
			t.Fatal(err)
		}
		n := 0
		for m := range b.Messages() {
			settle(m)
			n++
		}
		if n != 1 {
			t.Fatalf("fetched %d jobs, want 1", n)
		}
	}
	ack := func(m jetstream.Msg) { m.Ack() }
	one := `name = "one"
[[study]]
case = "burgers-sine"
fixed = { nx = 16 }
`
	r.submit(one)
	take(ack)
	waitEmpty(t, js, r.names.JobStream())
	if rep := r.submit(one); rep.Queued != 1 || rep.Stored != 0 {
		t.Fatalf("resubmit: %+v", rep)
	}
	s, _ := js.Stream(context.Background(), r.names.JobStream())
	if info, _ := s.Info(context.Background()); info.State.Msgs != 1 {
		t.Fatalf("after the resubmission the stream holds %d jobs, want 1", info.State.Msgs)
	}
	take(ack) // removed again; now the reconcile must notice
	deadline := time.Now().Add(5 * time.Second)
	for {
		info, _ := s.Info(context.Background())
		if info.State.Msgs == 1 {
			break
		}
		if time.Now().After(deadline) {
			t.Fatal("the reconcile did not queue the removed job again")
		}
		time.Sleep(20 * time.Millisecond)
	}
	// Nakked on every delivery: failed with what happened.
	take(func(m jetstream.Msg) { m.Nak() })
	take(func(m jetstream.Msg) { m.Nak() })
	r.addWorker(1, honest) // the server notices the exhausted job when it next delivers
	r.wait("one", 1, 10*time.Second)
	outs, _ := r.db.Outcomes("one")
	for _, o := range outs {
		if o.Status != job.StatusFailed || !strings.Contains(o.Error, "delivered 2 times, no result") || strings.Contains(o.Error, "lost") {
			t.Errorf("outcome %+v", o)
		}
	}
}

// Forget discards a stored outcome, files who did it, and the next
// submission runs that job again. A stored job whose study asks for a
// snapshot but whose outcome has none runs again too.
func TestForgetAndSnapshotRerun(t *testing.T) {
	r := newRig(t, testDelivery)
	run := &counting{run: worker.FV2D{}.Run}
	r.addWorker(1, run.Run)
	plain := `name = "plain"
[[study]]
case = "vortex"
fixed = { nx = 16, ny = 16, t_end = 0.01 }
`
	r.submit(plain)
	r.wait("plain", 1, 20*time.Second)
	jobs, _ := r.db.Jobs("plain")
	rep, err := r.coord.Forget(wire.ForgetRequest{Sweep: "plain", Job: jobs[0].ID}, "tester")
	if err != nil || rep.Forgotten != 1 {
		t.Fatalf("forget: %+v %v", rep, err)
	}
	recs, _ := r.db.Forgotten("plain")
	if len(recs) != 1 || recs[0].By != "tester" || recs[0].Jobs[jobs[0].ID] != "done" {
		t.Fatalf("forget records %+v", recs)
	}
	if rep := r.submit(plain); rep.Queued != 1 {
		t.Fatalf("resubmit after forget: %+v", rep)
	}
	r.wait("plain", 1, 20*time.Second)
	if n := run.n.Load(); n != 2 {
		t.Fatalf("runner called %d times, want 2", n)
	}
	// The same run with snapshot = true: stored without a snapshot, so it
	// runs again and its outcome gains one.
	snap := strings.Replace(strings.Replace(plain, `"plain"`, `"snap"`, 1), "t_end = 0.01 }", "t_end = 0.01 }\nsnapshot = true", 1)
	if rep := r.submit(snap); rep.Queued != 1 || rep.Stored != 0 {
		t.Fatalf("snapshot submit: %+v", rep)
	}
	deadline := time.Now().Add(20 * time.Second)
	for {
		if o, _, _ := r.db.Outcome(jobs[0].ID); o.Snapshot != "" {
			break
		}
		if time.Now().After(deadline) {
			t.Fatal("the snapshot never came")
		}
		time.Sleep(20 * time.Millisecond)
	}
	if rep := r.submit(snap); rep.Stored != 1 || rep.Queued != 0 {
		t.Fatalf("snapshot resubmit: %+v", rep)
	}
}

// An oversized snapshot object is refused with its result and deleted.
func TestOversizedSnapshotRefused(t *testing.T) {
	r := newRig(t, testDelivery)
	r.submit(`name = "big"
[[study]]
case = "burgers-sine"
fixed = { nx = 16, t_end = 0.01 }
snapshot = true
`)
	jobs, _ := r.db.Jobs("big")
	j := jobs[0]
	bound := coordinator.SnapshotBound(j)
	ny, _ := strconv.Atoi(j.Params["ny"])
	if want := int64(16*ny*1*4) + 64<<10; bound != want { // nx x ny x 1 variable (u) x float32 + header
		t.Fatalf("snapshot bound %d, want %d for params %v", bound, want, j.Params)
	}
	js, _ := jetstream.New(r.nc)
	obs, err := js.ObjectStore(context.Background(), r.names.FieldBucket())
	if err != nil {
		t.Fatal(err)
	}
	if _, err := obs.PutBytes(context.Background(), j.ID, make([]byte, bound+1)); err != nil {
		t.Fatal(err)
	}
	q, _, _ := r.db.Queue("big", j.ID)
	publishResult(t, js, r.names.ResultSubject("big", j.ID), job.Outcome{JobID: j.ID, Sweep: "big", Status: job.StatusDone,
		Worker: "w", Attempts: 1, Snapshot: r.names.FieldBucket() + "/" + j.ID}, q.Tickets[0])
	waitRefused(t, r.coord, 1)
	if _, err := obs.GetInfo(context.Background(), j.ID); err == nil {
		t.Error("the oversized snapshot is still in the bucket")
	}
	if _, ok, _ := r.db.Outcome(j.ID); ok {
		t.Error("the result with the oversized snapshot was stored")
	}
}

// A snapshot overwritten after its result was stored (any worker
// credential may write objects) is found by its digest, which the
// coordinator records with the outcome.
func TestReplacedSnapshotIsFound(t *testing.T) {
	r := newRig(t, testDelivery)
	r.addWorker(1, worker.FV2D{}.Run)
	r.submit(`name = "digest"
[[study]]
case = "burgers-sine"
fixed = { nx = 16, t_end = 0.01 }
snapshot = true
`)
	r.wait("digest", 1, 20*time.Second)
	jobs, _ := r.db.Jobs("digest")
	o, _, _ := r.db.Outcome(jobs[0].ID)
	if o.Snapshot == "" || !strings.HasPrefix(o.SnapshotDigest, "SHA-256=") {
		t.Fatalf("outcome snapshot %q digest %q", o.Snapshot, o.SnapshotDigest)
	}
	ctx := context.Background()
	raw, err := client.FetchField(ctx, r.nc, o.Snapshot)
	if err != nil {
		t.Fatal(err)
	}
	// The digest is the object store's own (nats.go computes it on put).
	if err := field.CheckDigest(raw, o.SnapshotDigest); err != nil {
		t.Fatalf("the stored snapshot fails its own digest: %v", err)
	}
	js, _ := jetstream.New(r.nc)
	obs, err := js.ObjectStore(ctx, r.names.FieldBucket())
	if err != nil {
		t.Fatal(err)
	}
	junk := append([]byte(nil), raw...)
	junk[len(junk)-1] ^= 0xff
	if _, err := obs.PutBytes(ctx, jobs[0].ID, junk); err != nil {
		t.Fatal(err)
	}
	raw, err = client.FetchField(ctx, r.nc, o.Snapshot)
	if err != nil {
		t.Fatal(err)
	}
	if err := field.CheckDigest(raw, o.SnapshotDigest); err == nil || !strings.Contains(err.Error(), "replaced") {
		t.Fatalf("a replaced snapshot passes: %v", err)
	}
}
