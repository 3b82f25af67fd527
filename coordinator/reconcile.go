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
// Its cost per round is one count of each sweep (cached) and one stream
// info; only when the stream holds fewer messages than jobs are left, one
// listing of each such sweep's job subjects (paged by the server) and a
// read of its jobs without an outcome when fewer subjects than jobs left
// are queued. It queues at most cfg.ReconcileMax jobs.
func (c *Coordinator) reconcile(ctx context.Context) (int, error) {
	recs, err := c.db.Sweeps()
	if err != nil {
		return 0, err
	}
	type open struct {
		name string
		left int
	}
	var todo []open
	total := 0
	for _, r := range recs {
		if r.Canceled {
			continue
		}
		t, err := c.count(r.Name)
		if err != nil {
			return 0, err
		}
		if left := t.Jobs - t.Done - t.Failed; left > 0 {
			todo = append(todo, open{r.Name, left})
			total += left
		}
	}
	missing := map[string]bool{}
	if len(todo) == 0 {
		c.missing = missing
		return 0, nil
	}
	// Only the coordinator publishes jobs: when the stream holds as many
	// messages as jobs are left, none is missing.
	all, err := c.jobs.Info(ctx)
	if err != nil {
		return 0, err
	}
	if all.State.Msgs >= uint64(total) {
		c.missing = missing
		return 0, nil
	}
	var again []job.Job
	for _, o := range todo {
		info, err := c.jobs.Info(ctx, jetstream.WithSubjectFilter(c.cfg.Names.JobFilter(o.name)))
		if err != nil {
			return 0, err
		}
		if len(info.State.Subjects) >= o.left {
			continue
		}
		unfinished, err := c.db.Unfinished(o.name)
		if err != nil {
			return 0, err
		}
		for _, j := range unfinished {
			if info.State.Subjects[c.cfg.Names.SubjectOf(j)] > 0 {
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
