package store

import (
	"encoding/json"
	"fmt"
	"slices"
	"strings"
	"time"

	bolt "go.etcd.io/bbolt"

	"fvsweep/sweep"
)

// SweepRecord is what the store keeps about a sweep besides its jobs.
type SweepRecord struct {
	Name     string    `json:"name"`
	SpecFile string    `json:"spec_file"`
	Spec     string    `json:"spec"` // the spec source text as submitted (latest)
	Created  time.Time `json:"created"`
	Updated  time.Time `json:"updated"`
	Canceled bool      `json:"canceled"`
	Jobs     int       `json:"jobs"` // number of jobs in the sweep
}

// PutSweep creates the sweep named rec.Name, or updates its SpecFile, Spec
// and Updated, and adds the jobs not already in it (by Job.ID); a job already
// in the sweep is left as stored. Created (now when zero) and Canceled are
// taken from rec only when the sweep is new; Jobs is counted by the store. A
// job's Sweep must be rec.Name or empty (it is stored as rec.Name).
//
// It returns how many jobs were new to the sweep and how many of the given
// jobs (distinct IDs) already have a stored outcome, done or failed. On any
// invalid job nothing is written.
func (db *DB) PutSweep(rec SweepRecord, jobs []sweep.Job) (added, stored int, err error) {
	if err := checkKey("sweep name", rec.Name); err != nil {
		return 0, 0, fmt.Errorf("store: %w", err)
	}
	now := time.Now().UTC()
	// Insert in key order: bbolt fills pages sequentially and touches each
	// leaf once.
	order := make([]int, len(jobs))
	for i := range order {
		order[i] = i
	}
	slices.SortStableFunc(order, func(a, b int) int { return strings.Compare(jobs[a].ID, jobs[b].ID) })

	err = db.bolt.Update(func(tx *bolt.Tx) error {
		added, stored = 0, 0
		name := []byte(rec.Name)
		sweeps := tx.Bucket(bucketSweeps)
		cur := rec
		if cur.Created.IsZero() {
			cur.Created = now
		}
		cur.Jobs = 0
		if v := sweeps.Get(name); v != nil {
			old, err := DecodeSweep(v)
			if err != nil {
				return err
			}
			cur.Created, cur.Canceled, cur.Jobs = old.Created, old.Canceled, old.Jobs
		}
		cur.Updated = rec.Updated
		if cur.Updated.IsZero() {
			cur.Updated = now
		}
		jb, err := tx.Bucket(bucketJobs).CreateBucketIfNotExists(name)
		if err != nil {
			return err
		}
		results := tx.Bucket(bucketResults)
		prev := ""
		for _, i := range order {
			j := jobs[i]
			if err := checkJob(j, rec.Name); err != nil {
				return fmt.Errorf("job %d: %w", i, err)
			}
			if j.ID == prev {
				continue
			}
			prev = j.ID
			key := []byte(j.ID)
			if results.Get(key) != nil {
				stored++
			}
			if jb.Get(key) != nil {
				continue
			}
			j.Sweep = rec.Name
			data, err := json.Marshal(j)
			if err != nil {
				return fmt.Errorf("job %s: %w", j.ID, err)
			}
			if err := jb.Put(key, data); err != nil {
				return fmt.Errorf("job %s: %w", j.ID, err)
			}
			added++
		}
		cur.Jobs += added
		data, err := json.Marshal(cur)
		if err != nil {
			return err
		}
		return sweeps.Put(name, data)
	})
	if err != nil {
		return 0, 0, fmt.Errorf("store: sweep %q: %w", rec.Name, err)
	}
	return added, stored, nil
}

// Sweep returns the record of the sweep named name; the error wraps
// ErrNotFound when there is none.
func (db *DB) Sweep(name string) (SweepRecord, error) {
	var r SweepRecord
	err := db.bolt.View(func(tx *bolt.Tx) error {
		var err error
		r, err = getSweep(tx, name)
		return err
	})
	return r, err
}

func getSweep(tx *bolt.Tx, name string) (SweepRecord, error) {
	v := tx.Bucket(bucketSweeps).Get([]byte(name))
	if v == nil {
		return SweepRecord{}, fmt.Errorf("store: sweep %q: %w", name, ErrNotFound)
	}
	r, err := DecodeSweep(v)
	if err != nil {
		return SweepRecord{}, fmt.Errorf("store: sweep %q: %w", name, err)
	}
	return r, nil
}

// Sweeps returns every sweep record, ordered by name.
func (db *DB) Sweeps() ([]SweepRecord, error) {
	var out []SweepRecord
	err := db.bolt.View(func(tx *bolt.Tx) error {
		return tx.Bucket(bucketSweeps).ForEach(func(k, v []byte) error {
			r, err := DecodeSweep(v)
			if err != nil {
				return fmt.Errorf("store: sweep %q: %w", k, err)
			}
			out = append(out, r)
			return nil
		})
	})
	return out, err
}

// SetCanceled marks the sweep canceled or not and sets its Updated time.
func (db *DB) SetCanceled(name string, canceled bool) error {
	return db.bolt.Update(func(tx *bolt.Tx) error {
		r, err := getSweep(tx, name)
		if err != nil {
			return err
		}
		r.Canceled = canceled
		r.Updated = time.Now().UTC()
		data, err := json.Marshal(r)
		if err != nil {
			return err
		}
		return tx.Bucket(bucketSweeps).Put([]byte(name), data)
	})
}

// sweepJobs is the job bucket of a sweep; the error wraps ErrNotFound.
func sweepJobs(tx *bolt.Tx, name string) (*bolt.Bucket, error) {
	b := tx.Bucket(bucketJobs).Bucket([]byte(name))
	if b == nil {
		return nil, fmt.Errorf("store: sweep %q: %w", name, ErrNotFound)
	}
	return b, nil
}

// Jobs returns the jobs of a sweep, largest cost first, ties by ID: the order
// in which they are dispatched.
func (db *DB) Jobs(sweepName string) ([]sweep.Job, error) {
	var out []sweep.Job
	err := db.bolt.View(func(tx *bolt.Tx) error {
		var err error
		out, err = readJobs(tx, sweepName, nil)
		return err
	})
	return out, err
}

// readJobs decodes the jobs of a sweep that keep says to keep (all when keep
// is nil), in dispatch order. Equal parameter strings are shared between jobs
// so that a 100,000-job sweep costs little memory once read.
func readJobs(tx *bolt.Tx, name string, keep func(*sweep.Job) bool) ([]sweep.Job, error) {
	b, err := sweepJobs(tx, name)
	if err != nil {
		return nil, err
	}
	in := newInterner()
	var out []sweep.Job
	err = b.ForEach(func(k, v []byte) error {
		j, err := DecodeJob(v)
		if err != nil {
			return fmt.Errorf("store: sweep %q: job %q: %w", name, k, err)
		}
		if keep != nil && !keep(&j) {
			return nil
		}
		in.job(&j)
		out = append(out, j)
		return nil
	})
	if err != nil {
		return nil, err
	}
	slices.SortFunc(out, dispatchOrder)
	return out, nil
}

// dispatchOrder sorts jobs by cost, largest first, then by ID.
func dispatchOrder(a, b sweep.Job) int {
	switch {
	case a.Cost > b.Cost:
		return -1
	case a.Cost < b.Cost:
		return 1
	}
	return strings.Compare(a.ID, b.ID)
}

// Job returns one job of a sweep; the error wraps ErrNotFound when the sweep
// or the job is not stored.
func (db *DB) Job(sweepName, jobID string) (sweep.Job, error) {
	var j sweep.Job
	err := db.bolt.View(func(tx *bolt.Tx) error {
		b, err := sweepJobs(tx, sweepName)
		if err != nil {
			return err
		}
		v := b.Get([]byte(jobID))
		if v == nil {
			return fmt.Errorf("store: sweep %q: job %q: %w", sweepName, jobID, ErrNotFound)
		}
		j, err = DecodeJob(v)
		if err != nil {
			return fmt.Errorf("store: sweep %q: job %q: %w", sweepName, jobID, err)
		}
		return nil
	})
	return j, err
}

// interner shares equal strings among decoded jobs.
type interner map[string]string

func newInterner() interner { return make(interner) }

func (in interner) str(s string) string {
	if t, ok := in[s]; ok {
		return t
	}
	in[s] = s
	return s
}

func (in interner) job(j *sweep.Job) {
	j.Sweep = in.str(j.Sweep)
	j.Case = in.str(j.Case)
	j.Refine = in.str(j.Refine)
	j.Group = in.str(j.Group)
	if len(j.Params) == 0 {
		return
	}
	p := make(map[string]string, len(j.Params))
	for k, v := range j.Params {
		p[in.str(k)] = in.str(v)
	}
	j.Params = p
}
