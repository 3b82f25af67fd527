package coordinator

import (
	"context"
	"errors"
	"fmt"
	"strconv"
	"strings"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"fvsweep/store"
	"fvsweep/sweep"
)

// publishWindow is how many job publishes are in flight before the
// coordinator waits for their acks.
const publishWindow = 2048

// Submit expands spec, records the sweep and its jobs in the store and
// queues every job that has no stored outcome, largest estimated cost first.
// With retryFailed, failed outcomes of the sweep are deleted first so that
// those jobs run again. A canceled sweep is un-canceled. Submitting the same
// spec twice queues nothing new: stored jobs are skipped, and a job still
// queued or running is refused by the stream (one message per job subject).
func (c *Coordinator) Submit(ctx context.Context, spec *sweep.Spec, retryFailed bool) (sweep.SubmitReply, error) {
	jobs, err := spec.Expand()
	if err != nil {
		return sweep.SubmitReply{}, err
	}
	rep := sweep.SubmitReply{Sweep: spec.Name, Jobs: len(jobs)}
	rec := store.SweepRecord{Name: spec.Name, SpecFile: spec.File, Spec: spec.Source}
	if _, _, err := c.db.PutSweep(rec, jobs); err != nil {
		return rep, err
	}
	// Job message IDs make a second publish of a job within the duplicate
	// window a no-op. A sweep that was canceled (its queue purged) or whose
	// failed jobs are retried must queue its jobs again: it gets fresh IDs.
	msgID := func(id string) string { return id }
	if retryFailed {
		msgID = requeueID()
	}
	if old, err := c.db.Sweep(spec.Name); err == nil && old.Canceled {
		msgID = requeueID()
		if err := c.db.SetCanceled(spec.Name, false); err != nil {
			return rep, err
		}
		if err := c.kv.Delete(ctx, sweep.SweepToken(spec.Name)); err != nil && !errors.Is(err, jetstream.ErrKeyNotFound) {
			return rep, fmt.Errorf("clearing cancel mark: %w", err)
		}
	}
	ids := make([]string, len(jobs))
	for i, j := range jobs {
		ids[i] = j.ID
	}
	stored, err := c.db.Stored(ids)
	if err != nil {
		return rep, err
	}
	if retryFailed && len(stored) > 0 {
		outs, err := c.db.Outcomes(spec.Name)
		if err != nil {
			return rep, err
		}
		var failed []string
		for id, o := range outs {
			if o.Status == sweep.StatusFailed {
				failed = append(failed, id)
				delete(stored, id)
			}
		}
		if err := c.db.DeleteOutcomes(failed); err != nil {
			return rep, err
		}
		rep.Retried = len(failed)
	}
	rep.Stored = len(stored)
	// Expand sorts by cost, largest first; the stream keeps that order.
	todo := jobs[:0:0]
	for _, j := range jobs {
		if !stored[j.ID] {
			j.Sweep = spec.Name
			todo = append(todo, j)
		}
	}
	n, err := c.publish(ctx, todo, msgID)
	rep.Queued = n
	c.bump()
	if err != nil {
		return rep, err
	}
	c.log.Info("sweep submitted", "sweep", spec.Name, "jobs", rep.Jobs, "stored", rep.Stored, "queued", rep.Queued, "retried", rep.Retried)
	return rep, nil
}

// requeueID returns message IDs unique to this moment.
func requeueID() func(string) string {
	suffix := "-" + strconv.FormatInt(time.Now().UnixNano(), 36)
	return func(id string) string { return id + suffix }
}

// publish queues jobs in order with asynchronous publishes, at most
// publishWindow in flight. A job refused because it is already queued (or
// acknowledged as a duplicate) counts as queued. It returns how many are.
func (c *Coordinator) publish(ctx context.Context, jobs []sweep.Job, msgID func(string) string) (int, error) {
	queued := 0
	futures := make([]jetstream.PubAckFuture, 0, publishWindow)
	wait := func() error {
		for _, f := range futures {
			select {
			case <-f.Ok():
				queued++
			case err := <-f.Err():
				if !alreadyQueued(err) {
					return fmt.Errorf("publishing %s: %w", f.Msg().Subject, err)
				}
				queued++
			case <-ctx.Done():
				return ctx.Err()
			}
		}
		futures = futures[:0]
		return nil
	}
	for _, j := range jobs {
		data, err := sweep.EncodeJob(j)
		if err != nil {
			return queued, fmt.Errorf("job %s: %w", j.ID, err)
		}
		f, err := c.js.PublishAsync(c.cfg.Names.JobSubject(j.Sweep, j.ID), data,
			jetstream.WithMsgID(msgID(j.ID)), jetstream.WithExpectStream(c.cfg.Names.JobStream()))
		if err != nil {
			return queued, fmt.Errorf("publishing job %s: %w", j.ID, err)
		}
		futures = append(futures, f)
		if len(futures) == publishWindow {
			if err := wait(); err != nil {
				return queued, err
			}
		}
	}
	return queued, wait()
}

// alreadyQueued reports whether a publish was refused because the job's
// subject already holds a message (the job is queued or running).
func alreadyQueued(err error) bool {
	return err != nil && strings.Contains(err.Error(), "maximum messages per subject")
}

// Cancel marks the sweep canceled in the store and in the cancel bucket
// (workers stop its running jobs and drop its deliveries) and purges its
// queued jobs. Dropped counts the jobs left without an outcome.
func (c *Coordinator) Cancel(ctx context.Context, name string) (sweep.CancelReply, error) {
	if _, err := c.db.Sweep(name); err != nil {
		return sweep.CancelReply{}, err
	}
	if err := c.db.SetCanceled(name, true); err != nil {
		return sweep.CancelReply{}, err
	}
	if err := c.markCanceled(ctx, name); err != nil {
		return sweep.CancelReply{}, err
	}
	t, err := c.db.Count(name)
	if err != nil {
		return sweep.CancelReply{}, err
	}
	c.bump()
	c.log.Info("sweep canceled", "sweep", name)
	return sweep.CancelReply{Purged: uint64(t.Jobs - t.Done - t.Failed)}, nil
}

// markCanceled sets the cancel mark and purges the sweep's queued jobs.
func (c *Coordinator) markCanceled(ctx context.Context, name string) error {
	if _, err := c.kv.PutString(ctx, sweep.SweepToken(name), name); err != nil {
		return fmt.Errorf("cancel mark for %s: %w", name, err)
	}
	if err := c.jobs.Purge(ctx, jetstream.WithPurgeSubject(c.cfg.Names.JobFilter(name))); err != nil {
		return fmt.Errorf("purging jobs of %s: %w", name, err)
	}
	return nil
}
