package worker_test

import (
	"bytes"
	"context"
	"errors"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/hashicorp/go-hclog"
	"github.com/nats-io/nats-server/v2/server"
	"github.com/nats-io/nats.go"
	"github.com/nats-io/nats.go/jetstream"

	"fvsweep/sweep/job"
	"fvsweep/sweep/wire"
	"fvsweep/worker"
)

// bench is an embedded NATS server with the streams a worker needs (made
// here as a coordinator makes them, not by one), a worker on it, and a
// pull consumer on the results.
type bench struct {
	t     *testing.T
	names wire.Names
	nc    *nats.Conn
	js    jetstream.JetStream
	logs  *syncBuffer

	maxDeliver int
	routes     map[string]bool // solvers whose consumers exist
}

// maxDeliver is the delivery limit of the test's worker consumer.
const maxDeliver = 3

func newBench(t *testing.T, results bool) *bench {
	t.Helper()
	srv, err := server.NewServer(&server.Options{Host: "127.0.0.1", Port: server.RANDOM_PORT,
		JetStream: true, StoreDir: t.TempDir(), NoLog: true, NoSigs: true})
	if err != nil {
		t.Fatal(err)
	}
	go srv.Start()
	if !srv.ReadyForConnections(10 * time.Second) {
		t.Fatal("nats server not ready")
	}
	t.Cleanup(srv.Shutdown)
	nc, err := nats.Connect(srv.ClientURL())
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(nc.Close)
	js, err := jetstream.New(nc)
	if err != nil {
		t.Fatal(err)
	}
	b := &bench{t: t, names: wire.Names{Prefix: "wt"}, nc: nc, js: js, logs: &syncBuffer{}}
	ctx := context.Background()
	n := b.names
	if _, err := js.CreateStream(ctx, jetstream.StreamConfig{Name: n.JobStream(), Subjects: []string{n.JobFilter("")},
		Retention: jetstream.WorkQueuePolicy}); err != nil {
		t.Fatal(err)
	}
	b.maxDeliver = maxDeliver
	b.route("", "")
	if _, err := js.CreateKeyValue(ctx, jetstream.KeyValueConfig{Bucket: n.CancelBucket()}); err != nil {
		t.Fatal(err)
	}
	if _, err := js.CreateObjectStore(ctx, jetstream.ObjectStoreConfig{Bucket: n.FieldBucket()}); err != nil {
		t.Fatal(err)
	}
	if results {
		b.resultStream()
	}
	return b
}

// route creates the consumer of the jobs of solver at version, as the
// coordinator does (fv2d's for "").
func (b *bench) route(solver, version string) {
	b.t.Helper()
	r := wire.Route(solver, version)
	if _, err := b.js.CreateConsumer(context.Background(), b.names.JobStream(), jetstream.ConsumerConfig{
		Durable: b.names.RouteConsumer(r), FilterSubject: b.names.RouteFilter(r),
		AckPolicy: jetstream.AckExplicitPolicy, AckWait: 5 * time.Second, MaxDeliver: b.maxDeliver}); err != nil {
		b.t.Fatal(err)
	}
}

// resultStream creates the results stream.
func (b *bench) resultStream() {
	b.t.Helper()
	_, err := b.js.CreateStream(context.Background(), jetstream.StreamConfig{Name: b.names.ResultStream(),
		Subjects: []string{b.names.ResultFilter()}, Retention: jetstream.WorkQueuePolicy})
	if err != nil {
		b.t.Fatal(err)
	}
}

// start runs a worker offering runners until the test ends.
func (b *bench) start(runners map[string]worker.Runner) *worker.Worker {
	b.t.Helper()
	log := hclog.New(&hclog.LoggerOptions{Level: hclog.Debug, Output: b.logs})
	for name, r := range runners {
		if name == job.BuiltinSolver || b.routes[name] {
			continue
		}
		version := ""
		if v, ok := r.(worker.Versioned); ok {
			version = v.Version()
		}
		b.route(name, version)
		if b.routes == nil {
			b.routes = map[string]bool{}
		}
		b.routes[name] = true
	}
	ctx, cancel := context.WithCancel(context.Background())
	w, err := worker.New(ctx, b.nc, worker.Config{Names: b.names, ID: "test-worker", Concurrency: 1, Runners: runners,
		RetryDelay: 20 * time.Millisecond, RefuseDelay: 50 * time.Millisecond, FetchWait: 100 * time.Millisecond,
		ReportEvery: time.Second, Log: log})
	if err != nil {
		b.t.Fatal(err)
	}
	done := make(chan struct{})
	go func() { defer close(done); w.Run(ctx) }()
	b.t.Cleanup(func() { cancel(); <-done })
	return w
}

// submit publishes a job of the named solver ("" for the built-in one)
// on its route, making the route's consumer for a solver seen first.
func (b *bench) submit(name, solver string) job.Job {
	b.t.Helper()
	j := job.Job{ID: job.NewID("test " + name), Sweep: "s", Case: "test", Solver: solver,
		Params: map[string]string{"name": name}, Cost: 1}
	if solver != "" && !b.routes[solver] {
		b.route(solver, "")
		if b.routes == nil {
			b.routes = map[string]bool{}
		}
		b.routes[solver] = true
	}
	b.publish(j, b.names.SubjectOf(j))
	return j
}

// publish publishes j on subject.
func (b *bench) publish(j job.Job, subject string) {
	b.t.Helper()
	data, err := job.Encode(j)
	if err != nil {
		b.t.Fatal(err)
	}
	if _, err := b.js.Publish(context.Background(), subject, data); err != nil {
		b.t.Fatal(err)
	}
}

// outcomes fetches n outcomes from the results stream, decoded as the
// coordinator decodes them, by job ID.
func (b *bench) outcomes(n int) map[string]job.Outcome {
	b.t.Helper()
	ctx := context.Background()
	cons, err := b.js.CreateOrUpdateConsumer(ctx, b.names.ResultStream(), jetstream.ConsumerConfig{
		Durable: "test", AckPolicy: jetstream.AckExplicitPolicy})
	if err != nil {
		b.t.Fatal(err)
	}
	out := map[string]job.Outcome{}
	deadline := time.Now().Add(10 * time.Second)
	for len(out) < n && time.Now().Before(deadline) {
		batch, err := cons.Fetch(n-len(out), jetstream.FetchMaxWait(time.Second))
		if err != nil {
			b.t.Fatal(err)
		}
		for m := range batch.Messages() {
			o, err := job.DecodeOutcomeMessage(m.Data())
			if err != nil {
				b.t.Fatal(err)
			}
			out[o.JobID] = o
			m.Ack()
		}
	}
	if len(out) < n {
		b.t.Fatalf("%d outcomes, want %d", len(out), n)
	}
	return out
}

// queued is the number of jobs in the job stream: a job leaves it when the
// worker acks it.
func (b *bench) queued() uint64 {
	b.t.Helper()
	s, err := b.js.Stream(context.Background(), b.names.JobStream())
	if err != nil {
		b.t.Fatal(err)
	}
	info, err := s.Info(context.Background())
	if err != nil {
		b.t.Fatal(err)
	}
	return info.State.Msgs
}

// eventually waits up to 10 s for cond.
func (b *bench) eventually(what string, cond func() bool) {
	b.t.Helper()
	for deadline := time.Now().Add(10 * time.Second); !cond(); time.Sleep(10 * time.Millisecond) {
		if time.Now().After(deadline) {
			b.t.Fatalf("timed out waiting for %s", what)
		}
	}
}

// fake is a runner that records the jobs it runs and answers with answer.
type fake struct {
	mu     sync.Mutex
	ran    []string // job IDs
	answer func(call int) (worker.Result, error)
}

func (f *fake) Run(_ context.Context, jb job.Job) (worker.Result, error) {
	f.mu.Lock()
	f.ran = append(f.ran, jb.ID)
	call := len(f.ran)
	f.mu.Unlock()
	if f.answer == nil {
		return worker.Result{Outcome: job.Outcome{Status: job.StatusDone, Steps: 7, TFinal: 0.5}}, nil
	}
	return f.answer(call)
}

func (f *fake) calls() []string {
	f.mu.Lock()
	defer f.mu.Unlock()
	return append([]string(nil), f.ran...)
}

// A job goes to the runner its solver names, its outcome is published with
// the worker's fields filled in, and the job is acked only once the
// outcome's publish is acknowledged: while there is no results stream to
// store it, the job stays queued.
func TestJobRunByItsSolverAckedAfterOutcome(t *testing.T) {
	b := newBench(t, false)
	builtin, other := &fake{}, &fake{}
	w := b.start(map[string]worker.Runner{job.BuiltinSolver: builtin, "other": other})
	jb := b.submit("a", "other")
	b.eventually("the runner to be called", func() bool { return len(other.calls()) == 1 })
	time.Sleep(300 * time.Millisecond) // the publish is refused: no stream
	if q := b.queued(); q != 1 {
		t.Fatalf("%d jobs queued before the outcome was stored; want 1 (not acked)", q)
	}
	b.resultStream()
	o := b.outcomes(1)[jb.ID]
	if o.Status != job.StatusDone || o.Sweep != jb.Sweep || o.Worker != w.ID() || o.Attempts != 1 || o.Steps != 7 || o.TFinal != 0.5 {
		t.Fatalf("outcome %+v", o)
	}
	b.eventually("the job to be acked", func() bool { return b.queued() == 0 })

	fv := b.submit("b", "")
	if o := b.outcomes(1)[fv.ID]; o.Status != job.StatusDone {
		t.Fatalf("outcome of the built-in solver's job: %+v", o)
	}
	if got := builtin.calls(); len(got) != 1 || got[0] != fv.ID || len(other.calls()) != 1 {
		t.Fatalf("built-in runner ran %v, other ran %v", got, other.calls())
	}
	// The worker counts a job once its ack is sent, which can come after
	// the outcome is seen on the results stream.
	b.eventually("the second job to be counted", func() bool { return w.Stats().Done == 2 })
	if st := w.Stats(); st.Done != 2 || st.Failed != 0 {
		t.Fatalf("stats %+v", st)
	}
}

// A runner's error gives the job back, and its next delivery is run.
func TestRunnerErrorRetries(t *testing.T) {
	b := newBench(t, true)
	flaky := &fake{answer: func(call int) (worker.Result, error) {
		if call == 1 {
			return worker.Result{}, errors.New("scratch disk full")
		}
		return worker.Result{Outcome: job.Outcome{Status: job.StatusDone, Steps: 1}}, nil
	}}
	b.start(map[string]worker.Runner{"flaky": flaky})
	jb := b.submit("a", "flaky")
	o := b.outcomes(1)[jb.ID]
	if o.Status != job.StatusDone || o.Attempts != 2 || len(flaky.calls()) != 2 {
		t.Fatalf("outcome %+v after %d runs; want done on attempt 2", o, len(flaky.calls()))
	}
}

// A Permanent error is a failed outcome at once, with the error as reason.
func TestPermanentErrorFailsAtOnce(t *testing.T) {
	b := newBench(t, true)
	bad := &fake{answer: func(int) (worker.Result, error) {
		return worker.Result{}, worker.Permanent(errors.New("limiter \"x\" unknown"))
	}}
	b.start(map[string]worker.Runner{"bad": bad})
	jb := b.submit("a", "bad")
	o := b.outcomes(1)[jb.ID]
	if o.Status != job.StatusFailed || o.Attempts != 1 || !strings.Contains(o.Error, `limiter "x" unknown`) || len(bad.calls()) != 1 {
		t.Fatalf("outcome %+v after %d runs; want failed on attempt 1", o, len(bad.calls()))
	}
	b.eventually("the job to be acked", func() bool { return b.queued() == 0 })
}

// A job of a solver the worker does not offer is never delivered to it: it
// waits on its own route. One that comes on the route of a solver the
// worker offers (a misrouted message) is not run, not answered, and given
// back each time it comes; the worker says so once.
func TestUnknownSolverNotRun(t *testing.T) {
	b := newBench(t, true)
	mine := &fake{}
	b.start(map[string]worker.Runner{"mine": mine})
	theirs := b.submit("a", "theirs")
	time.Sleep(300 * time.Millisecond)
	cons, err := b.js.Consumer(context.Background(), b.names.JobStream(), b.names.RouteConsumer(wire.JobRoute(theirs)))
	if err != nil {
		t.Fatal(err)
	}
	if info, err := cons.Info(context.Background()); err != nil || info.Delivered.Consumer != 0 || info.NumPending != 1 {
		t.Fatalf("the other solver's job: %+v, %v; want it pending, never delivered", info, err)
	}
	misrouted := job.Job{ID: job.NewID("test b"), Sweep: "s", Case: "test", Solver: "theirs", Params: map[string]string{"name": "b"}, Cost: 1}
	b.publish(misrouted, b.names.RouteSubject("s", wire.Route("mine", ""), misrouted.ID))
	mineCons, err := b.js.Consumer(context.Background(), b.names.JobStream(), b.names.RouteConsumer(wire.Route("mine", "")))
	if err != nil {
		t.Fatal(err)
	}
	b.eventually("the job to be given back", func() bool {
		info, err := mineCons.Info(context.Background())
		return err == nil && info.NumRedelivered >= 1 && info.NumAckPending == 0
	})
	time.Sleep(200 * time.Millisecond) // the last deliveries
	if n := len(mine.calls()); n != 0 {
		t.Fatalf("a job of another solver was run %d times", n)
	}
	if q := b.queued(); q != 2 {
		t.Fatalf("%d jobs queued, want the waiting and the refused one", q)
	}
	s, err := b.js.Stream(context.Background(), b.names.ResultStream())
	if err != nil {
		t.Fatal(err)
	}
	if info, err := s.Info(context.Background()); err != nil || info.State.Msgs != 0 {
		t.Fatalf("results stream: %+v, %v; want no outcome", info.State, err)
	}
	if n := strings.Count(b.logs.String(), "does not offer the solver"); n != 1 {
		t.Fatalf("refusal logged %d times, want once:\n%s", n, b.logs.String())
	}
}

// versioned is a fake runner of one version of a program.
type versioned struct {
	*fake
	version string
}

func (v versioned) Version() string { return v.version }

// A worker pulls the jobs of the version of a program it offers; a job of
// another version is not delivered to it, and one that comes on its route
// anyway is refused with a log line naming both versions and left for
// another worker; the worker reports the program it offers.
func TestOtherVersionRefused(t *testing.T) {
	b := newBench(t, true)
	heron := versioned{&fake{}, "0.4.1"}
	w := b.start(map[string]worker.Runner{"heron": heron})
	mine := job.Job{ID: job.NewID("heron a"), Sweep: "s", Case: "test", Solver: "heron", Version: "0.4.1", Params: map[string]string{"name": "a"}, Cost: 1}
	b.publish(mine, b.names.SubjectOf(mine))
	if o := b.outcomes(1)[mine.ID]; o.Status != job.StatusDone || o.Worker != w.ID() {
		t.Fatalf("outcome of the offered version: %+v", o)
	}
	other := mine
	other.ID, other.Version = job.NewID("heron b"), "0.5"
	b.route("heron", "0.5")
	b.publish(other, b.names.SubjectOf(other))
	forged := other
	forged.ID = job.NewID("heron c")
	b.publish(forged, b.names.RouteSubject("s", wire.Route("heron", "0.4.1"), forged.ID))
	b.eventually("the refusal", func() bool {
		return strings.Contains(b.logs.String(), "another version of a solver this worker offers")
	})
	time.Sleep(200 * time.Millisecond)
	if got := heron.calls(); len(got) != 1 || got[0] != mine.ID {
		t.Fatalf("runs %v, want only the offered version's job", got)
	}
	logs := b.logs.String()
	if !strings.Contains(logs, "job_solver=heron@0.5") || !strings.Contains(logs, "offered=heron@0.4.1") {
		t.Fatalf("the refusal does not name both versions:\n%s", logs)
	}
	if q := b.queued(); q != 2 {
		t.Fatalf("%d jobs queued, want the two of version 0.5", q)
	}
}

// syncBuffer is a bytes.Buffer safe for the worker's goroutines.
type syncBuffer struct {
	mu  sync.Mutex
	buf bytes.Buffer
}

func (s *syncBuffer) Write(p []byte) (int, error) {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.buf.Write(p)
}

func (s *syncBuffer) String() string {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.buf.String()
}
