package store

import (
	"encoding/json"
	"fmt"
	"time"

	bolt "go.etcd.io/bbolt"

	"fvsweep/sweep/job"
)

// maxTickets is how many tickets a job keeps: the one of its latest publish
// and the one before, whose result may still be on its way when the job is
// queued again.
const maxTickets = 2

// QueueRecord is a job's queue state: the tickets of its latest publishes,
// newest first, and when the newest was drawn. A result is stored only when
// it echoes one of them.
type QueueRecord struct {
	Tickets []string  `json:"tickets"`
	Queued  time.Time `json:"queued"`
}

// Ticket is one publish of a job: the job, its sweep and the ticket drawn
// for the publish.
type Ticket struct {
	Sweep, JobID, Ticket string
}

// AddTickets records a new ticket for each job, before its message is
// published: it becomes the newest of the job's tickets, and the oldest
// beyond maxTickets is forgotten. One transaction.
func (db *DB) AddTickets(ts []Ticket) error {
	if len(ts) == 0 {
		return nil
	}
	now := time.Now().UTC()
	return db.updateTickets(ts, func(r *QueueRecord, t string) {
		r.Tickets = append([]string{t}, r.Tickets...)
		r.Tickets = r.Tickets[:min(len(r.Tickets), maxTickets)]
		r.Queued = now
	})
}

// DropTickets removes tickets recorded by AddTickets whose publish did not
// happen (the job was still queued under an older ticket). One transaction.
func (db *DB) DropTickets(ts []Ticket) error {
	if len(ts) == 0 {
		return nil
	}
	return db.updateTickets(ts, func(r *QueueRecord, t string) {
		kept := r.Tickets[:0]
		for _, old := range r.Tickets {
			if old != t {
				kept = append(kept, old)
			}
		}
		r.Tickets = kept
	})
}

func (db *DB) updateTickets(ts []Ticket, change func(*QueueRecord, string)) error {
	err := db.bolt.Update(func(tx *bolt.Tx) error {
		queue, err := tx.CreateBucketIfNotExists(bucketQueue)
		if err != nil {
			return err
		}
		for _, t := range ts {
			b, err := queue.CreateBucketIfNotExists([]byte(t.Sweep))
			if err != nil {
				return fmt.Errorf("sweep %q: %w", t.Sweep, err)
			}
			var r QueueRecord
			if v := b.Get([]byte(t.JobID)); v != nil {
				if err := json.Unmarshal(v, &r); err != nil {
					return fmt.Errorf("queue record %q/%q: %w", t.Sweep, t.JobID, err)
				}
			}
			change(&r, t.Ticket)
			data, err := json.Marshal(r)
			if err != nil {
				return err
			}
			if err := b.Put([]byte(t.JobID), data); err != nil {
				return fmt.Errorf("queue record %q/%q: %w", t.Sweep, t.JobID, err)
			}
		}
		return nil
	})
	if err != nil {
		return fmt.Errorf("store: %w", err)
	}
	return nil
}

// Delivery is what the store knows about the job a result message names:
// whether the job is in that sweep (then Job is its record), whether the
// message's ticket is one of the job's, and the job's stored outcome.
type Delivery struct {
	Known    bool
	Job      job.Job
	TicketOK bool
	Stored   job.Status // "" when there is no outcome
	// Snapshot is the stored outcome's snapshot reference.
	Snapshot string
}

// Deliveries looks up, in one read transaction, the job, the tickets and
// the stored outcome of each ticket's job.
func (db *DB) Deliveries(ts []Ticket) ([]Delivery, error) {
	out := make([]Delivery, len(ts))
	err := db.bolt.View(func(tx *bolt.Tx) error {
		jobs, results, queue := tx.Bucket(bucketJobs), tx.Bucket(bucketResults), tx.Bucket(bucketQueue)
		for i, t := range ts {
			d := &out[i]
			b := jobs.Bucket([]byte(t.Sweep))
			if b == nil {
				continue
			}
			v := b.Get([]byte(t.JobID))
			if v == nil {
				continue
			}
			j, err := job.DecodeRecord(v)
			if err != nil {
				return fmt.Errorf("store: sweep %q: job %q: %w", t.Sweep, t.JobID, err)
			}
			d.Known, d.Job = true, j
			if r, ok, err := queueRecord(queue, t.Sweep, t.JobID); err != nil {
				return err
			} else if ok && t.Ticket != "" {
				for _, have := range r.Tickets {
					d.TicketOK = d.TicketOK || have == t.Ticket
				}
			}
			if v := results.Get([]byte(t.JobID)); v != nil {
				o, err := job.DecodeOutcomeRecord(v)
				if err != nil {
					return fmt.Errorf("store: job %q: %w", t.JobID, err)
				}
				d.Stored, d.Snapshot = o.Status, o.Snapshot
			}
		}
		return nil
	})
	return out, err
}

// Queue returns the queue record of a job of a sweep, and whether there is one.
func (db *DB) Queue(sweepName, jobID string) (QueueRecord, bool, error) {
	var (
		r  QueueRecord
		ok bool
	)
	err := db.bolt.View(func(tx *bolt.Tx) error {
		var err error
		r, ok, err = queueRecord(tx.Bucket(bucketQueue), sweepName, jobID)
		return err
	})
	return r, ok, err
}

// queueRecord reads a queue record; queue may be nil (a store opened
// read-only that was written before queue records existed).
func queueRecord(queue *bolt.Bucket, sweepName, jobID string) (QueueRecord, bool, error) {
	var r QueueRecord
	if queue == nil {
		return r, false, nil
	}
	b := queue.Bucket([]byte(sweepName))
	if b == nil {
		return r, false, nil
	}
	v := b.Get([]byte(jobID))
	if v == nil {
		return r, false, nil
	}
	if err := json.Unmarshal(v, &r); err != nil {
		return r, false, fmt.Errorf("store: queue record %q/%q: %w", sweepName, jobID, err)
	}
	return r, true, nil
}

// Complete reports which of the jobs have all a job must deliver: an
// outcome, done or failed, and for a done job that asks for a snapshot
// (Job.Snapshot) a snapshot reference. The map holds true for those. A
// done outcome stored by a study that did not ask for a snapshot does not
// complete a job that does: it runs again.
func (db *DB) Complete(jobs []job.Job) (map[string]bool, error) {
	out := make(map[string]bool)
	err := db.bolt.View(func(tx *bolt.Tx) error {
		results := tx.Bucket(bucketResults)
		for _, j := range jobs {
			v := results.Get([]byte(j.ID))
			if v == nil {
				continue
			}
			if j.Snapshot {
				o, err := job.DecodeOutcomeRecord(v)
				if err != nil {
					return fmt.Errorf("store: job %q: %w", j.ID, err)
				}
				if o.Status == job.StatusDone && o.Snapshot == "" {
					continue
				}
			}
			out[j.ID] = true
		}
		return nil
	})
	return out, err
}

// Unfinished returns the jobs of a sweep that have no stored outcome, in
// dispatch order; the error wraps ErrNotFound for an unknown sweep.
func (db *DB) Unfinished(sweepName string) ([]job.Job, error) {
	var out []job.Job
	err := db.bolt.View(func(tx *bolt.Tx) error {
		results := tx.Bucket(bucketResults)
		var err error
		out, err = readJobs(tx, sweepName, func(j *job.Job) bool { return results.Get([]byte(j.ID)) == nil })
		return err
	})
	return out, err
}
