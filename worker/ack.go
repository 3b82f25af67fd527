package worker

import (
	"context"
	"fmt"
	"strconv"
	"time"

	"github.com/nats-io/nats.go"
	"github.com/nats-io/nats.go/jetstream"

	"fvsweep/sweep/field"
	"fvsweep/sweep/job"
	"fvsweep/sweep/wire"
)

// pending is a job whose outcome was published and is not yet acknowledged.
type pending struct {
	msg    jetstream.Msg
	ack    jetstream.PubAckFuture
	jb     string
	status job.Status
	reason string
}

// settle acks each job once the server has acknowledged its outcome (naks
// it when the publish failed), in publish order, until acks is closed.
func (w *Worker) settle() {
	for p := range w.acks {
		select {
		case <-p.ack.Ok():
		case err := <-p.ack.Err():
			w.log.Debug("result publish not acknowledged; publishing it again", "job", p.jb, "error", err)
			if err := w.republish(p); err != nil {
				w.log.Warn("publishing result; the job will be delivered again", "job", p.jb, "error", err)
				p.msg.Nak()
				continue
			}
		}
		p.msg.Ack()
		if p.status == job.StatusDone {
			w.done.Add(1)
		} else {
			w.failed.Add(1)
			w.log.Info("job failed", "job", p.jb, "error", p.reason)
		}
	}
}

// republish sends a result whose asynchronous publish failed again, a few
// times over about ten seconds, keeping its job in progress meanwhile: a
// results stream that is electing a new leader (a cluster node went down)
// refuses publishes for a few seconds, and a job should not use up its
// deliveries on that. The message ID makes a repeat that did land a
// duplicate the stream drops.
func (w *Worker) republish(p pending) error {
	var err error
	for i := 1; i <= 5; i++ {
		p.msg.InProgress()
		ctx, cancel := context.WithTimeout(context.Background(), 2*time.Second)
		_, err = w.js.PublishMsg(ctx, p.ack.Msg())
		cancel()
		if err == nil {
			return nil
		}
		w.log.Debug("publishing result again", "job", p.jb, "try", i, "error", err)
		time.Sleep(time.Duration(i) * 200 * time.Millisecond)
	}
	return err
}

// publish puts the outcome on the results stream without waiting; the
// future resolves with the server's ack (or an error after 30 s). The
// message ID (job and stream sequence of the job message) makes a repeat of
// the same delivery a duplicate. The header echoes the ticket of the job
// message (job), without which the coordinator refuses the result.
func (w *Worker) publish(o job.Outcome, seq uint64, jobMsg jetstream.Msg) (jetstream.PubAckFuture, error) {
	data, err := job.EncodeOutcome(o)
	if err != nil {
		return nil, err
	}
	m := nats.NewMsg(w.cfg.Names.ResultSubject(o.Sweep, o.JobID))
	m.Data = data
	if h := jobMsg.Headers(); h != nil && h.Get(wire.TicketHeader) != "" {
		m.Header.Set(wire.TicketHeader, h.Get(wire.TicketHeader))
	}
	return w.js.PublishMsgAsync(m,
		jetstream.WithMsgID(o.JobID+"-"+strconv.FormatUint(seq, 10)),
		jetstream.WithExpectStream(w.cfg.Names.ResultStream()))
}

// putSnapshot writes the final field of jb to the field store and returns
// the object's reference, "bucket/jobID".
func (w *Worker) putSnapshot(ctx context.Context, jb job.Job, s *Snapshot) (string, error) {
	h := s.Header
	h.JobID = jb.ID
	data, err := field.Encode(h, s.Data)
	if err != nil {
		return "", err
	}
	if _, err := w.fields.PutBytes(ctx, jb.ID, data); err != nil {
		return "", fmt.Errorf("snapshot of %s: %w", jb.ID, err)
	}
	return w.cfg.Names.SnapshotRef(jb.ID), nil
}
