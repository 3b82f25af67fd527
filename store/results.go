package store

import (
	"bytes"
	"errors"
	"fmt"
	"fvsweep/sweep/job"

	bolt "go.etcd.io/bbolt"
)

// PutOutcomes writes a batch of outcomes in one transaction (one commit, one
// fsync pair), in order. Results are keyed by job ID across sweeps: the same
// job in two sweeps shares its result. Precedence per job:
//
//   - "done" over a stored "done": no-op (a duplicate delivery), unless the
//     stored one has no snapshot and the new one has (a study that asks
//     for a snapshot ran a job another study had stored without one);
//   - "done" over a stored "failed": replaces it;
//   - "failed" over a stored "done": no-op;
//   - "failed" over a stored "failed": replaces it unless byte-identical.
//
// It returns how many records changed. A record that fails job.Outcome.Check makes
// the whole batch fail with an error naming its index and job; nothing of the
// batch is written.
func (db *DB) PutOutcomes(outs []job.Outcome) (written int, err error) {
	if len(outs) == 0 {
		return 0, nil
	}
	err = db.bolt.Update(func(tx *bolt.Tx) error {
		written = 0
		results := tx.Bucket(bucketResults)
		for i, o := range outs {
			if err := o.Check(); err != nil {
				return fmt.Errorf("outcome %d: %w", i, err)
			}
			key := []byte(o.JobID)
			var data []byte
			if old := results.Get(key); old != nil {
				st, err := job.RecordStatus(old)
				if err != nil {
					return fmt.Errorf("outcome %d: stored job %s: %w", i, o.JobID, err)
				}
				if st == job.StatusDone && !addsSnapshot(old, o) {
					continue
				}
				if o.Status == job.StatusFailed {
					if data, err = job.EncodeOutcome(o); err != nil {
						return fmt.Errorf("outcome %d: job %s: %w", i, o.JobID, err)
					}
					if bytes.Equal(old, data) {
						continue
					}
				}
			}
			if data == nil {
				if data, err = job.EncodeOutcome(o); err != nil {
					return fmt.Errorf("outcome %d: job %s: %w", i, o.JobID, err)
				}
			}
			if err := results.Put(key, data); err != nil {
				return fmt.Errorf("outcome %d: job %s: %w", i, o.JobID, err)
			}
			written++
		}
		if written == 0 {
			return errUnchanged // roll back: no commit, no fsync
		}
		return nil
	})
	if errors.Is(err, errUnchanged) {
		return 0, nil
	}
	if err != nil {
		return 0, fmt.Errorf("store: %w", err)
	}
	return written, nil
}

// addsSnapshot reports whether o, a done outcome, brings a snapshot that
// the stored done record old lacks.
func addsSnapshot(old []byte, o job.Outcome) bool {
	if o.Status != job.StatusDone || o.Snapshot == "" {
		return false
	}
	prev, err := job.DecodeOutcomeRecord(old)
	return err == nil && prev.Snapshot == ""
}

// errUnchanged rolls back a write transaction that changed nothing.
var errUnchanged = errors.New("unchanged")

// Outcome returns the stored outcome of a job and whether there is one.
func (db *DB) Outcome(jobID string) (job.Outcome, bool, error) {
	var (
		o     job.Outcome
		found bool
	)
	err := db.bolt.View(func(tx *bolt.Tx) error {
		v := tx.Bucket(bucketResults).Get([]byte(jobID))
		if v == nil {
			return nil
		}
		var err error
		if o, err = job.DecodeOutcomeRecord(v); err != nil {
			return fmt.Errorf("store: job %q: %w", jobID, err)
		}
		found = true
		return nil
	})
	return o, found, err
}

// Outcomes returns the stored outcomes of the sweep's jobs, keyed by job ID;
// jobs without an outcome have no entry. The error wraps ErrNotFound for an
// unknown sweep.
func (db *DB) Outcomes(sweepName string) (map[string]job.Outcome, error) {
	out := make(map[string]job.Outcome)
	err := db.bolt.View(func(tx *bolt.Tx) error {
		return eachResult(tx, sweepName, func(k, v []byte) error {
			if v == nil {
				return nil
			}
			o, err := job.DecodeOutcomeRecord(v)
			if err != nil {
				return fmt.Errorf("store: job %q: %w", k, err)
			}
			out[o.JobID] = o
			return nil
		})
	})
	if err != nil {
		return nil, err
	}
	return out, nil
}

// eachResult calls fn with the ID of every job of the sweep and its stored
// result record, nil when there is none.
func eachResult(tx *bolt.Tx, sweepName string, fn func(id, result []byte) error) error {
	jobs, err := sweepJobs(tx, sweepName)
	if err != nil {
		return err
	}
	results := tx.Bucket(bucketResults)
	return jobs.ForEach(func(k, _ []byte) error { return fn(k, results.Get(k)) })
}

// Stored reports which of the given jobs have an outcome (done or failed):
// the map holds true for those and no entry for the others.
func (db *DB) Stored(jobIDs []string) (map[string]bool, error) {
	out := make(map[string]bool)
	err := db.bolt.View(func(tx *bolt.Tx) error {
		results := tx.Bucket(bucketResults)
		for _, id := range jobIDs {
			if results.Get([]byte(id)) != nil {
				out[id] = true
			}
		}
		return nil
	})
	return out, err
}

// Tally counts a sweep's jobs and their stored outcomes without keeping
// them in memory.
type Tally struct {
	Jobs   int `json:"jobs"`
	Done   int `json:"done"`
	Failed int `json:"failed"`
}

// Count tallies the sweep's jobs by stored status; the error wraps
// ErrNotFound for an unknown sweep.
func (db *DB) Count(sweepName string) (Tally, error) {
	var t Tally
	err := db.bolt.View(func(tx *bolt.Tx) error {
		return eachResult(tx, sweepName, func(k, v []byte) error {
			t.Jobs++
			if v == nil {
				return nil
			}
			st, err := job.RecordStatus(v)
			if err != nil {
				return fmt.Errorf("store: job %q: %w", k, err)
			}
			if st == job.StatusDone {
				t.Done++
			} else {
				t.Failed++
			}
			return nil
		})
	})
	return t, err
}

// DeleteOutcomes removes the stored outcomes of the given jobs, in one
// transaction, so that they run again; IDs without an outcome are ignored.
func (db *DB) DeleteOutcomes(jobIDs []string) error {
	err := db.bolt.Update(func(tx *bolt.Tx) error {
		results := tx.Bucket(bucketResults)
		for _, id := range jobIDs {
			if err := results.Delete([]byte(id)); err != nil {
				return fmt.Errorf("job %q: %w", id, err)
			}
		}
		return nil
	})
	if err != nil {
		return fmt.Errorf("store: %w", err)
	}
	return nil
}

// Row is a job with its stored outcome, nil when there is none.
type Row struct {
	Job     job.Job
	Outcome *job.Outcome
}

// Query returns the sweep's jobs, in dispatch order, whose parameters match
// every key=value of filter (canonical values), each with its outcome. An
// empty filter matches every job. The keys "case" and "study" match Job.Case
// and Job.Study (decimal) unless the job has a parameter of that name. The
// error wraps ErrNotFound for an unknown sweep.
func (db *DB) Query(sweepName string, filter map[string]string) ([]Row, error) {
	var rows []Row
	err := db.bolt.View(func(tx *bolt.Tx) error {
		jobs, err := readJobs(tx, sweepName, func(j *job.Job) bool { return matches(j, filter) })
		if err != nil {
			return err
		}
		results := tx.Bucket(bucketResults)
		rows = make([]Row, len(jobs))
		for i, j := range jobs {
			rows[i].Job = j
			v := results.Get([]byte(j.ID))
			if v == nil {
				continue
			}
			o, err := job.DecodeOutcomeRecord(v)
			if err != nil {
				return fmt.Errorf("store: job %q: %w", j.ID, err)
			}
			rows[i].Outcome = &o
		}
		return nil
	})
	return rows, err
}

// matches reports whether the job has every key=value of filter.
func matches(j *job.Job, filter map[string]string) bool {
	for k, want := range filter {
		got, ok := j.Params[k]
		if !ok {
			switch k {
			case "case":
				got, ok = j.Case, true
			case "study":
				got, ok = fmt.Sprint(j.Study), true
			}
		}
		if !ok || got != want {
			return false
		}
	}
	return true
}
