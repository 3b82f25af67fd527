package coordinator_test

import (
	"context"
	"errors"
	"slices"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"fvsweep/coordinator"
	"fvsweep/sweep/field"
	"fvsweep/sweep/job"
	"fvsweep/worker"
)

// smallSpec is a real grid-convergence study of the Burgers sine wave
// before the shock forms: 3 limiters x 2 grids = 6 jobs of the solver.
const smallSpec = `name = "small"
[[study]]
case = "burgers-sine"
fixed = { t_end = 0.05 }
axes = { limiter = ["minmod", "vanleer", "mc"] }
refine = { nx = [16, 32] }
`

// counting wraps a runner and counts its calls.
type counting struct {
	n   atomic.Int64
	run worker.RunnerFunc
}

func (c *counting) Run(ctx context.Context, j job.Job) (worker.Result, error) {
	c.n.Add(1)
	return c.run(ctx, j)
}

// trivial is a runner that does no work.
func trivial(context.Context, job.Job) (worker.Result, error) {
	return worker.Result{Outcome: job.Outcome{Status: job.StatusDone, Steps: 1}}, nil
}

func ids(jobs []job.Job) []string {
	out := make([]string, len(jobs))
	for i, j := range jobs {
		out[i] = j.ID
	}
	slices.Sort(out)
	return out
}

func TestSweepStoresExactlyTheExpandedJobs(t *testing.T) {
	r := newRig(t, testDelivery)
	run := &counting{run: worker.FV2D{}.Run}
	r.addWorker(2, run.Run)
	rep := r.submit(smallSpec)
	if rep.Sweep != "small" || rep.Jobs != 6 || rep.Queued != 6 || rep.Stored != 0 {
		t.Fatalf("submit: %+v, want 6 jobs all queued", rep)
	}
	tally := r.wait("small", 6, 20*time.Second)
	if tally.Done != 6 || tally.Jobs != 6 {
		t.Fatalf("tally %+v, want 6 done", tally)
	}
	jobs, err := r.spec(smallSpec).Expand()
	if err != nil {
		t.Fatal(err)
	}
	outs, err := r.db.Outcomes("small")
	if err != nil {
		t.Fatal(err)
	}
	var got []string
	for id, o := range outs {
		got = append(got, id)
		if o.Status != job.StatusDone || o.Errors["u"].L1 <= 0 || o.Steps <= 0 || o.Worker == "" || o.Attempts != 1 {
			t.Errorf("outcome %s: %+v", id, o)
		}
	}
	slices.Sort(got)
	if !slices.Equal(got, ids(jobs)) {
		t.Fatalf("stored %v\nwant     %v", got, ids(jobs))
	}
	if n := run.n.Load(); n != 6 {
		t.Errorf("runner called %d times, want 6", n)
	}

	// Resubmission runs nothing new.
	rep = r.submit(smallSpec)
	if rep.Jobs != 6 || rep.Stored != 6 || rep.Queued != 0 {
		t.Fatalf("resubmit: %+v, want 6 stored, 0 queued", rep)
	}
	time.Sleep(300 * time.Millisecond)
	if n := run.n.Load(); n != 6 {
		t.Errorf("after resubmission the runner was called %d times, want 6", n)
	}
	st, err := r.coord.Status("small")
	if err != nil || len(st) != 1 || st[0].Done != 6 || st[0].Queued != 0 || st[0].Running != 0 {
		t.Fatalf("status %+v, %v", st, err)
	}
}

// A job with max_steps = 1 breaks the step guard of the solver (a
// *fv2d.Failure): it is a failed result with its reason, recorded on the
// first attempt, while the other jobs finish.
func TestDivergingJobIsFailedOthersFinish(t *testing.T) {
	r := newRig(t, testDelivery)
	r.addWorker(2, worker.FV2D{}.Run)
	r.submit(`name = "guard"
[[study]]
case = "burgers-sine"
fixed = { t_end = 0.05, nx = 16 }
axes = { max_steps = [1, 1000], limiter = ["minmod", "mc"] }
`)
	tally := r.wait("guard", 4, 20*time.Second)
	if tally.Done != 2 || tally.Failed != 2 {
		t.Fatalf("tally %+v, want 2 done, 2 failed", tally)
	}
	rows, err := r.db.Query("guard", map[string]string{"max_steps": "1"})
	if err != nil || len(rows) != 2 {
		t.Fatalf("query: %d rows, %v", len(rows), err)
	}
	for _, row := range rows {
		o := row.Outcome
		if o == nil || o.Status != job.StatusFailed || !strings.Contains(o.Error, "step guard") || o.Attempts != 1 {
			t.Errorf("job %s: outcome %+v, want failed on attempt 1 with the step guard as reason", row.Job.ID, o)
		}
	}
}

// A worker that panics on a job: the panic is recovered, the job is
// retried, and after the delivery limit it is failed with the panic as its
// reason; the other jobs finish.
func TestPanickingJobFailsAfterDeliveryLimit(t *testing.T) {
	r := newRig(t, testDelivery)
	var bad string
	var mu sync.Mutex
	var calls int
	r.addWorker(2, func(ctx context.Context, j job.Job) (worker.Result, error) {
		if j.Params["limiter"] == "mc" && j.Params["nx"] == "32" {
			mu.Lock()
			bad, calls = j.ID, calls+1
			mu.Unlock()
			panic("boom")
		}
		return trivial(ctx, j)
	})
	r.submit(smallSpec)
	tally := r.wait("small", 6, 20*time.Second)
	if tally.Done != 5 || tally.Failed != 1 {
		t.Fatalf("tally %+v, want 5 done and 1 failed", tally)
	}
	o, found, err := r.db.Outcome(bad)
	if err != nil || !found {
		t.Fatalf("outcome of %s: %v %v", bad, found, err)
	}
	if o.Status != job.StatusFailed || !strings.Contains(o.Error, "panic: boom") || o.Attempts != testDelivery.MaxDeliver {
		t.Errorf("outcome %+v, want failed after %d attempts with the panic", o, testDelivery.MaxDeliver)
	}
	mu.Lock()
	defer mu.Unlock()
	if calls != testDelivery.MaxDeliver {
		t.Errorf("panicking job ran %d times, want %d", calls, testDelivery.MaxDeliver)
	}
}

// A result delivered twice (a second worker, a redelivery) changes nothing:
// the first "done" stays.
func TestDuplicateResultIsNoOp(t *testing.T) {
	r := newRig(t, testDelivery)
	r.addWorker(2, trivial)
	r.submit(smallSpec)
	r.wait("small", 6, 20*time.Second)
	jobs, _ := r.db.Jobs("small")
	id := jobs[0].ID
	before, _, _ := r.db.Outcome(id)
	js, _ := jetstream.New(r.nc)
	for _, o := range []job.Outcome{
		{JobID: id, Sweep: "small", Status: job.StatusDone, Worker: "late", Attempts: 2, Steps: 99},
		{JobID: id, Sweep: "small", Status: job.StatusFailed, Worker: "late", Attempts: 2, Error: "late failure"},
	} {
		data, _ := job.EncodeOutcome(o)
		if _, err := js.Publish(context.Background(), r.names.ResultSubject("small", id), data); err != nil {
			t.Fatal(err)
		}
	}
	// A malformed result and one for an unknown job are dropped.
	js.Publish(context.Background(), r.names.ResultSubject("small", id), []byte("{not json"))
	unknown := strings.Repeat("ab", 16)
	data, _ := job.EncodeOutcome(job.Outcome{JobID: unknown, Sweep: "small", Status: job.StatusDone})
	js.Publish(context.Background(), r.names.ResultSubject("small", "x"), data)
	waitEmpty(t, js, r.names.ResultStream())
	if _, ok, err := r.db.Outcome(unknown); ok || err != nil {
		t.Fatalf("a result for a job not in the store was stored (%v)", err)
	}
	after, _, _ := r.db.Outcome(id)
	if after.Worker != before.Worker || after.Steps != before.Steps || after.Status != job.StatusDone {
		t.Fatalf("outcome changed by a duplicate: before %+v after %+v", before, after)
	}
	if tally, _ := r.db.Count("small"); tally.Done != 6 || tally.Jobs != 6 {
		t.Fatalf("tally %+v", tally)
	}
}

// waitEmpty waits until a work-queue stream holds no messages.
func waitEmpty(t *testing.T, js jetstream.JetStream, stream string) {
	t.Helper()
	for deadline := time.Now().Add(10 * time.Second); time.Now().Before(deadline); time.Sleep(10 * time.Millisecond) {
		s, err := js.Stream(context.Background(), stream)
		if err != nil {
			t.Fatal(err)
		}
		info, err := s.Info(context.Background())
		if err != nil {
			t.Fatal(err)
		}
		if info.State.Msgs == 0 {
			return
		}
	}
	t.Fatalf("stream %s not empty", stream)
}

// A job whose worker is lost on every delivery (it takes the job and never
// answers) is recorded as failed once the delivery limit is reached.
func TestLostWorkerJobFailsAtDeliveryLimit(t *testing.T) {
	d := coordinator.Delivery{AckWait: 300 * time.Millisecond, MaxDeliver: 2}
	r := newRig(t, d)
	r.submit(`name = "lost"
[[study]]
case = "burgers-sine"
fixed = { nx = 16 }
`)
	js, _ := jetstream.New(r.nc)
	cons, err := js.Consumer(context.Background(), r.names.JobStream(), r.names.WorkerConsumer())
	if err != nil {
		t.Fatal(err)
	}
	// A black hole: fetch and drop, twice.
	for i := 0; i < d.MaxDeliver; i++ {
		b, err := cons.Fetch(1, jetstream.FetchMaxWait(2*time.Second))
		if err != nil {
			t.Fatal(err)
		}
		n := 0
		for range b.Messages() {
			n++
		}
		if n != 1 {
			t.Fatalf("delivery %d: got %d messages", i+1, n)
		}
	}
	// The server notices the exhausted job when it next tries to deliver,
	// to a worker that pulls.
	r.addWorker(1, trivial)
	tally := r.wait("lost", 1, 10*time.Second)
	if tally.Failed != 1 {
		t.Fatalf("tally %+v", tally)
	}
	outs, _ := r.db.Outcomes("lost")
	for _, o := range outs {
		if !strings.Contains(o.Error, "delivered 2 times, no result") || o.Attempts != 2 {
			t.Errorf("outcome %+v", o)
		}
	}
	waitEmpty(t, js, r.names.JobStream())
}

// Cancel stops a sweep: running jobs are stopped and dropped, queued ones
// purged; nothing more is stored. Resubmitting resumes it.
func TestCancelStopsSweepAndResubmitResumes(t *testing.T) {
	r := newRig(t, testDelivery)
	var started atomic.Int64
	block := func(ctx context.Context, j job.Job) (worker.Result, error) {
		started.Add(1)
		<-ctx.Done()
		return worker.Result{}, ctx.Err()
	}
	w := r.addWorker(2, block)
	r.submit(smallSpec)
	for started.Load() < 2 {
		time.Sleep(5 * time.Millisecond)
	}
	rep, err := r.coord.Cancel(context.Background(), "small")
	if err != nil || rep.Purged != 6 {
		t.Fatalf("cancel: %+v %v", rep, err)
	}
	js, _ := jetstream.New(r.nc)
	waitEmpty(t, js, r.names.JobStream())
	st, _ := r.coord.Status("small")
	if !st[0].Canceled || st[0].Done != 0 {
		t.Fatalf("status after cancel: %+v", st[0])
	}
	if n := started.Load(); n != 2 {
		t.Errorf("%d jobs started, want only the 2 running at the cancel", n)
	}
	r.wstop[0]() // the blocking worker leaves
	w.Abort()
	r.addWorker(2, trivial)
	rep2 := r.submit(smallSpec)
	if rep2.Queued != 6 {
		t.Fatalf("resubmit after cancel: %+v", rep2)
	}
	tally := r.wait("small", 6, 20*time.Second)
	if tally.Done != 6 {
		t.Fatalf("tally %+v", tally)
	}
}

// A study with snapshot = true stores the final field in the object store
// as float32, referenced by the outcome.
func TestSnapshotInObjectStore(t *testing.T) {
	r := newRig(t, testDelivery)
	r.addWorker(1, worker.FV2D{}.Run)
	r.submit(`name = "snap"
[[study]]
case = "vortex"
fixed = { nx = 16, ny = 16, t_end = 0.01 }
snapshot = true
`)
	r.wait("snap", 1, 20*time.Second)
	outs, _ := r.db.Outcomes("snap")
	js, _ := jetstream.New(r.nc)
	obs, err := js.ObjectStore(context.Background(), r.names.FieldBucket())
	if err != nil {
		t.Fatal(err)
	}
	for id, o := range outs {
		if o.Status != job.StatusDone || o.Snapshot != r.names.FieldBucket()+"/"+id {
			t.Fatalf("outcome %+v", o)
		}
		data, err := obs.GetBytes(context.Background(), id)
		if err != nil {
			t.Fatal(err)
		}
		h, f, err := field.Decode(data)
		if err != nil {
			t.Fatal(err)
		}
		if h.NX != 16 || h.NY != 16 || len(f) != 4 || len(f[0]) != 256 || !slices.Equal(h.Vars, []string{"rho", "mx", "my", "E"}) {
			t.Fatalf("field %+v", h)
		}
		for _, rho := range f[0] {
			if !(rho > 0) {
				t.Fatalf("density %v in the snapshot", rho)
			}
		}
	}
}

// A draining worker finishes its running job before it returns.
func TestWorkerDrainFinishesRunningJob(t *testing.T) {
	r := newRig(t, testDelivery)
	var once sync.Once
	running := make(chan struct{})
	slow := func(ctx context.Context, j job.Job) (worker.Result, error) {
		once.Do(func() { close(running) })
		select {
		case <-time.After(300 * time.Millisecond):
		case <-ctx.Done():
			return worker.Result{}, errors.New("stopped")
		}
		return trivial(ctx, j)
	}
	r.addWorker(1, slow)
	r.submit(smallSpec)
	<-running
	r.wstop[0]() // drain
	tally := r.wait("small", 1, 5*time.Second)
	if tally.Done != 1 {
		t.Fatalf("tally %+v: the running job should have finished", tally)
	}
	time.Sleep(500 * time.Millisecond)
	if tally, _ := r.db.Count("small"); tally.Done != 1 {
		t.Fatalf("a drained worker took more jobs: %+v", tally)
	}
}
