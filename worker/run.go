package worker

import (
	"context"
	"fmt"
	"math"
	"runtime/debug"
	"sync/atomic"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"fvsweep/sweep/job"
	"fvsweep/sweep/wire"
)

// task is a job being run.
type task struct {
	jb     job.Job
	msg    jetstream.Msg
	since  time.Time
	beat   time.Time // delivery or last in-progress heartbeat
	cancel context.CancelFunc
	ctx    context.Context
	swept  atomic.Bool // its sweep was canceled
	key    uint64
	// progress holds the float64 bits of the fraction of the job done,
	// as the runner tells it (see progressOf); NaN while it tells none.
	progress atomic.Uint64
}

// handle runs one delivered job and publishes its outcome, or settles its
// message at once (malformed, of a solver this worker does not offer,
// canceled, stopped, to be retried).
// beat is when the message was delivered or last heartbeat.
func (w *Worker) handle(m jetstream.Msg, beat time.Time) {
	meta, err := m.Metadata()
	if err != nil {
		w.log.Warn("job message without metadata", "subject", m.Subject(), "error", err)
		m.Term()
		return
	}
	jb, err := job.DecodeMessage(m.Data())
	if err != nil {
		w.log.Warn("dropping malformed job", "subject", m.Subject(), "error", err)
		m.TermWithReason("malformed job")
		return
	}
	// A job this worker cannot run is left for another one, whatever
	// subject it came on.
	run, ok := w.cfg.Runners[jb.SolverName()]
	if !ok || jb.Version != w.versionOf(jb.SolverName()) {
		w.refuse(jb, m, ok)
		return
	}
	if m.Subject() != w.cfg.Names.SubjectOf(jb) {
		w.log.Warn("dropping malformed job", "subject", m.Subject(), "error", fmt.Errorf("job %s on subject %s", jb.ID, m.Subject()))
		m.TermWithReason("malformed job")
		return
	}
	t := w.begin(jb, m, beat)
	if t == nil { // sweep canceled
		w.log.Debug("dropping job of a canceled sweep", "job", jb.ID, "sweep", jb.Sweep)
		m.Ack()
		return
	}
	w.first.Do(func() { close(w.firstJob) })
	res, err := w.safeRun(t.ctx, run, jb)
	out := res.Outcome
	out.Snapshot = ""
	stopped := t.ctx.Err() != nil
	w.end(t)
	if stopped {
		if t.swept.Load() {
			m.Ack()
		} else {
			w.giveBack(m)
		}
		return
	}
	attempt := int(meta.NumDelivered)
	last := w.maxDeliver > 0 && attempt >= w.maxDeliver
	if err == nil && jb.Snapshot && res.Snapshot != nil && out.Status == job.StatusDone {
		out.Snapshot, err = w.putSnapshot(context.Background(), jb, res.Snapshot)
	}
	if err != nil {
		if !isPermanent(err) && !last {
			w.log.Warn("job attempt failed; it will be retried", "job", jb.ID, "attempt", attempt, "error", err)
			m.NakWithDelay(w.cfg.RetryDelay)
			return
		}
		out = job.Outcome{Status: job.StatusFailed, Error: err.Error()}
		if last && !isPermanent(err) {
			out.Error = fmt.Sprintf("%s (after %d attempts)", err, attempt)
		}
	}
	out.JobID, out.Sweep, out.Worker, out.Attempts = jb.ID, jb.Sweep, w.cfg.ID, attempt
	if out.Status == job.StatusFailed && out.Error == "" {
		out.Error = "failed without a reason"
	}
	out = withinBounds(out)
	f, err := w.publish(out, meta.Sequence.Stream, m)
	if err != nil {
		w.log.Warn("publishing result; the job will be delivered again", "job", jb.ID, "error", err)
		m.Nak()
		return
	}
	w.acks <- pending{msg: m, ack: f, jb: jb.ID, status: out.Status, reason: out.Error}
}

// withinBounds returns o as a coordinator with the default bounds takes
// it: a failure's reason cut to the longest error text, and an outcome
// outside the bounds (a runner's mistake) turned into a failure that says
// why, instead of a result the coordinator would refuse.
func withinBounds(o job.Outcome) job.Outcome {
	b := job.DefaultBounds()
	if len(o.Error) > b.MaxText {
		o.Error = o.Error[:b.MaxText-3] + "..."
	}
	if err := o.CheckBounds(b); err != nil {
		o = job.Outcome{JobID: o.JobID, Sweep: o.Sweep, Worker: o.Worker, Attempts: o.Attempts, Status: job.StatusFailed,
			Error: "the runner's outcome is outside the bounds a coordinator takes: " + err.Error()}
		if err := o.CheckBounds(b); err != nil { // the worker's own name or the sweep's is too long
			o.Error = "the runner's outcome is outside the bounds a coordinator takes"
		}
	}
	return o
}

// refuse gives back a job of a solver this worker does not offer, or of
// another version of one it offers (offered), to come again after
// RefuseDelay (for another worker, or this one once it offers the
// solver); the first such job of each solver and version is logged.
func (w *Worker) refuse(jb job.Job, m jetstream.Msg, offered bool) {
	label := jb.SolverLabel()
	w.mu.Lock()
	first := !w.refused[label]
	w.refused[label] = true
	w.mu.Unlock()
	switch {
	case !first:
	case offered:
		have := jb.SolverName()
		if v := w.versionOf(have); v != "" {
			have += "@" + v
		}
		w.log.Warn("a job asks for another version of a solver this worker offers; such jobs are left for another worker",
			"job_solver", label, "offered", have, "job", jb.ID, "sweep", jb.Sweep)
	default:
		w.log.Warn("this worker does not offer the solver of a job; such jobs are given back", "solver", label, "job", jb.ID, "sweep", jb.Sweep)
	}
	m.NakWithDelay(w.cfg.RefuseDelay)
}

// safeRun calls the runner, turning a panic into an error.
func (w *Worker) safeRun(ctx context.Context, run Runner, jb job.Job) (res Result, err error) {
	defer func() {
		if r := recover(); r != nil {
			w.log.Error("job panicked", "job", jb.ID, "panic", r, "stack", string(debug.Stack()))
			res, err = Result{}, fmt.Errorf("worker panic: %v", r)
		}
	}()
	if res, err = run.Run(ctx, jb); err == nil && !res.Outcome.Status.Valid() {
		err = fmt.Errorf("runner returned status %q", res.Outcome.Status)
	}
	return res, err
}

// begin registers a running job; nil if its sweep is canceled.
func (w *Worker) begin(jb job.Job, m jetstream.Msg, beat time.Time) *task {
	key := wire.SweepToken(jb.Sweep)
	w.mu.Lock()
	stale := w.canceled[key]
	w.mu.Unlock()
	if stale && w.stillCanceled(key) {
		return nil
	}
	w.mu.Lock()
	defer w.mu.Unlock()
	t := &task{jb: jb, msg: m, since: time.Now(), beat: beat}
	t.progress.Store(math.Float64bits(math.NaN()))
	t.ctx, t.cancel = context.WithCancel(context.WithValue(w.base, progressKey{}, &t.progress))
	w.next++
	t.key = w.next
	w.tasks[t.key] = t
	return t
}

func (w *Worker) end(t *task) {
	run := int64(time.Since(t.since))
	w.busy.Add(run)
	// An exponential mean over about the last 8 jobs sizes the prefetch.
	for {
		old := w.meanRun.Load()
		mean := max(run, 1)
		if old > 0 {
			mean = old + (run-old)/8
		}
		if w.meanRun.CompareAndSwap(old, max(mean, 1)) {
			break
		}
	}
	t.cancel()
	w.mu.Lock()
	defer w.mu.Unlock()
	delete(w.tasks, t.key)
}
