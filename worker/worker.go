package worker

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"runtime"
	"runtime/debug"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
	"time"

	"github.com/hashicorp/go-hclog"
	"github.com/nats-io/nats.go"
	"github.com/nats-io/nats.go/jetstream"
	"github.com/nats-io/nuid"

	"fvsweep/fv2d"
	"fvsweep/sweep/job"
	"fvsweep/sweep/wire"
)

// Runner runs one job. It returns the outcome (Status done, or failed for a
// run that diverged: a result, not an error) and, optionally, the final
// state for a snapshot. An error means the attempt failed and the job may
// be tried again, unless it is Permanent or the delivery limit is reached;
// then the job is recorded as failed with the error as its reason. The
// worker fills in the outcome's JobID, Sweep, Worker and Attempts.
type Runner func(ctx context.Context, jb job.Job) (job.Outcome, *fv2d.State, error)

// Permanent marks an error that no retry can cure (parameters the case
// refuses, a job ID that does not match its parameters).
func Permanent(err error) error { return permanent{err} }

type permanent struct{ error }

func (p permanent) Unwrap() error { return p.error }

func isPermanent(err error) bool {
	var p permanent
	return errors.As(err, &p)
}

// Config configures a Worker; the zero value of each field but Run has a
// default.
type Config struct {
	Names wire.Names
	// ID names the worker in reports and outcomes (default host-pid-random).
	ID string
	// Concurrency is the number of jobs run at once (default NumCPU).
	Concurrency int
	// Run runs a job (default Solve, the fv2d solver).
	Run Runner
	// ReportEvery is the interval of the worker's reports (default 2 s).
	ReportEvery time.Duration
	// Heartbeat is the interval of in-progress acks of a running job
	// (default a third of the consumer's ack wait).
	Heartbeat time.Duration
	// RetryDelay is how long a failed attempt waits before its next
	// delivery (default 1 s).
	RetryDelay time.Duration
	// FetchWait bounds one pull request (default 1 s).
	FetchWait time.Duration
	// Prefetch is the most jobs held in a local buffer beyond the running
	// ones (default 4 x Concurrency), fetched ahead in batches so that a
	// short job does not wait for a round trip to the server. The buffer
	// holds about holdFor of work at the mean run time so far, and none
	// before the first job ends: a worker does not sit on big jobs that
	// another one could start, and "largest first" keeps its meaning.
	// Buffered jobs get in-progress heartbeats too and go back to the queue
	// on a drain.
	Prefetch int
	// Pending is the most outcomes published and not yet acknowledged by
	// the server (default 256). A job is acked only once the server has
	// acknowledged its outcome.
	Pending int
	// DrainTimeout is how long a drain lets running jobs finish before they
	// are stopped and returned to the queue (0: until they finish).
	DrainTimeout time.Duration
	Log          hclog.Logger
}

// holdFor is about how much work, at the mean run time so far, the
// prefetch buffer holds per slot.
const holdFor = 200 * time.Millisecond

// Worker pulls jobs from the shared durable consumer into a small buffer,
// runs up to Concurrency of them at once, publishes each outcome on the
// results stream and acks the job only once the outcome is stored by the
// server.
type Worker struct {
	cfg        Config
	nc         *nats.Conn
	js         jetstream.JetStream
	cons       jetstream.Consumer
	kv         jetstream.KeyValue
	fields     jetstream.ObjectStore
	log        hclog.Logger
	maxDeliver int
	host       string
	started    time.Time

	queue chan jetstream.Msg // fetched, not yet taken by a slot
	held  atomic.Int64       // buffered or running
	freed chan struct{}      // a slot finished a job (capacity 1)
	acks  chan pending       // outcomes published, waiting for the server
	wg    sync.WaitGroup     // slots
	abort context.CancelFunc
	base  context.Context

	mu       sync.Mutex
	tasks    map[uint64]*task
	buffered map[jetstream.Msg]time.Time // in queue: delivery or last heartbeat
	next     uint64
	canceled map[string]bool // sweep tokens

	done, failed atomic.Int64
	busy         atomic.Int64 // nanoseconds spent in Run, all slots
	meanRun      atomic.Int64 // running mean of a job's run time, ns; 0 before the first
}

// pending is a job whose outcome was published and is not yet acknowledged.
type pending struct {
	msg    jetstream.Msg
	ack    jetstream.PubAckFuture
	jb     string
	status job.Status
	reason string
}

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
}

// New looks up the worker consumer, the cancel bucket and the field store,
// waiting (until ctx is done) for a coordinator to have created them.
func New(ctx context.Context, nc *nats.Conn, cfg Config) (*Worker, error) {
	if cfg.Concurrency <= 0 {
		cfg.Concurrency = runtime.NumCPU()
	}
	if cfg.Run == nil {
		cfg.Run = Solve
	}
	if cfg.ReportEvery <= 0 {
		cfg.ReportEvery = 2 * time.Second
	}
	if cfg.RetryDelay <= 0 {
		cfg.RetryDelay = time.Second
	}
	if cfg.FetchWait <= 0 {
		cfg.FetchWait = time.Second
	}
	if cfg.Prefetch <= 0 {
		cfg.Prefetch = 4 * cfg.Concurrency
	}
	if cfg.Pending <= 0 {
		cfg.Pending = 256
	}
	if cfg.Log == nil {
		cfg.Log = hclog.NewNullLogger()
	}
	host, _ := os.Hostname()
	if cfg.ID == "" {
		cfg.ID = token(host) + "-" + strconv.Itoa(os.Getpid()) + "-" + strings.ToLower(nuid.Next()[16:])
	}
	// Snapshots (object store chunks) publish asynchronously on the same
	// context, hence the margin over Pending.
	js, err := jetstream.New(nc, jetstream.WithPublishAsyncMaxPending(cfg.Pending+cfg.Concurrency+512),
		jetstream.WithPublishAsyncTimeout(30*time.Second))
	if err != nil {
		return nil, fmt.Errorf("jetstream: %w", err)
	}
	w := &Worker{cfg: cfg, nc: nc, js: js, log: cfg.Log.With("worker", cfg.ID), host: host,
		queue: make(chan jetstream.Msg, cfg.Concurrency+cfg.Prefetch), freed: make(chan struct{}, 1),
		acks: make(chan pending, cfg.Pending), tasks: map[uint64]*task{}, buffered: map[jetstream.Msg]time.Time{},
		canceled: map[string]bool{}}
	n := cfg.Names
	for wait := 100 * time.Millisecond; ; wait = min(2*wait, 2*time.Second) {
		w.cons, err = js.Consumer(ctx, n.JobStream(), n.WorkerConsumer())
		if err == nil {
			w.kv, err = js.KeyValue(ctx, n.CancelBucket())
		}
		if err == nil {
			w.fields, err = js.ObjectStore(ctx, n.FieldBucket())
		}
		if err == nil {
			break
		}
		if !errors.Is(err, jetstream.ErrStreamNotFound) && !errors.Is(err, jetstream.ErrConsumerNotFound) &&
			!errors.Is(err, jetstream.ErrBucketNotFound) && !errors.Is(err, jetstream.ErrStreamNotFound) {
			return nil, fmt.Errorf("worker: %w", err)
		}
		w.log.Info("waiting for a coordinator to create the streams", "error", err)
		select {
		case <-ctx.Done():
			return nil, fmt.Errorf("worker: no job stream %s: %w", n.JobStream(), err)
		case <-time.After(wait):
		}
	}
	ci := w.cons.CachedInfo()
	w.maxDeliver = ci.Config.MaxDeliver
	if w.cfg.Heartbeat <= 0 {
		w.cfg.Heartbeat = max(ci.Config.AckWait/3, 10*time.Millisecond)
	}
	return w, nil
}

// token makes s one subject token.
func token(s string) string {
	b := []byte(s)
	for i, c := range b {
		if !(c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || c >= '0' && c <= '9' || c == '-' || c == '_') {
			b[i] = '-'
		}
	}
	if len(b) == 0 {
		return "worker"
	}
	return string(b)
}

// ID is the worker's name.
func (w *Worker) ID() string { return w.cfg.ID }

// Run pulls and runs jobs until ctx is done, then drains: it stops
// fetching, returns the buffered jobs to the queue, lets the running jobs
// finish (for at most DrainTimeout, if set; the others go back to the
// queue), waits for the acks of their outcomes, sends a last report and
// returns. A buffered job on its last delivery is run rather than returned:
// returning it would use up its deliveries.
func (w *Worker) Run(ctx context.Context) error {
	w.started = time.Now()
	w.base, w.abort = context.WithCancel(context.Background())
	defer w.abort()
	watch, err := w.kv.WatchAll(w.base)
	if err != nil {
		return fmt.Errorf("worker: watching %s: %w", w.cfg.Names.CancelBucket(), err)
	}
	defer watch.Stop()
	ready := make(chan struct{})
	go w.watchCanceled(watch, ready)
	select {
	case <-ready:
	case <-ctx.Done():
	}
	side := make(chan struct{})
	go w.background(side)
	w.log.Info("worker started", "concurrency", w.cfg.Concurrency, "prefetch", w.cfg.Prefetch,
		"max_deliver", w.maxDeliver, "heartbeat", w.cfg.Heartbeat)
	settled := make(chan struct{})
	go func() { defer close(settled); w.settle() }()
	for range w.cfg.Concurrency {
		w.wg.Add(1)
		go w.slot(ctx)
	}
	w.pull(ctx)
	w.drain()
	close(w.acks)
	<-settled
	close(side)
	w.report(true)
	w.log.Info("worker stopped", "done", w.done.Load(), "failed", w.failed.Load())
	return nil
}

// Abort stops the running jobs now and returns them to the queue.
func (w *Worker) Abort() {
	if w.abort != nil {
		w.abort()
	}
}

// pull keeps the buffer filled until ctx is done, then closes it. It
// fetches when at least half of the room is free (or the buffer is empty
// and a slot is free), as many jobs as there is room for.
func (w *Worker) pull(ctx context.Context) {
	defer close(w.queue)
	for ctx.Err() == nil {
		n := w.room()
		if n == 0 {
			select {
			case <-w.freed:
			case <-ctx.Done():
			}
			continue
		}
		// The fetch ends with ctx: the server delivers nothing more to a
		// request whose inbox has gone, so a drain takes no new jobs.
		fctx, cancel := context.WithTimeout(ctx, w.cfg.FetchWait)
		batch, err := w.cons.Fetch(n, jetstream.FetchContext(fctx))
		if err != nil {
			cancel()
			w.log.Warn("fetching jobs", "error", err)
			select {
			case <-ctx.Done():
			case <-time.After(w.cfg.RetryDelay):
			}
			continue
		}
		for m := range batch.Messages() {
			w.held.Add(1)
			w.mu.Lock()
			w.buffered[m] = time.Now()
			w.mu.Unlock()
			w.queue <- m // room() keeps it from blocking
		}
		cancel()
		if err := batch.Error(); err != nil && !errors.Is(err, nats.ErrTimeout) &&
			!errors.Is(err, context.DeadlineExceeded) && !errors.Is(err, context.Canceled) {
			w.log.Debug("fetch ended", "error", err)
		}
	}
}

// room is how many jobs to fetch now: 0 while less than half the room
// (slots plus the prefetch depth) is free, unless nothing is buffered and
// a slot is free.
func (w *Worker) room() int {
	conc := w.cfg.Concurrency
	depth := w.cfg.Prefetch
	if mean := time.Duration(w.meanRun.Load()); mean <= 0 {
		depth = 0
	} else if d := int(time.Duration(conc) * holdFor / mean); d < depth {
		depth = d
	}
	held := int(w.held.Load())
	free := conc + depth - held
	w.mu.Lock()
	idle := len(w.buffered) == 0 && held < conc
	w.mu.Unlock()
	if free <= 0 || free < (conc+depth+1)/2 && !idle {
		return 0
	}
	return free
}

// slot runs jobs from the buffer until it is closed. Once ctx is done it
// returns the jobs it takes to the queue, but for those on their last
// delivery.
func (w *Worker) slot(ctx context.Context) {
	defer w.wg.Done()
	for m := range w.queue {
		w.mu.Lock()
		beat := w.buffered[m]
		delete(w.buffered, m)
		w.mu.Unlock()
		if ctx.Err() != nil && !w.lastDelivery(m) {
			m.Nak()
		} else {
			w.handle(m, beat)
		}
		w.held.Add(-1)
		select {
		case w.freed <- struct{}{}:
		default:
		}
	}
}

// lastDelivery reports whether m is on its last delivery.
func (w *Worker) lastDelivery(m jetstream.Msg) bool {
	meta, err := m.Metadata()
	return err == nil && w.maxDeliver > 0 && int(meta.NumDelivered) >= w.maxDeliver
}

// drain waits for the slots to finish the running jobs and return the
// buffered ones, at most DrainTimeout if set.
func (w *Worker) drain() {
	finished := make(chan struct{})
	go func() { w.wg.Wait(); close(finished) }()
	if n := w.running(); n > 0 {
		w.log.Info("draining: finishing running jobs", "running", n)
	}
	var timeout <-chan time.Time
	if w.cfg.DrainTimeout > 0 {
		timeout = time.After(w.cfg.DrainTimeout)
	}
	select {
	case <-finished:
	case <-timeout:
		w.log.Warn("drain timeout: returning running jobs to the queue", "running", w.running())
		w.abort()
		<-finished
	}
}

func (w *Worker) running() int {
	w.mu.Lock()
	defer w.mu.Unlock()
	return len(w.tasks)
}

// handle runs one delivered job and publishes its outcome, or settles its
// message at once (malformed, canceled, stopped, to be retried).
// beat is when the message was delivered or last heartbeat.
func (w *Worker) handle(m jetstream.Msg, beat time.Time) {
	meta, err := m.Metadata()
	if err != nil {
		w.log.Warn("job message without metadata", "subject", m.Subject(), "error", err)
		m.Term()
		return
	}
	jb, err := job.DecodeMessage(m.Data())
	if err == nil && m.Subject() != w.cfg.Names.JobSubject(jb.Sweep, jb.ID) {
		err = fmt.Errorf("job %s on subject %s", jb.ID, m.Subject())
	}
	if err != nil {
		w.log.Warn("dropping malformed job", "subject", m.Subject(), "error", err)
		m.TermWithReason("malformed job")
		return
	}
	t := w.begin(jb, m, beat)
	if t == nil { // sweep canceled
		w.log.Debug("dropping job of a canceled sweep", "job", jb.ID, "sweep", jb.Sweep)
		m.Ack()
		return
	}
	out, st, err := w.safeRun(t.ctx, jb)
	stopped := t.ctx.Err() != nil
	w.end(t)
	if stopped {
		if t.swept.Load() {
			m.Ack()
		} else {
			m.Nak()
		}
		return
	}
	attempt := int(meta.NumDelivered)
	last := w.maxDeliver > 0 && attempt >= w.maxDeliver
	if err == nil && jb.Snapshot && st != nil && out.Status == job.StatusDone {
		out.Snapshot, err = w.putSnapshot(context.Background(), jb, st)
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
	f, err := w.publish(out, meta.Sequence.Stream)
	if err != nil {
		w.log.Warn("publishing result; the job will be delivered again", "job", jb.ID, "error", err)
		m.Nak()
		return
	}
	w.acks <- pending{msg: m, ack: f, jb: jb.ID, status: out.Status, reason: out.Error}
}

// settle acks each job once the server has acknowledged its outcome (naks
// it when the publish failed), in publish order, until acks is closed.
func (w *Worker) settle() {
	for p := range w.acks {
		select {
		case <-p.ack.Ok():
		case err := <-p.ack.Err():
			if err = w.republish(p); err != nil {
				w.log.Warn("publishing result; the job will be delivered again", "job", p.jb, "error", err)
				p.msg.Nak()
				continue
			}
		}
		p.msg.Ack()
		if p.status == job.StatusDone {
			w.done.Add(1)
		} else {
			w.failed.Add(1)
			w.log.Info("job failed", "job", p.jb, "error", p.reason)
		}
	}
}

// republish sends a result whose asynchronous publish failed again, a few
// times over about ten seconds, keeping its job in progress meanwhile: a
// results stream that is electing a new leader (a cluster node went down)
// refuses publishes for a few seconds, and a job should not use up its
// deliveries on that. The message ID makes a repeat that did land a
// duplicate the stream drops.
func (w *Worker) republish(p pending) error {
	var err error
	for i := 1; i <= 5; i++ {
		p.msg.InProgress()
		ctx, cancel := context.WithTimeout(context.Background(), 2*time.Second)
		_, err = w.js.PublishMsg(ctx, p.ack.Msg())
		cancel()
		if err == nil {
			return nil
		}
		w.log.Debug("publishing result again", "job", p.jb, "try", i, "error", err)
		time.Sleep(time.Duration(i) * 200 * time.Millisecond)
	}
	return err
}

// safeRun calls the runner, turning a panic into an error.
func (w *Worker) safeRun(ctx context.Context, jb job.Job) (out job.Outcome, st *fv2d.State, err error) {
	defer func() {
		if r := recover(); r != nil {
			w.log.Error("job panicked", "job", jb.ID, "panic", r, "stack", string(debug.Stack()))
			out, st, err = job.Outcome{}, nil, fmt.Errorf("worker panic: %v", r)
		}
	}()
	if out, st, err = w.cfg.Run(ctx, jb); err == nil && out.Status != job.StatusDone && out.Status != job.StatusFailed {
		err = fmt.Errorf("runner returned status %q", out.Status)
	}
	return out, st, err
}

// publish puts the outcome on the results stream without waiting; the
// future resolves with the server's ack (or an error after 30 s). The
// message ID (job and stream sequence of the job message) makes a repeat of
// the same delivery a duplicate.
func (w *Worker) publish(o job.Outcome, seq uint64) (jetstream.PubAckFuture, error) {
	data, err := job.EncodeOutcome(o)
	if err != nil {
		return nil, err
	}
	return w.js.PublishAsync(w.cfg.Names.ResultSubject(o.Sweep, o.JobID), data,
		jetstream.WithMsgID(o.JobID+"-"+strconv.FormatUint(seq, 10)),
		jetstream.WithExpectStream(w.cfg.Names.ResultStream()))
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
	t.ctx, t.cancel = context.WithCancel(w.base)
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

// stillCanceled asks the bucket whether the sweep is canceled: a
// resubmission clears the mark just before it queues the jobs, and the
// watcher may not have seen that yet.
func (w *Worker) stillCanceled(key string) bool {
	ctx, cancel := context.WithTimeout(context.Background(), 5*time.Second)
	defer cancel()
	_, err := w.kv.Get(ctx, key)
	if errors.Is(err, jetstream.ErrKeyNotFound) {
		w.mu.Lock()
		delete(w.canceled, key)
		w.mu.Unlock()
		return false
	}
	return true
}

// watchCanceled keeps the set of canceled sweeps and stops their running
// jobs. ready is closed once the initial values are in.
func (w *Worker) watchCanceled(watch jetstream.KeyWatcher, ready chan struct{}) {
	once := sync.OnceFunc(func() { close(ready) })
	defer once()
	for e := range watch.Updates() {
		if e == nil {
			once()
			continue
		}
		key := e.Key()
		w.mu.Lock()
		if e.Operation() == jetstream.KeyValuePut {
			w.canceled[key] = true
			for _, t := range w.tasks {
				if wire.SweepToken(t.jb.Sweep) == key {
					t.swept.Store(true)
					t.cancel()
				}
			}
		} else {
			delete(w.canceled, key)
		}
		w.mu.Unlock()
		if e.Operation() == jetstream.KeyValuePut {
			w.log.Info("sweep canceled", "sweep", string(e.Value()))
		}
	}
}

// background sends the reports and the in-progress heartbeats until stop
// is closed.
func (w *Worker) background(stop <-chan struct{}) {
	rep := time.NewTicker(w.cfg.ReportEvery)
	hb := time.NewTicker(w.cfg.Heartbeat)
	defer rep.Stop()
	defer hb.Stop()
	w.report(false)
	for {
		select {
		case <-stop:
			return
		case <-rep.C:
			w.report(false)
		case now := <-hb.C:
			w.mu.Lock()
			for _, t := range w.tasks {
				if now.Sub(t.beat) >= w.cfg.Heartbeat/2 {
					t.msg.InProgress()
					t.beat = now
				}
			}
			for m, beat := range w.buffered {
				if now.Sub(beat) >= w.cfg.Heartbeat/2 {
					m.InProgress()
					w.buffered[m] = now
				}
			}
			w.mu.Unlock()
		}
	}
}

// Stats is what a worker has done so far.
type Stats struct {
	Done, Failed int
	// Busy is the fraction of slot time spent running jobs since Run
	// started: sum of run times / (Concurrency x elapsed).
	Busy float64
}

// Stats returns the worker's counters.
func (w *Worker) Stats() Stats {
	s := Stats{Done: int(w.done.Load()), Failed: int(w.failed.Load())}
	if el := time.Since(w.started); el > 0 && !w.started.IsZero() {
		s.Busy = float64(w.busy.Load()) / (float64(w.cfg.Concurrency) * float64(el))
	}
	return s
}

// report publishes the worker's report (core NATS, fire and forget).
func (w *Worker) report(leaving bool) {
	st := w.Stats()
	r := wire.WorkerReport{
		ID: w.cfg.ID, Host: w.host, Cores: runtime.NumCPU(), Concurrency: w.cfg.Concurrency,
		Started: w.started, Sent: time.Now(), Every: w.cfg.ReportEvery,
		Done: st.Done, Failed: st.Failed, Busy: st.Busy, Leaving: leaving,
	}
	w.mu.Lock()
	for _, t := range w.tasks {
		r.Current = append(r.Current, wire.RunningJob{JobID: t.jb.ID, Sweep: t.jb.Sweep, Since: t.since})
	}
	w.mu.Unlock()
	data, err := json.Marshal(r)
	if err == nil {
		err = w.nc.Publish(w.cfg.Names.WorkerSubject(w.cfg.ID), data)
	}
	if err != nil {
		w.log.Debug("sending report", "error", err)
	}
}
