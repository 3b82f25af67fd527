package coordinator

import (
	"context"
	"crypto/rand"
	"encoding/hex"
	"errors"
	"fmt"
	"strconv"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"fvsweep/fv2d"
	"fvsweep/store"
	"fvsweep/sweep/job"
	"fvsweep/sweep/wire"
)

// newTicket draws a job message's ticket: 128 random bits as 32 hex digits.
func newTicket() string {
	var b [16]byte
	rand.Read(b[:]) // never fails (crypto/rand)
	return hex.EncodeToString(b[:])
}

// checkBatch decides which result messages of a batch belong to a
// delivery, and returns their outcomes (with the messages to ack once they
// are stored). A result is stored only when
//
//   - it decodes (job.DecodeOutcomeMessage) and keeps to cfg.Bounds;
//   - its subject is the result subject of the job and sweep it names;
//   - the store holds that job in that sweep, and the ticket in its
//     header is one the coordinator drew for the job's latest publishes;
//   - the job has no stored outcome, or a failed one (a late done from the
//     same delivery replaces a failure), or a done one that lacks the
//     snapshot this result brings;
//   - its snapshot, if any, is the job's own object and no larger than the
//     job's grid allows.
//
// A result from the right delivery for a job that is already done is a
// duplicate (a redelivery): acked, not stored, not counted. Every other
// refused result is terminated, counted (RefusedResults in status) and
// logged at WARN with the worker it names. The error is a failed store read.
func (c *Coordinator) checkBatch(msgs []jetstream.Msg) ([]job.Outcome, []jetstream.Msg, error) {
	outs := make([]job.Outcome, 0, len(msgs))
	keep := make([]jetstream.Msg, 0, len(msgs))
	tickets := make([]store.Ticket, 0, len(msgs))
	for _, m := range msgs {
		o, err := job.DecodeOutcomeMessage(m.Data())
		if err == nil {
			err = o.CheckBounds(c.cfg.Bounds)
		}
		if err == nil && m.Subject() != c.cfg.Names.ResultSubject(o.Sweep, o.JobID) {
			err = fmt.Errorf("result of job %s of sweep %q on subject %s", o.JobID, o.Sweep, m.Subject())
		}
		if err != nil {
			c.refuse(m, o.Worker, err)
			continue
		}
		var ticket string
		if h := m.Headers(); h != nil {
			ticket = h.Get(wire.TicketHeader)
		}
		outs = append(outs, o)
		keep = append(keep, m)
		tickets = append(tickets, store.Ticket{Sweep: o.Sweep, JobID: o.JobID, Ticket: ticket})
	}
	if len(outs) == 0 {
		return nil, nil, nil
	}
	ds, err := c.db.Deliveries(tickets)
	if err != nil {
		return nil, nil, err
	}
	n := 0
	for i, m := range keep {
		o, d := outs[i], ds[i]
		switch {
		case !d.Known:
			c.refuse(m, o.Worker, fmt.Errorf("job %s is not in the store under sweep %q", o.JobID, o.Sweep))
			continue
		case !d.TicketOK && tickets[i].Ticket == "":
			c.refuse(m, o.Worker, fmt.Errorf("job %s: the result carries no ticket", o.JobID))
			continue
		case !d.TicketOK:
			c.refuse(m, o.Worker, fmt.Errorf("job %s: the result's ticket is not one of the job's", o.JobID))
			continue
		case d.Stored == job.StatusDone && (o.Status != job.StatusDone || o.Snapshot == "" || d.Snapshot != ""):
			c.log.Debug("duplicate result", "job", o.JobID, "worker", o.Worker)
			m.Ack()
			continue
		}
		if err := c.checkSnapshot(&o, d.Job); err != nil {
			c.refuse(m, o.Worker, err)
			continue
		}
		outs[n], keep[n] = o, m
		n++
	}
	return outs[:n], keep[:n], nil
}

// refuse terminates a result message that does not belong to a delivery,
// counts it and logs it with the worker it names.
func (c *Coordinator) refuse(m jetstream.Msg, worker string, why error) {
	c.refused.Add(1)
	c.log.Warn("dropping result (refused)", "worker", worker, "subject", m.Subject(), "error", why)
	m.TermWithReason("refused")
}

// RefusedResults counts the result messages refused since the start.
func (c *Coordinator) RefusedResults() int64 { return c.refused.Load() }

// snapshotHeader bounds the header of a field snapshot: magic, length and
// the JSON header (grid, variable names, parameters).
const snapshotHeader = 64 << 10

// maxSnapshotVars is the variable count assumed for a job whose case
// fvsweep's solver does not know (an outside solver's).
const maxSnapshotVars = 8

// SnapshotBound is the largest snapshot object job j may store: its grid
// (nx x ny cells) times its variables times 4 bytes (float32), plus the
// header.
func SnapshotBound(j job.Job) int64 {
	nx, _ := strconv.ParseInt(j.Params["nx"], 10, 64)
	ny, err := strconv.ParseInt(j.Params["ny"], 10, 64)
	if err != nil {
		ny = 1
	}
	vars := int64(maxSnapshotVars)
	if cs, err := fv2d.LookupCase(j.Case); err == nil && j.SolverName() == job.BuiltinSolver {
		vars = int64(len(cs.Equation().Vars()))
	}
	return max(nx, 1)*max(ny, 1)*vars*4 + snapshotHeader
}

// checkSnapshot checks the snapshot an outcome names: the job asked for
// one, it is the job's own object, and it is no larger than SnapshotBound.
// An oversized object is deleted. It records the object's digest in o
// (whatever the worker sent there is dropped), so that a reader finds a
// snapshot that another worker credential overwrote after this.
func (c *Coordinator) checkSnapshot(o *job.Outcome, j job.Job) error {
	o.SnapshotDigest = ""
	if o.Snapshot == "" {
		return nil
	}
	if !j.Snapshot {
		return fmt.Errorf("job %s: a snapshot the job did not ask for", o.JobID)
	}
	if o.Snapshot != c.cfg.Names.SnapshotRef(o.JobID) {
		return fmt.Errorf("job %s: snapshot %q is not the job's own object", o.JobID, o.Snapshot)
	}
	ctx, cancel := context.WithTimeout(context.Background(), 10*time.Second)
	defer cancel()
	info, err := c.fields.GetInfo(ctx, o.JobID)
	if errors.Is(err, jetstream.ErrObjectNotFound) {
		return fmt.Errorf("job %s: snapshot object missing", o.JobID)
	}
	if err != nil {
		c.log.Debug("snapshot info", "job", o.JobID, "error", err)
		return nil // not known to be wrong; the reader checks the format
	}
	if bound := SnapshotBound(j); int64(info.Size) > bound {
		if err := c.fields.Delete(ctx, o.JobID); err != nil {
			c.log.Warn("deleting an oversized snapshot", "job", o.JobID, "error", err)
		}
		return fmt.Errorf("job %s: snapshot of %d bytes exceeds its grid's %d", o.JobID, info.Size, bound)
	}
	o.SnapshotDigest = info.Digest
	return nil
}
