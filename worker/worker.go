package worker

import (
	"context"
	"errors"
	"fmt"
	"os"
	"runtime"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
	"time"

	"github.com/hashicorp/go-hclog"
	"github.com/nats-io/nats.go"
	"github.com/nats-io/nats.go/jetstream"
	"github.com/nats-io/nuid"

	"fvsweep/sweep/job"
	"fvsweep/sweep/wire"
)

// Config configures a Worker; the zero value of each field has a default.
type Config struct {
	Names wire.Names
	// ID names the worker in reports and outcomes (default host-pid-random).
	ID string
	// Concurrency is the number of jobs run at once (default NumCPU).
	Concurrency int
	// Runners are the solvers this worker offers, by solver name (default:
	// FV2D for job.BuiltinSolver). A job of another solver is not run.
	Runners map[string]Runner
	// ReportEvery is the interval of the worker's reports (default 2 s).
	ReportEvery time.Duration
	// Heartbeat is the interval of in-progress acks of a running job
	// (default a third of the consumer's ack wait).
	Heartbeat time.Duration
	// RetryDelay is how long a failed attempt waits before its next
	// delivery (default 1 s).
	RetryDelay time.Duration
	// RefuseDelay is how long a job of a solver this worker does not offer
	// waits before its next delivery (default 30 s).
	RefuseDelay time.Duration
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

// Worker pulls jobs from the shared durable consumer into a small buffer,
// runs up to Concurrency of them at once, publishes each outcome on the
// results stream and acks the job only once the outcome is stored by the
// server.
type Worker struct {
	cfg        Config
	nc         *nats.Conn
	js         jetstream.JetStream
	cons       jetstream.Consumer // fv2d's, which every coordinator makes
	routes     []*route           // the consumers of the solvers offered
	rot        int                // the route a long poll waits on next
	kv         jetstream.KeyValue
	fields     jetstream.ObjectStore
	log        hclog.Logger
	maxDeliver int
	host       string
	started    time.Time

	queue chan jetstream.Msg // fetched, not yet taken by a slot
	held  atomic.Int64       // buffered or running
	freed chan struct{}      // a slot finished a job (capacity 1)
	// firstJob is closed when the first job starts (report it at once).
	firstJob chan struct{}
	first    sync.Once
	acks     chan pending   // outcomes published, waiting for the server
	wg       sync.WaitGroup // slots
	abort    context.CancelFunc
	base     context.Context

	mu       sync.Mutex
	tasks    map[uint64]*task
	buffered map[jetstream.Msg]time.Time // in queue: delivery or last heartbeat
	next     uint64
	canceled map[string]bool // sweep tokens
	refused  map[string]bool // solvers not offered, logged once

	done, failed atomic.Int64
	busy         atomic.Int64 // nanoseconds spent in Run, all slots
	meanRun      atomic.Int64 // running mean of a job's run time, ns; 0 before the first
}

// New looks up the worker consumer, the cancel bucket and the field store,
// waiting (until ctx is done) for a coordinator to have created them.
func New(ctx context.Context, nc *nats.Conn, cfg Config) (*Worker, error) {
	// A report lists the running jobs; a coordinator refuses one that
	// lists more than wire.ReportBounds.MaxCurrent (default 256).
	maxSlots := wire.DefaultReportBounds().MaxCurrent
	if cfg.Concurrency <= 0 {
		cfg.Concurrency = min(runtime.NumCPU(), maxSlots)
	}
	if cfg.Concurrency > maxSlots {
		return nil, fmt.Errorf("concurrency %d: at most %d jobs at once (a coordinator takes no report that lists more)", cfg.Concurrency, maxSlots)
	}
	if cfg.Runners == nil {
		cfg.Runners = map[string]Runner{job.BuiltinSolver: FV2D{}}
	}
	if cfg.ReportEvery <= 0 {
		cfg.ReportEvery = 2 * time.Second
	}
	if cfg.RetryDelay <= 0 {
		cfg.RetryDelay = time.Second
	}
	if cfg.RefuseDelay <= 0 {
		cfg.RefuseDelay = 30 * time.Second
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
	rb := wire.DefaultReportBounds()
	host = host[:min(len(host), rb.MaxText)]
	if cfg.ID == "" {
		cfg.ID = token(host[:min(len(host), 64)]) + "-" + strconv.Itoa(os.Getpid()) + "-" + strings.ToLower(nuid.Next()[16:])
	}
	if len(cfg.ID) > rb.MaxText {
		return nil, fmt.Errorf("worker ID of %d bytes: at most %d (a coordinator takes no report with a longer one)", len(cfg.ID), rb.MaxText)
	}
	// Snapshots (object store chunks) publish asynchronously on the same
	// context, hence the margin over Pending.
	js, err := jetstream.New(nc, jetstream.WithPublishAsyncMaxPending(cfg.Pending+cfg.Concurrency+512),
		jetstream.WithPublishAsyncTimeout(30*time.Second))
	if err != nil {
		return nil, fmt.Errorf("jetstream: %w", err)
	}
	w := &Worker{cfg: cfg, nc: nc, js: js, log: cfg.Log.With("worker", cfg.ID), host: host,
		queue: make(chan jetstream.Msg, cfg.Concurrency+cfg.Prefetch), freed: make(chan struct{}, 1), firstJob: make(chan struct{}),
		acks: make(chan pending, cfg.Pending), tasks: map[uint64]*task{}, buffered: map[jetstream.Msg]time.Time{},
		canceled: map[string]bool{}, refused: map[string]bool{}}
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
			!errors.Is(err, jetstream.ErrBucketNotFound) {
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
	w.routes = w.offered()
	for _, r := range w.routes {
		if r.route == "" {
			r.cons = w.cons
		} else {
			w.lookup(ctx, r)
		}
	}
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
	var labels []string
	for _, r := range w.routes {
		labels = append(labels, r.label)
	}
	w.log.Info("worker started", "concurrency", w.cfg.Concurrency, "prefetch", w.cfg.Prefetch,
		"max_deliver", w.maxDeliver, "heartbeat", w.cfg.Heartbeat, "solvers", labels)
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
