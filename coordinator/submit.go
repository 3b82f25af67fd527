package coordinator

import (
	"context"
	"errors"
	"fmt"
	"maps"
	"slices"
	"strconv"
	"strings"
	"sync/atomic"
	"time"

	"github.com/nats-io/nats.go"
	"github.com/nats-io/nats.go/jetstream"

	"fvsweep/store"
	"fvsweep/sweep/job"
	"fvsweep/sweep/spec"
	"fvsweep/sweep/wire"
)

// publishWindow is how many job publishes are in flight before the
// coordinator waits for their acks.
const publishWindow = 2048

// submitChunk is how many jobs Submit records and queues at a time.
const submitChunk = 4096

// Submit expands spec, records the sweep and its jobs in the store and
// queues every job that is not complete (store.DB.Complete: no outcome, or
// a done outcome without the snapshot the job asks for), largest estimated
// cost first. With retryFailed, failed outcomes of the sweep are deleted
// first so that those jobs run again. A canceled sweep is un-canceled.
// Submitting the same spec twice queues nothing new: stored jobs are
// skipped, and a job still queued or running is refused by the stream (one
// message per job subject). A job whose message went away without an
// outcome (removed by a worker that gave no result) is queued again: every
// publish has a message ID of its own, so the duplicate window never
// swallows it.
//
// The expansion is streamed (Plan.Each): jobs are recorded (one
// transaction per chunk of submitChunk) and queued a chunk at a time, so
// that a large sweep is never held in memory whole.
func (c *Coordinator) Submit(ctx context.Context, sp *spec.Plan, retryFailed bool) (wire.SubmitReply, error) {
	rep := wire.SubmitReply{Sweep: sp.Name}
	defer c.forgetPrograms(sp.Name)
	rec := store.SweepRecord{Name: sp.Name, SpecFile: sp.File, Spec: sp.Source, Studies: sp.Settings()}
	defer c.bump()
	// Each checks the whole spec before it gives the first job, so that a
	// bad spec changes nothing: the sweep is reopened at the first job.
	var pub *publisher
	start := func() error {
		if err := c.ensureRoutes(ctx, sp); err != nil {
			return err
		}
		retried, err := c.reopen(ctx, sp.Name, retryFailed)
		rep.Retried = retried
		pub = c.newPublisher(ctx)
		return err
	}
	chunk := make([]job.Job, 0, submitChunk)
	flush := func() error {
		if _, _, err := c.db.PutSweep(rec, chunk); err != nil {
			return err
		}
		complete, err := c.db.Complete(chunk)
		if err != nil {
			return err
		}
		todo := chunk[:0:0]
		for _, j := range chunk {
			if complete[j.ID] {
				rep.Stored++
			} else {
				todo = append(todo, j)
			}
		}
		// Each gives the jobs largest cost first; the stream keeps that order.
		if err := pub.addAll(todo); err != nil {
			return err
		}
		clear(chunk)
		chunk = chunk[:0]
		return nil
	}
	err := sp.Each(func(j job.Job) error {
		if pub == nil {
			if err := start(); err != nil {
				return err
			}
		}
		rep.Jobs++
		if chunk = append(chunk, j); len(chunk) == submitChunk {
			return flush()
		}
		return nil
	})
	if err == nil && pub == nil { // no jobs
		err = start()
	}
	if err == nil && (len(chunk) > 0 || rep.Jobs == 0) {
		err = flush()
	}
	if err == nil {
		err = pub.wait()
	}
	if pub != nil {
		rep.Queued = pub.queued
	}
	if err != nil {
		return rep, err
	}
	c.log.Info("sweep submitted", "sweep", sp.Name, "jobs", rep.Jobs, "stored", rep.Stored, "queued", rep.Queued, "retried", rep.Retried)
	return rep, nil
}

// ensureRoutes creates the consumers of the outside programs sp names
// (EnsureRoute), so that their jobs wait in the stream for a worker that
// offers the program at that version.
func (c *Coordinator) ensureRoutes(ctx context.Context, sp *spec.Plan) error {
	for _, name := range slices.Sorted(maps.Keys(sp.Programs)) {
		m := sp.Programs[name]
		if err := EnsureRoute(ctx, c.js, c.cfg.Names, wire.Route(m.Name, m.Version), m.Name+"@"+m.Version, c.cfg.Delivery); err != nil {
			return err
		}
	}
	return nil
}

// reopen prepares a stored sweep for a submission: a canceled one is
// un-canceled, and with retryFailed its failed outcomes are deleted (it
// returns how many).
func (c *Coordinator) reopen(ctx context.Context, name string, retryFailed bool) (retried int, err error) {
	old, err := c.db.Sweep(name)
	if err != nil {
		return 0, nil // a new sweep
	}
	if old.Canceled {
		if err := c.db.SetCanceled(name, false); err != nil {
			return 0, err
		}
		if err := c.kv.Delete(ctx, wire.SweepToken(name)); err != nil && !errors.Is(err, jetstream.ErrKeyNotFound) {
			return 0, fmt.Errorf("clearing cancel mark: %w", err)
		}
	}
	if retryFailed {
		if retried, err = c.deleteFailed(name); err != nil {
			return 0, err
		}
	}
	return retried, nil
}

// deleteFailed deletes the failed outcomes of a sweep and counts them.
func (c *Coordinator) deleteFailed(name string) (int, error) {
	outs, err := c.db.Outcomes(name)
	if err != nil {
		return 0, err
	}
	var failed []string
	for id, o := range outs {
		if o.Status == job.StatusFailed {
			failed = append(failed, id)
		}
	}
	return len(failed), c.db.DeleteOutcomes(failed)
}

// publisher queues jobs in order with asynchronous publishes, at most
// publishWindow in flight. Each publish carries a fresh ticket (recorded in
// the store before the publish) and a message ID of its own (the job ID and
// a suffix unique to this publisher). A job refused because it is already
// queued counts as queued; its new ticket is dropped again, since the
// message in the stream carries an older one.
type publisher struct {
	c       *Coordinator
	ctx     context.Context
	suffix  string
	futures []published
	queued  int
	// fresh counts the publishes that queued a job (not refused as
	// already queued).
	fresh int
}

type published struct {
	f jetstream.PubAckFuture
	t store.Ticket
}

var publishers atomic.Uint64

func (c *Coordinator) newPublisher(ctx context.Context) *publisher {
	suffix := "-" + strconv.FormatInt(time.Now().UnixNano(), 36) + "." + strconv.FormatUint(publishers.Add(1), 36)
	return &publisher{c: c, ctx: ctx, suffix: suffix, futures: make([]published, 0, publishWindow)}
}

// addAll records a ticket for each job and queues them, in order.
func (p *publisher) addAll(jobs []job.Job) error {
	for len(jobs) > 0 {
		n := min(len(jobs), publishWindow-len(p.futures))
		ts := make([]store.Ticket, n)
		for i, j := range jobs[:n] {
			ts[i] = store.Ticket{Sweep: j.Sweep, JobID: j.ID, Ticket: newTicket()}
		}
		if err := p.c.db.AddTickets(ts); err != nil {
			return err
		}
		for i, j := range jobs[:n] {
			if err := p.add(j, ts[i]); err != nil {
				return err
			}
		}
		jobs = jobs[n:]
	}
	return nil
}

func (p *publisher) add(j job.Job, t store.Ticket) error {
	data, err := job.Encode(j)
	if err != nil {
		return fmt.Errorf("job %s: %w", j.ID, err)
	}
	n := p.c.cfg.Names
	m := nats.NewMsg(n.SubjectOf(j))
	m.Data = data
	m.Header.Set(wire.TicketHeader, t.Ticket)
	f, err := p.c.js.PublishMsgAsync(m, jetstream.WithMsgID(j.ID+p.suffix), jetstream.WithExpectStream(n.JobStream()))
	if err != nil {
		return fmt.Errorf("publishing job %s: %w", j.ID, err)
	}
	p.futures = append(p.futures, published{f, t})
	if len(p.futures) == publishWindow {
		return p.wait()
	}
	return nil
}

// wait waits for the acks of the publishes in flight, then drops the
// tickets of the publishes refused as already queued.
func (p *publisher) wait() error {
	var refused []store.Ticket
	for _, pf := range p.futures {
		select {
		case <-pf.f.Ok():
			p.queued++
			p.fresh++
		case err := <-pf.f.Err():
			if !alreadyQueued(err) {
				return fmt.Errorf("publishing %s: %w", pf.f.Msg().Subject, err)
			}
			p.queued++
			refused = append(refused, pf.t)
		case <-p.ctx.Done():
			return p.ctx.Err()
		}
	}
	p.futures = p.futures[:0]
	return p.c.db.DropTickets(refused)
}

// alreadyQueued reports whether a publish was refused because the job's
// subject already holds a message (the job is queued or running).
func alreadyQueued(err error) bool {
	return err != nil && strings.Contains(err.Error(), "maximum messages per subject")
}

// Cancel marks the sweep canceled in the store and in the cancel bucket
// (workers stop its running jobs and drop its deliveries) and purges its
// queued jobs. Dropped counts the jobs left without an outcome.
func (c *Coordinator) Cancel(ctx context.Context, name string) (wire.CancelReply, error) {
	if _, err := c.db.Sweep(name); err != nil {
		return wire.CancelReply{}, err
	}
	if err := c.db.SetCanceled(name, true); err != nil {
		return wire.CancelReply{}, err
	}
	if err := c.markCanceled(ctx, name); err != nil {
		return wire.CancelReply{}, err
	}
	t, err := c.db.Count(name)
	if err != nil {
		return wire.CancelReply{}, err
	}
	c.bump()
	c.log.Info("sweep canceled", "sweep", name)
	return wire.CancelReply{Purged: uint64(t.Jobs - t.Done - t.Failed)}, nil
}

// markCanceled sets the cancel mark and purges the sweep's queued jobs.
func (c *Coordinator) markCanceled(ctx context.Context, name string) error {
	if _, err := c.kv.PutString(ctx, wire.SweepToken(name), name); err != nil {
		return fmt.Errorf("cancel mark for %s: %w", name, err)
	}
	if err := c.jobs.Purge(ctx, jetstream.WithPurgeSubject(c.cfg.Names.JobFilter(name))); err != nil {
		return fmt.Errorf("purging jobs of %s: %w", name, err)
	}
	return nil
}
