package store

import (
	"encoding/binary"
	"encoding/json"
	"fmt"
	"strconv"
	"time"

	bolt "go.etcd.io/bbolt"

	"fvsweep/sweep/job"
)

// Selection picks stored outcomes of a sweep: the one of job JobID, those
// of study Study (when HasStudy), the failed ones (Failed); the conditions
// that are set must all hold. With none set it picks every outcome.
type Selection struct {
	JobID    string
	Study    int
	HasStudy bool
	Failed   bool
}

// String says in words what s picks.
func (s Selection) String() string {
	out := ""
	add := func(w string) {
		if out != "" {
			out += " and "
		}
		out += w
	}
	if s.JobID != "" {
		add("job " + s.JobID)
	}
	if s.HasStudy {
		add("study " + strconv.Itoa(s.Study))
	}
	if s.Failed {
		add("failed")
	}
	if out == "" {
		return "all"
	}
	return out
}

// ForgetRecord is the store's note of one forget: what was asked, by whom,
// when, and the jobs whose outcomes were discarded with their status.
type ForgetRecord struct {
	Sweep  string            `json:"sweep"`
	What   string            `json:"what"`
	By     string            `json:"by"`
	At     time.Time         `json:"at"`
	Jobs   map[string]string `json:"jobs"` // job ID -> status of the discarded outcome
	Shared int               `json:"shared,omitempty"`
}

// Forget discards the stored outcomes of the sweep's jobs that sel picks,
// so that the next submission runs them again, and files a ForgetRecord
// saying so (who: by), all in one transaction. Results are keyed by job ID
// alone: a job that another sweep shares loses its outcome there too;
// Shared counts such jobs. A forget that picks nothing changes nothing and
// files no record. The error wraps ErrNotFound for an unknown sweep or job.
func (db *DB) Forget(sweepName string, sel Selection, by string) (ForgetRecord, error) {
	rec := ForgetRecord{Sweep: sweepName, What: sel.String(), By: by, At: time.Now().UTC(), Jobs: map[string]string{}}
	err := db.bolt.Update(func(tx *bolt.Tx) error {
		jobs, err := sweepJobs(tx, sweepName)
		if err != nil {
			return err
		}
		if sel.JobID != "" && jobs.Get([]byte(sel.JobID)) == nil {
			return fmt.Errorf("store: sweep %q: job %q: %w", sweepName, sel.JobID, ErrNotFound)
		}
		results := tx.Bucket(bucketResults)
		var picked [][]byte
		err = jobs.ForEach(func(k, v []byte) error {
			if sel.JobID != "" && string(k) != sel.JobID {
				return nil
			}
			r := results.Get(k)
			if r == nil {
				return nil
			}
			st, err := job.RecordStatus(r)
			if err != nil {
				return fmt.Errorf("job %q: %w", k, err)
			}
			if sel.Failed && st != job.StatusFailed {
				return nil
			}
			if sel.HasStudy {
				j, err := job.DecodeRecord(v)
				if err != nil {
					return fmt.Errorf("job %q: %w", k, err)
				}
				if j.Study != sel.Study {
					return nil
				}
			}
			picked = append(picked, k)
			rec.Jobs[string(k)] = string(st)
			return nil
		})
		if err != nil {
			return err
		}
		if len(picked) == 0 {
			return errUnchanged
		}
		rec.Shared = sharedJobs(tx, sweepName, picked)
		for _, k := range picked {
			if err := results.Delete(k); err != nil {
				return fmt.Errorf("job %q: %w", k, err)
			}
		}
		forgotten, err := tx.CreateBucketIfNotExists(bucketForgotten)
		if err != nil {
			return err
		}
		seq, err := forgotten.NextSequence()
		if err != nil {
			return err
		}
		data, err := json.Marshal(rec)
		if err != nil {
			return err
		}
		return forgotten.Put(binary.BigEndian.AppendUint64(nil, seq), data)
	})
	if err == errUnchanged {
		return rec, nil
	}
	if err != nil {
		return ForgetRecord{}, fmt.Errorf("store: forget in %q: %w", sweepName, err)
	}
	return rec, nil
}

// sharedJobs counts the keys that a sweep other than name also holds.
func sharedJobs(tx *bolt.Tx, name string, keys [][]byte) int {
	n := 0
	all := tx.Bucket(bucketJobs)
	for _, k := range keys {
		all.ForEachBucket(func(other []byte) error {
			if string(other) != name && all.Bucket(other).Get(k) != nil {
				n++
				return errUnchanged // stop at the first
			}
			return nil
		})
	}
	return n
}

// Forgotten returns the forget records of a sweep ("" for all), oldest first.
func (db *DB) Forgotten(sweepName string) ([]ForgetRecord, error) {
	var out []ForgetRecord
	err := db.bolt.View(func(tx *bolt.Tx) error {
		b := tx.Bucket(bucketForgotten)
		if b == nil {
			return nil
		}
		return b.ForEach(func(k, v []byte) error {
			var r ForgetRecord
			if err := json.Unmarshal(v, &r); err != nil {
				return fmt.Errorf("store: forget record %x: %w", k, err)
			}
			if sweepName == "" || r.Sweep == sweepName {
				out = append(out, r)
			}
			return nil
		})
	})
	return out, err
}
