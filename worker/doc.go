// Package worker pulls jobs from NATS JetStream, hands each to the runner of
// the solver it names (fv2d, the built-in one, or another Runner) and
// publishes the outcomes, acking a job only once its outcome is stored by
// the server.
//
// Files by concept: worker.go (configuration, start, the run loop), pull.go
// (fetching into the prefetch buffer, the slots, the drain), run.go (one
// job: decode, choose the runner, run, retry or fail), ack.go (publishing
// outcomes and acking their jobs), cancel.go (canceled sweeps), report.go
// (reports and in-progress heartbeats), runner.go (the Runner seam) and
// fv2d.go (the built-in runner).
package worker
