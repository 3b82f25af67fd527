package store

import (
	"bytes"
	"encoding/json"
	"fmt"
	"fvsweep/sweep/job"
	"slices"
	"strings"
	"time"

	bolt "go.etcd.io/bbolt"
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
	// Studies are the resolved settings of the spec's studies as last
	// submitted; nil in records written before they were kept (read
	// spec.StoredSettings of Spec then).
	Studies []job.StudySettings `json:"studies,omitempty"`
}

// putChunk is the most jobs one write transaction of PutSweep adds. A bbolt
// transaction holds every value it writes, and at commit a page buffer for
// each dirty page, on the heap: about 1 KiB per job, so 100 MiB for a
// 100,000-job sweep in one transaction.
var putChunk = 10_000

// PutSweep creates the sweep named rec.Name, or updates its SpecFile, Spec,
// Studies and Updated, and adds the jobs not already in it (by Job.ID); a job already
// in the sweep is left as stored. Created (now when zero) and Canceled are
// taken from rec only when the sweep is new; Jobs is counted by the store. A
// job's Sweep must be rec.Name or empty (it is stored as rec.Name).
//
// It returns how many jobs were new to the sweep and how many of the given
// jobs (distinct IDs) already have a stored outcome, done or failed.
//
// The change is atomic: on an invalid job or any error nothing is written,
// and readers see the sweep before or after, never between. Up to putChunk
// new jobs go in one transaction; more are first written, putChunk per
// transaction, into a staging bucket that the last transaction moves into
// place, so memory stays bounded for any size of sweep.
func (db *DB) PutSweep(rec SweepRecord, jobs []job.Job) (added, stored int, err error) {
	defer func() {
		if err != nil {
			added, stored, err = 0, 0, fmt.Errorf("store: sweep %q: %w", rec.Name, err)
		}
	}()
	if err := checkKey("sweep name", rec.Name); err != nil {
		return 0, 0, err
	}
	uniq, err := uniqueJobs(rec.Name, jobs)
	if err != nil {
		return 0, 0, err
	}
	db.putMu.Lock()
	defer db.putMu.Unlock()

	fresh := 0
	err = db.bolt.View(func(tx *bolt.Tx) error {
		jb := tx.Bucket(bucketJobs).Bucket([]byte(rec.Name))
		results := tx.Bucket(bucketResults)
		for _, j := range uniq {
			key := []byte(j.ID)
			if results.Get(key) != nil {
				stored++
			}
			if jb == nil || jb.Get(key) == nil {
				fresh++
			}
		}
		return nil
	})
	if err != nil {
		return 0, 0, err
	}
	if fresh > putChunk {
		added, err = db.putStaged(rec, uniq)
		return added, stored, err
	}
	err = db.bolt.Update(func(tx *bolt.Tx) error {
		added = 0
		cur, err := nextRecord(tx, rec)
		if err != nil {
			return err
		}
		jb, err := jobBucket(tx, rec.Name)
		if err != nil {
			return err
		}
		if added, err = putNew(jb, uniq); err != nil {
			return err
		}
		cur.Jobs += added
		return putRecord(tx, cur)
	})
	return added, stored, err
}

// uniqueJobs checks every job and returns them sorted by ID without repeats,
// each with Sweep set to name: the order in which bbolt fills pages best.
func uniqueJobs(name string, jobs []job.Job) ([]job.Job, error) {
	for i, j := range jobs {
		if err := j.Check(); err != nil {
			return nil, fmt.Errorf("job %d: %w", i, err)
		}
		if j.Sweep != "" && j.Sweep != name {
			return nil, fmt.Errorf("job %d: job %s belongs to sweep %q, not %q", i, j.ID, j.Sweep, name)
		}
	}
	uniq := slices.Clone(jobs)
	slices.SortStableFunc(uniq, func(a, b job.Job) int { return strings.Compare(a.ID, b.ID) })
	uniq = slices.CompactFunc(uniq, func(a, b job.Job) bool { return a.ID == b.ID })
	for i := range uniq {
		uniq[i].Sweep = name
	}
	return uniq, nil
}

// nextRecord is the sweep record PutSweep writes: rec over the stored one,
// keeping its Created, Canceled and Jobs.
func nextRecord(tx *bolt.Tx, rec SweepRecord) (SweepRecord, error) {
	now := time.Now().UTC()
	cur := rec
	if cur.Created.IsZero() {
		cur.Created = now
	}
	cur.Jobs = 0
	if v := tx.Bucket(bucketSweeps).Get([]byte(rec.Name)); v != nil {
		old, err := DecodeSweep(v)
		if err != nil {
			return SweepRecord{}, err
		}
		cur.Created, cur.Canceled, cur.Jobs = old.Created, old.Canceled, old.Jobs
	}
	if cur.Updated.IsZero() {
		cur.Updated = now
	}
	return cur, nil
}

func putRecord(tx *bolt.Tx, r SweepRecord) error {
	data, err := json.Marshal(r)
	if err != nil {
		return err
	}
	return tx.Bucket(bucketSweeps).Put([]byte(r.Name), data)
}

// jobBucket returns the sweep's job bucket, creating it (filled densely: its
// first jobs arrive in key order) when there is none.
func jobBucket(tx *bolt.Tx, name string) (*bolt.Bucket, error) {
	root := tx.Bucket(bucketJobs)
	if b := root.Bucket([]byte(name)); b != nil {
		return b, nil
	}
	b, err := root.CreateBucket([]byte(name))
	if err != nil {
		return nil, err
	}
	b.FillPercent = 1
	return b, nil
}

// jobWriter puts job records into buckets of one write transaction.
type jobWriter struct {
	a   arena // keys and values, held until the transaction ends
	enc job.Encoder
}

// put puts the record of j, checked by uniqueJobs.
func (w *jobWriter) put(b *bolt.Bucket, j *job.Job) error {
	return w.putRaw(b, j.ID, w.enc.Encode(j))
}

// putRaw puts a copy of key and value.
func (w *jobWriter) putRaw(b *bolt.Bucket, key string, value []byte) error {
	k := w.a.alloc(len(key))
	copy(k, key)
	v := w.a.alloc(len(value))
	copy(v, value)
	if err := b.Put(k, v); err != nil {
		return fmt.Errorf("job %s: %w", key, err)
	}
	return nil
}

// putStaged is PutSweep for more than putChunk new jobs. It merges the
// stored jobs of the sweep (a cursor over its bucket) with uniq (sorted by
// ID) into staging/<name>, putChunk records per transaction, then in one last
// transaction replaces jobs/<name> with the staged bucket and writes the
// record. A crash before that leaves only the staging bucket, which the next
// read-write Open deletes.
func (db *DB) putStaged(rec SweepRecord, uniq []job.Job) (added int, err error) {
	name := []byte(rec.Name)
	err = db.bolt.Update(func(tx *bolt.Tx) error {
		st := tx.Bucket(bucketStaging)
		if st.Bucket(name) != nil {
			if err := st.DeleteBucket(name); err != nil {
				return err
			}
		}
		_, err := st.CreateBucket(name)
		return err
	})
	if err != nil {
		return 0, err
	}
	defer func() {
		if err != nil {
			db.bolt.Update(func(tx *bolt.Tx) error { return tx.Bucket(bucketStaging).DeleteBucket(name) })
		}
	}()

	var last []byte // the last key staged
	next, total, done := 0, 0, false
	for !done {
		err = db.bolt.Update(func(tx *bolt.Tx) error {
			sb := tx.Bucket(bucketStaging).Bucket(name)
			sb.FillPercent = 1
			var k, v []byte
			var c *bolt.Cursor
			if old := tx.Bucket(bucketJobs).Bucket(name); old != nil {
				c = old.Cursor()
				if last == nil {
					k, v = c.First()
				} else if k, v = c.Seek(last); bytes.Equal(k, last) {
					k, v = c.Next()
				}
			}
			var w jobWriter
			for n := 0; n < putChunk; n++ {
				switch {
				case k == nil && next == len(uniq):
					done = true
					return nil
				case k != nil && (next == len(uniq) || bytes.Compare(k, []byte(uniq[next].ID)) <= 0):
					if next < len(uniq) && string(k) == uniq[next].ID {
						next++ // already in the sweep
					}
					if err := w.putRaw(sb, string(k), v); err != nil {
						return err
					}
					last = bytes.Clone(k)
					k, v = c.Next()
				default:
					if err := w.put(sb, &uniq[next]); err != nil {
						return err
					}
					last = []byte(uniq[next].ID)
					next++
					added++
				}
				total++
			}
			return nil
		})
		if err != nil {
			return 0, err
		}
	}
	err = db.bolt.Update(func(tx *bolt.Tx) error {
		cur, err := nextRecord(tx, rec)
		if err != nil {
			return err
		}
		cur.Jobs = total
		root := tx.Bucket(bucketJobs)
		if root.Bucket(name) != nil {
			if err := root.DeleteBucket(name); err != nil {
				return err
			}
		}
		if err := tx.MoveBucket(name, tx.Bucket(bucketStaging), root); err != nil {
			return err
		}
		return putRecord(tx, cur)
	})
	if err != nil {
		return 0, err
	}
	return added, nil
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
		return putRecord(tx, r)
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
func (db *DB) Jobs(sweepName string) ([]job.Job, error) {
	var out []job.Job
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
func readJobs(tx *bolt.Tx, name string, keep func(*job.Job) bool) ([]job.Job, error) {
	b, err := sweepJobs(tx, name)
	if err != nil {
		return nil, err
	}
	var dec job.RecordDecoder
	var out []job.Job
	err = b.ForEach(func(k, v []byte) error {
		j, err := dec.Decode(v)
		if err != nil {
			return fmt.Errorf("store: sweep %q: job %q: %w", name, k, err)
		}
		if keep != nil && !keep(&j) {
			return nil
		}
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
func dispatchOrder(a, b job.Job) int {
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
func (db *DB) Job(sweepName, jobID string) (job.Job, error) {
	var j job.Job
	err := db.bolt.View(func(tx *bolt.Tx) error {
		b, err := sweepJobs(tx, sweepName)
		if err != nil {
			return err
		}
		v := b.Get([]byte(jobID))
		if v == nil {
			return fmt.Errorf("store: sweep %q: job %q: %w", sweepName, jobID, ErrNotFound)
		}
		j, err = job.DecodeRecord(v)
		if err != nil {
			return fmt.Errorf("store: sweep %q: job %q: %w", sweepName, jobID, err)
		}
		return nil
	})
	return j, err
}

// HasJobs reports, for each outcome, whether the store holds its job in its
// sweep: one read transaction for the batch, no job decoded.
func (db *DB) HasJobs(outs []job.Outcome) ([]bool, error) {
	known := make([]bool, len(outs))
	err := db.bolt.View(func(tx *bolt.Tx) error {
		jobs := tx.Bucket(bucketJobs)
		for i, o := range outs {
			if b := jobs.Bucket([]byte(o.Sweep)); b != nil {
				known[i] = b.Get([]byte(o.JobID)) != nil
			}
		}
		return nil
	})
	return known, err
}
