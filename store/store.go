package store

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"sync"
	"time"

	bolt "go.etcd.io/bbolt"
	bolterrors "go.etcd.io/bbolt/errors"

	"fvsweep/sweep/job"
)

// SchemaVersion is the layout version this package writes and reads. A
// database with a newer version is refused; see the package comment.
const SchemaVersion = 1

// DefaultTimeout is how long Open waits for the file lock when
// Options.Timeout is zero.
const DefaultTimeout = time.Second

var (
	// ErrInUse is returned, wrapped with the path, when another process (or
	// another DB in this process) holds the file lock past the timeout.
	ErrInUse = errors.New("database is in use by another process")
	// ErrNotFound is returned, wrapped, for a sweep or job that is not stored.
	ErrNotFound = errors.New("not found")
)

// initialMmapSize is the address space bbolt maps at Open; see Open.
const initialMmapSize = 1 << 30

// Bucket and key names; the package comment documents the layout.
var (
	bucketMeta    = []byte("meta")
	bucketSweeps  = []byte("sweeps")
	bucketJobs    = []byte("jobs")
	bucketResults = []byte("results")
	bucketStaging = []byte("staging")
	// Added within schema 1: a store written before them lacks them, and
	// readers take a missing bucket as an empty one.
	bucketQueue     = []byte("queue")
	bucketForgotten = []byte("forgotten")
	keySchema       = []byte("schema_version")
)

// Options tune Open.
type Options struct {
	// ReadOnly opens the file with a shared lock and no write access. It
	// fails with ErrInUse while a read-write DB (a coordinator) holds it.
	ReadOnly bool
	// Timeout bounds the wait for the file lock; zero means DefaultTimeout.
	Timeout time.Duration
}

// DB is an open store. Its methods are safe for concurrent use; writes are
// serialised by bbolt.
type DB struct {
	bolt  *bolt.DB
	path  string
	putMu sync.Mutex // one PutSweep at a time: a large one spans transactions
}

// Open opens the store at path. Read-write, it creates the parent directory,
// the file and the buckets as needed and writes the schema version; read-only,
// the file must exist and be an fvsweep store. A database written by a newer
// schema is refused with an error naming both versions. When the lock is not
// obtained within the timeout the error wraps ErrInUse.
func Open(path string, opt Options) (*DB, error) {
	if path == "" {
		return nil, errors.New("store: empty database path")
	}
	timeout := opt.Timeout
	if timeout <= 0 {
		timeout = DefaultTimeout
	}
	if !opt.ReadOnly {
		if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
			return nil, fmt.Errorf("store %s: %w", path, err)
		}
	}
	b, err := bolt.Open(path, 0o644, &bolt.Options{
		Timeout:      timeout,
		ReadOnly:     opt.ReadOnly,
		FreelistType: bolt.FreelistMapType,
		// Map 1 GiB of address space up front (it does not grow the file
		// or the resident set): every remap copies all of a write
		// transaction's dirty nodes to the heap, which for a
		// 100,000-job PutSweep cost over a gigabyte of allocations.
		InitialMmapSize: initialMmapSize,
	})
	if errors.Is(err, bolterrors.ErrTimeout) {
		return nil, fmt.Errorf("store %s: %w (no lock within %v; a running coordinator holds it)", path, ErrInUse, timeout)
	}
	if err != nil {
		return nil, fmt.Errorf("store %s: %w", path, err)
	}
	db := &DB{bolt: b, path: path}
	if opt.ReadOnly {
		err = b.View(db.checkSchema)
	} else {
		err = b.Update(db.initSchema)
	}
	if err != nil {
		b.Close()
		return nil, err
	}
	return db, nil
}

// initSchema creates the buckets of a new store, or checks an existing one.
func (db *DB) initSchema(tx *bolt.Tx) error {
	if tx.Bucket(bucketMeta) == nil {
		empty := true
		tx.ForEach(func([]byte, *bolt.Bucket) error { empty = false; return nil })
		if !empty {
			return fmt.Errorf("store %s: not an fvsweep store (no %q bucket)", db.path, bucketMeta)
		}
		meta, err := tx.CreateBucket(bucketMeta)
		if err != nil {
			return fmt.Errorf("store %s: %w", db.path, err)
		}
		if err := meta.Put(keySchema, []byte(strconv.Itoa(SchemaVersion))); err != nil {
			return fmt.Errorf("store %s: %w", db.path, err)
		}
	}
	if err := db.checkSchema(tx); err != nil {
		return err
	}
	for _, name := range [][]byte{bucketSweeps, bucketJobs, bucketResults, bucketStaging, bucketQueue, bucketForgotten} {
		if _, err := tx.CreateBucketIfNotExists(name); err != nil {
			return fmt.Errorf("store %s: bucket %s: %w", db.path, name, err)
		}
	}
	// What a PutSweep killed half-way staged is dropped.
	st := tx.Bucket(bucketStaging)
	var left [][]byte
	st.ForEachBucket(func(k []byte) error { left = append(left, bytes.Clone(k)); return nil })
	for _, k := range left {
		if err := st.DeleteBucket(k); err != nil {
			return fmt.Errorf("store %s: staging %q: %w", db.path, k, err)
		}
	}
	return nil
}

// checkSchema refuses a store without a readable schema version or with one
// this package does not know.
func (db *DB) checkSchema(tx *bolt.Tx) error {
	meta := tx.Bucket(bucketMeta)
	if meta == nil {
		return fmt.Errorf("store %s: not an fvsweep store (no %q bucket)", db.path, bucketMeta)
	}
	raw := meta.Get(keySchema)
	v, err := strconv.Atoi(string(raw))
	if err != nil || v < 1 {
		return fmt.Errorf("store %s: bad %s %q", db.path, keySchema, raw)
	}
	if v > SchemaVersion {
		return fmt.Errorf("store %s: schema version %d is newer than this fvsweep understands (%d); use a newer fvsweep", db.path, v, SchemaVersion)
	}
	for _, name := range [][]byte{bucketSweeps, bucketJobs, bucketResults} {
		if tx.Bucket(name) == nil && !tx.Writable() {
			return fmt.Errorf("store %s: bucket %s missing", db.path, name)
		}
	}
	return nil
}

// Close releases the file and its lock.
func (db *DB) Close() error {
	if err := db.bolt.Close(); err != nil {
		return fmt.Errorf("store %s: %w", db.path, err)
	}
	return nil
}

// Path is the file the store was opened from.
func (db *DB) Path() string { return db.path }

// Verify walks the whole database: bbolt's page consistency check, then a
// decode of every sweep, job and result record, each filed under its own key,
// and each sweep's job count against its job bucket.
// It is what a test or an operator runs after a crash.
func (db *DB) Verify() error {
	return db.bolt.View(func(tx *bolt.Tx) error {
		var first error
		for err := range tx.Check() { // drain: the checker goroutine reads the tx
			if first == nil {
				first = err
			}
		}
		if first != nil {
			return fmt.Errorf("store %s: %w", db.path, first)
		}
		err := tx.Bucket(bucketSweeps).ForEach(func(k, v []byte) error {
			r, err := DecodeSweep(v)
			if err != nil {
				return err
			}
			if r.Name != string(k) {
				return fmt.Errorf("sweep record under %q is named %q", k, r.Name)
			}
			jb := tx.Bucket(bucketJobs).Bucket(k)
			if jb == nil {
				return fmt.Errorf("sweep %q has no job bucket", k)
			}
			if n := jb.Stats().KeyN; n != r.Jobs {
				return fmt.Errorf("sweep %q: record counts %d jobs, bucket holds %d", k, r.Jobs, n)
			}
			return nil
		})
		if err != nil {
			return fmt.Errorf("store %s: %w", db.path, err)
		}
		err = tx.Bucket(bucketJobs).ForEachBucket(func(name []byte) error {
			return tx.Bucket(bucketJobs).Bucket(name).ForEach(func(k, v []byte) error {
				j, err := job.DecodeRecord(v)
				if err == nil && (j.ID != string(k) || j.Sweep != string(name)) {
					err = fmt.Errorf("job record under %q/%q is %q/%q", name, k, j.Sweep, j.ID)
				}
				return err
			})
		})
		if err != nil {
			return fmt.Errorf("store %s: %w", db.path, err)
		}
		err = tx.Bucket(bucketResults).ForEach(func(k, v []byte) error {
			o, err := job.DecodeOutcomeRecord(v)
			if err == nil && o.JobID != string(k) {
				err = fmt.Errorf("result record under %q has job_id %q", k, o.JobID)
			}
			return err
		})
		if err != nil {
			return fmt.Errorf("store %s: %w", db.path, err)
		}
		return verifyAdded(tx)
	})
}

// verifyAdded decodes the queue and forget records.
func verifyAdded(tx *bolt.Tx) error {
	if q := tx.Bucket(bucketQueue); q != nil {
		err := q.ForEachBucket(func(name []byte) error {
			return q.Bucket(name).ForEach(func(k, _ []byte) error {
				_, _, err := queueRecord(q, string(name), string(k))
				return err
			})
		})
		if err != nil {
			return err
		}
	}
	if f := tx.Bucket(bucketForgotten); f != nil {
		return f.ForEach(func(k, v []byte) error {
			var r ForgetRecord
			if err := json.Unmarshal(v, &r); err != nil {
				return fmt.Errorf("forget record %x: %w", k, err)
			}
			return nil
		})
	}
	return nil
}
