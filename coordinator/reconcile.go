package coordinator

import (
	"context"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"fvsweep/sweep/job"
)

// reconcileEvery runs reconcile every cfg.Reconcile until ctx is done.
func (c *Coordinator) reconcileEvery(ctx context.Context) {
	if c.cfg.Reconcile < 0 {
		return
	}
	tick := time.NewTicker(c.cfg.Reconcile)
	defer tick.Stop()
	for {
		select {
		case <-ctx.Done():
			return
		case <-tick.C:
			n, err := c.reconcile(ctx)
			if err != nil && ctx.Err() == nil {
				c.log.Warn("looking for lost jobs", "error", err)
			}
			if n > 0 {
				c.log.Warn("jobs with no message and no outcome queued again", "jobs", n)
			}
		}
	}
}

// reconcile queues again the jobs of the sweeps that are not canceled that
// have neither an outcome nor a message in the jobs stream (a worker took
// the message away without a result, or it was purged), and returns how
// many it queued. A job must be found missing in two successive rounds:
// a result on its way to the store has already removed its job's message.
//
// Its cost per round is one count of each sweep (cached) and, for a sweep
// with jobs left, one listing of the sweep's job subjects in the stream
// (paged by the server) and a read of its jobs without an outcome when
// fewer subjects than jobs left are queued; it queues at most
// cfg.ReconcileMax jobs.
func (c *Coordinator) reconcile(ctx context.Context) (int, error) {
	recs, err := c.db.Sweeps()
	if err != nil {
		return 0, err
	}
	missing := map[string]bool{}
	var again []job.Job
	for _, r := range recs {
		if r.Canceled {
			continue
		}
		t, err := c.count(r.Name)
		if err != nil {
			return 0, err
		}
		left := t.Jobs - t.Done - t.Failed
		if left == 0 {
			continue
		}
		info, err := c.jobs.Info(ctx, jetstream.WithSubjectFilter(c.cfg.Names.JobFilter(r.Name)))
		if err != nil {
			return 0, err
		}
		if len(info.State.Subjects) >= left {
			continue
		}
		open, err := c.db.Unfinished(r.Name)
		if err != nil {
			return 0, err
		}
		for _, j := range open {
			if info.State.Subjects[c.cfg.Names.JobSubject(j.Sweep, j.ID)] > 0 {
				continue
			}
			key := j.Sweep + "\x00" + j.ID
			if len(missing) < c.cfg.ReconcileMax {
				missing[key] = true
			}
			if c.missing[key] && len(again) < c.cfg.ReconcileMax {
				again = append(again, j)
			}
		}
	}
	c.missing = missing
	if len(again) == 0 {
		return 0, nil
	}
	pub := c.newPublisher(ctx)
	if err := pub.addAll(again); err != nil {
		return 0, err
	}
	if err := pub.wait(); err != nil {
		return 0, err
	}
	for _, j := range again {
		delete(c.missing, j.Sweep+"\x00"+j.ID)
	}
	c.bump()
	return pub.fresh, nil
}
