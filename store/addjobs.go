package store

import (
	"fmt"
	"time"

	bolt "go.etcd.io/bbolt"

	"fvsweep/sweep/job"
)

// AddJobs adds to the stored sweep sweepName the jobs it does not hold yet
// (by Job.ID), in one transaction, and counts them in its record (and its Updated time); the rest
// of the record (spec, studies, Created, cancel mark) is left as stored, so
// that a submission running at the same time keeps what it wrote. It is how
// the coordinator adds the grids of a study whose order has not settled.
// A job's Sweep must be sweepName or empty. It returns how many jobs were
// new; the error wraps ErrNotFound for an unknown sweep.
func (db *DB) AddJobs(sweepName string, jobs []job.Job) (added int, err error) {
	uniq, err := uniqueJobs(sweepName, jobs)
	if err != nil {
		return 0, fmt.Errorf("store: sweep %q: %w", sweepName, err)
	}
	db.putMu.Lock()
	defer db.putMu.Unlock()
	err = db.bolt.Update(func(tx *bolt.Tx) error {
		added = 0
		rec, err := getSweep(tx, sweepName)
		if err != nil {
			return err
		}
		jb, err := sweepJobs(tx, sweepName)
		if err != nil {
			return err
		}
		if added, err = putNew(jb, uniq); err != nil {
			return err
		}
		if added == 0 {
			return nil
		}
		rec.Jobs += added
		rec.Updated = time.Now().UTC()
		return putRecord(tx, rec)
	})
	if err != nil {
		return 0, err
	}
	return added, nil
}

// putNew puts the jobs of uniq (checked by uniqueJobs) that the job bucket
// jb does not hold and counts them.
func putNew(jb *bolt.Bucket, uniq []job.Job) (added int, err error) {
	var w jobWriter
	for i := range uniq {
		if jb.Get([]byte(uniq[i].ID)) != nil {
			continue
		}
		if err := w.put(jb, &uniq[i]); err != nil {
			return added, err
		}
		added++
	}
	return added, nil
}
