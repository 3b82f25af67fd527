// Package store keeps sweeps, jobs and results in a bbolt database. It is the
// only package that opens the database.
//
// # Layout (schema version 1)
//
// Top-level buckets, all keys and values are bytes:
//
//	meta                 "schema_version" -> decimal ASCII, "1"
//	sweeps               sweep name -> JSON SweepRecord
//	jobs/<sweep name>    job ID -> JSON job.Job (one nested bucket per sweep)
//	results              job ID -> JSON job.Outcome
//	staging/<sweep name> job ID -> JSON job.Job, only during a large PutSweep
//
// Job IDs are job.NewID values (32 hex digits). Results are keyed by job ID
// alone, so a job that belongs to two sweeps has one result.
//
// # Records
//
// Values are the encoding/json form of the Go types, field names as in their
// struct tags, written and read for jobs and outcomes by the one codec of
// package job (its lenient record decoders ignore unknown fields):
//
//   - SweepRecord: name, spec_file, spec (the spec text as last submitted),
//     created, updated (RFC 3339 times, UTC), canceled, jobs (count),
//     studies (job.StudySettings of each study; absent in records written
//     before they were kept).
//   - job.Job: job_id, sweep, study, case, solver (only when not the
//     built-in fv2d), params (object of canonical string values), refine,
//     group, cost, snapshot.
//   - job.Outcome: job_id, sweep, status ("done" or "failed"), worker,
//     attempts, wall_s, steps, t_final, cell_updates_per_s, and when present
//     cpu_s (CPU seconds of the solving threads), kernel (the code path),
//     errors (variable -> {l1, l2, linf}), functionals (name -> number),
//     totals (variable -> {initial, final}), error (failure reason), snapshot
//     (object-store name).
//
// Numbers are finite: JSON has no NaN or Inf, so an outcome carrying one is
// refused (job.Outcome.Check). Readers ignore unknown fields, so adding an
// optional field keeps schema version 1; removing or re-meaning a field or a
// bucket raises the version, and Open refuses a version newer than
// SchemaVersion rather than misread it.
//
// # Transactions and locking
//
// Every exported write is one bbolt transaction, committed with fsync: a
// crash leaves either all of a batch or none of it. The exception is a
// PutSweep adding more than 10,000 jobs: it writes them (merged with the
// sweep's stored jobs) into staging/<sweep name> 10,000 per transaction, and
// one last transaction swaps that bucket in for jobs/<sweep name> and writes
// the record, so memory stays bounded and readers still see all or nothing.
// A crash before the swap leaves only the staging bucket, which the next
// read-write Open deletes. A write that changes nothing (a batch of duplicate
// outcomes) is rolled back rather than committed. bbolt takes an flock on
// the file: exclusive for a read-write Open, shared for a read-only one. So a
// second coordinator on the same file, and a read-only reader (status, table,
// export) while a coordinator holds it, get an error wrapping ErrInUse after
// Options.Timeout instead of waiting; those readers open the file read-only
// only when no coordinator holds it, and otherwise ask the coordinator.
package store
