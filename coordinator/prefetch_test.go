package coordinator_test

import (
	"context"
	"sync/atomic"
	"testing"
	"time"

	"fvsweep/coordinator"
	"fvsweep/sweep/job"
	"fvsweep/worker"
)

// stallAfter is a runner whose first k calls return at once and whose
// next call takes d (or until its context ends); started is closed when
// that slow call begins.
func stallAfter(k int64, d time.Duration, calls *atomic.Int64, started chan struct{}) func(context.Context, job.Job) (worker.Result, error) {
	return func(ctx context.Context, j job.Job) (worker.Result, error) {
		if calls.Add(1) == k+1 {
			close(started)
			select {
			case <-time.After(d):
			case <-ctx.Done():
				return worker.Result{}, ctx.Err()
			}
		}
		return trivial(ctx, j)
	}
}

// Jobs waiting in a worker's prefetch buffer behind a job that runs longer
// than the ack wait get in-progress heartbeats too: none is delivered a
// second time.
func TestBufferedJobsDoNotExpire(t *testing.T) {
	r := newRig(t, testDelivery) // ack wait 1 s
	var calls atomic.Int64
	started := make(chan struct{})
	r.addWorker(1, stallAfter(2, 1800*time.Millisecond, &calls, started))
	r.submit(smallSpec)
	<-started
	tally := r.wait("small", 6, 20*time.Second)
	if tally.Done != 6 {
		t.Fatalf("tally %+v, want 6 done", tally)
	}
	outs, err := r.db.Outcomes("small")
	if err != nil {
		t.Fatal(err)
	}
	for id, o := range outs {
		if o.Attempts != 1 {
			t.Errorf("job %s: attempt %d, want 1 (it expired in the buffer)", id, o.Attempts)
		}
	}
	time.Sleep(300 * time.Millisecond)
	if n := calls.Load(); n != 6 {
		t.Errorf("runner called %d times, want 6", n)
	}
}

// A draining worker returns the jobs in its prefetch buffer to the queue
// at once (not after the ack wait), finishes the running one and takes no
// more; another worker runs the returned ones.
func TestDrainReturnsBufferedJobs(t *testing.T) {
	r := newRig(t, coordinator.Delivery{AckWait: 30 * time.Second, MaxDeliver: 3})
	var calls atomic.Int64
	started := make(chan struct{})
	r.addWorker(1, stallAfter(2, 300*time.Millisecond, &calls, started))
	r.submit(smallSpec)
	<-started
	time.Sleep(100 * time.Millisecond) // the buffer fills
	r.wstop[0]()                       // drain
	tally := r.wait("small", 3, 5*time.Second)
	time.Sleep(300 * time.Millisecond)
	if tally, _ = r.db.Count("small"); tally.Done != 3 {
		t.Fatalf("tally %+v: the drained worker should have run 3 jobs (2 quick, the running one)", tally)
	}
	r.addWorker(2, trivial)
	tally = r.wait("small", 6, 5*time.Second) // well within the ack wait
	if tally.Done != 6 {
		t.Fatalf("tally %+v, want 6 done", tally)
	}
}
