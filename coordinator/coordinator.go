package coordinator

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"sync"
	"sync/atomic"
	"time"

	"github.com/hashicorp/go-hclog"
	"github.com/nats-io/nats.go"
	"github.com/nats-io/nats.go/jetstream"

	"fvsweep/store"
	"fvsweep/sweep/job"
	"fvsweep/sweep/spec"
	"fvsweep/sweep/wire"
)

// Config configures a Coordinator. The zero value of every field but Store
// is usable.
type Config struct {
	Names    wire.Names
	Delivery Delivery
	// Batch is the most outcomes written to the store in one transaction
	// (default 512); Flush the longest an outcome waits for its batch to
	// fill (default 20 ms).
	Batch int
	Flush time.Duration
	// ParseSpec turns a submitted spec (file name for messages, TOML text)
	// and the manifests of the outside programs it may name into a
	// checked Plan; submit requests over NATS fail without it.
	ParseSpec func(file, source string, solvers []wire.ManifestText) (*spec.Plan, error)
	// OnStored, if set, is called after each batch of outcomes is stored.
	OnStored func([]job.Outcome)
	Log      hclog.Logger
	// Bounds are what a result may hold (zero: job.DefaultBounds);
	// Reports bound the worker reports (zero: wire.DefaultReportBounds).
	Bounds  job.Bounds
	Reports wire.ReportBounds
	// Reconcile is how often the coordinator looks for jobs that have
	// neither a message in the jobs stream nor an outcome and queues them
	// again (default 1 min; negative: never). ReconcileMax bounds the jobs
	// queued again per round (default 10,000).
	Reconcile    time.Duration
	ReconcileMax int
}

// Coordinator owns the sweeps of one store: it publishes their jobs,
// collects outcomes into the store (and only then acks them), records jobs
// that ran out of deliveries as failed, and answers the API requests of the
// client commands.
type Coordinator struct {
	nc     *nats.Conn
	js     jetstream.JetStream
	db     *store.DB
	cfg    Config
	log    hclog.Logger
	jobs   jetstream.Stream
	outs   jetstream.Stream // the results stream
	kv     jetstream.KeyValue
	fields jetstream.ObjectStore
	reg    *registry

	refused atomic.Int64    // result messages refused since the start
	missing map[string]bool // jobs with no message and no outcome at the last reconcile (reconcile's own)

	ready chan struct{} // closed once Run answers on every subject

	mu      sync.Mutex
	gen     uint64 // store writes so far
	tallies map[string]tally
	progJob map[string]map[string][]string // sweep -> "NAME@VERSION" -> its jobs of that program; see waiting
}

type tally struct {
	t   store.Tally
	gen uint64
	at  time.Time
}

// New creates the streams, consumers and buckets (EnsureStreams) and
// returns a coordinator writing to db. Run starts it.
func New(ctx context.Context, nc *nats.Conn, db *store.DB, cfg Config) (*Coordinator, error) {
	if cfg.Batch <= 0 {
		cfg.Batch = 512
	}
	if cfg.Flush <= 0 {
		cfg.Flush = 20 * time.Millisecond
	}
	if cfg.Log == nil {
		cfg.Log = hclog.NewNullLogger()
	}
	cfg.Delivery = cfg.Delivery.withDefaults()
	if cfg.Bounds == (job.Bounds{}) {
		cfg.Bounds = job.DefaultBounds()
	}
	if err := cfg.Bounds.Valid(); err != nil {
		return nil, err
	}
	if cfg.Reports == (wire.ReportBounds{}) {
		cfg.Reports = wire.DefaultReportBounds()
	}
	if cfg.Reconcile == 0 {
		cfg.Reconcile = time.Minute
	}
	if cfg.ReconcileMax <= 0 {
		cfg.ReconcileMax = 10000
	}
	js, err := jetstream.New(nc, jetstream.WithPublishAsyncMaxPending(4096))
	if err != nil {
		return nil, fmt.Errorf("jetstream: %w", err)
	}
	if err := EnsureStreams(ctx, js, cfg.Names, cfg.Delivery); err != nil {
		return nil, err
	}
	c := &Coordinator{nc: nc, js: js, db: db, cfg: cfg, log: cfg.Log, reg: newRegistry(cfg.Reports), tallies: map[string]tally{},
		ready: make(chan struct{}), missing: map[string]bool{}}
	if c.outs, err = js.Stream(ctx, cfg.Names.ResultStream()); err != nil {
		return nil, fmt.Errorf("stream %s: %w", cfg.Names.ResultStream(), err)
	}
	if c.jobs, err = js.Stream(ctx, cfg.Names.JobStream()); err != nil {
		return nil, fmt.Errorf("stream %s: %w", cfg.Names.JobStream(), err)
	}
	if c.kv, err = js.KeyValue(ctx, cfg.Names.CancelBucket()); err != nil {
		return nil, fmt.Errorf("bucket %s: %w", cfg.Names.CancelBucket(), err)
	}
	if c.fields, err = js.ObjectStore(ctx, cfg.Names.FieldBucket()); err != nil {
		return nil, fmt.Errorf("object store %s: %w", cfg.Names.FieldBucket(), err)
	}
	if err := c.syncCanceled(ctx); err != nil {
		return nil, err
	}
	return c, nil
}

// syncCanceled puts the cancel marks of the store into the bucket (a cancel
// done with no coordinator running is recorded only in the store).
func (c *Coordinator) syncCanceled(ctx context.Context) error {
	recs, err := c.db.Sweeps()
	if err != nil {
		return err
	}
	for _, r := range recs {
		if !r.Canceled {
			continue
		}
		if err := c.markCanceled(ctx, r.Name); err != nil {
			return err
		}
	}
	return nil
}

// Ready is closed once Run has subscribed to every subject: from then on
// commands get answers (submit, status, ping).
func (c *Coordinator) Ready() <-chan struct{} { return c.ready }

// Run collects outcomes, watches worker reports and delivery advisories
// and serves the API until ctx is done; then it stops taking outcomes,
// stores the batch in hand and returns.
func (c *Coordinator) Run(ctx context.Context) error {
	cons, err := c.js.Consumer(ctx, c.cfg.Names.ResultStream(), c.cfg.Names.CoordinatorConsumer())
	if err != nil {
		return fmt.Errorf("consumer %s: %w", c.cfg.Names.CoordinatorConsumer(), err)
	}
	in := make(chan jetstream.Msg, 4*c.cfg.Batch)
	cc, err := cons.Consume(func(m jetstream.Msg) { in <- m },
		jetstream.PullMaxMessages(2*c.cfg.Batch),
		// A pull lost with a cluster node is noticed after two missed
		// heartbeats (expiry/2 each): seconds, not the default minute.
		jetstream.PullExpiry(5*time.Second),
		jetstream.ConsumeErrHandler(func(_ jetstream.ConsumeContext, err error) {
			if !errors.Is(err, jetstream.ErrNoHeartbeat) {
				c.log.Debug("results consumer", "error", err)
			}
		}))
	if err != nil {
		return fmt.Errorf("consume results: %w", err)
	}
	var subs []*nats.Subscription
	sub := func(subject string, h nats.MsgHandler) error {
		s, err := c.nc.Subscribe(subject, h)
		if err != nil {
			return fmt.Errorf("subscribe %s: %w", subject, err)
		}
		// A flood on one subject (worker reports) is dropped beyond a few
		// megabytes instead of growing the coordinator's memory.
		s.SetPendingLimits(4096, 16<<20)
		subs = append(subs, s)
		return nil
	}
	// Every consumer of the jobs stream is a solver's workers' (fv2d's and
	// one per outside program and version).
	adv := fmt.Sprintf("$JS.EVENT.ADVISORY.CONSUMER.MAX_DELIVERIES.%s.*", c.cfg.Names.JobStream())
	for _, s := range []struct {
		subject string
		h       nats.MsgHandler
	}{
		{c.cfg.Names.WorkerFilter(), c.onReport},
		{c.cfg.Names.API(wire.VerbForget), c.onForget},
		{adv, func(m *nats.Msg) { c.onMaxDeliveries(ctx, m) }},
		{c.cfg.Names.API(wire.VerbPing), c.inboxOnly(func(m *nats.Msg) { m.Respond([]byte(c.db.Path())) })},
		{c.cfg.Names.API(wire.VerbStatus), c.inboxOnly(c.onStatus)},
		{c.cfg.Names.API(wire.VerbRows), c.inboxOnly(c.onRows)},
		{c.cfg.Names.API(wire.VerbSubmit), c.inboxOnly(func(m *nats.Msg) { c.onSubmit(ctx, m) })},
		{c.cfg.Names.API(wire.VerbCancel), c.inboxOnly(func(m *nats.Msg) { c.onCancel(ctx, m) })},
	} {
		if err := sub(s.subject, s.h); err != nil {
			cc.Stop()
			return err
		}
	}
	done := make(chan struct{})
	go func() {
		defer close(done)
		c.collect(in, ctx.Done())
	}()
	reconciled := make(chan struct{})
	go func() {
		defer close(reconciled)
		c.reconcileEvery(ctx)
	}()
	if err := c.nc.Flush(); err != nil { // the server now knows every subscription
		c.log.Warn("flush after subscribing", "error", err)
	}
	close(c.ready)
	<-ctx.Done()
	for _, s := range subs {
		s.Unsubscribe()
	}
	cc.Stop()
	<-done
	<-reconciled
	// Outcomes that arrived after the stop stay unacked and come again.
	for {
		select {
		case m := <-in:
			m.Nak()
		default:
			return nil
		}
	}
}

// collect gathers outcomes into batches of at most Batch, each written
// within Flush of its first outcome.
func (c *Coordinator) collect(in <-chan jetstream.Msg, stop <-chan struct{}) {
	batch := make([]jetstream.Msg, 0, c.cfg.Batch)
	timer := time.NewTimer(time.Hour)
	timer.Stop()
	flush := func() {
		if len(batch) > 0 {
			c.store(batch)
			batch = batch[:0]
		}
	}
	for {
		select {
		case m := <-in:
			if len(batch) == 0 {
				timer.Reset(c.cfg.Flush)
			}
			batch = append(batch, m)
			if len(batch) >= c.cfg.Batch {
				timer.Stop()
				flush()
			}
		case <-timer.C:
			flush()
		case <-stop:
			timer.Stop()
			flush()
			return
		}
	}
}

// store writes one batch of result messages in one transaction and acks
// them. A result is stored only when it belongs to a delivery (checkBatch);
// others are terminated and counted. A failed write naks the whole batch
// so that it comes again.
func (c *Coordinator) store(msgs []jetstream.Msg) {
	outs, keep, err := c.checkBatch(msgs)
	if err != nil {
		c.nakAll(msgs, "reading the store", err)
		return
	}
	if len(outs) == 0 {
		return
	}
	extra := c.extensions(outs) // grids added where the order has not settled
	written, err := c.db.PutOutcomes(outs)
	if err != nil {
		c.nakAll(keep, "storing results", err)
		return
	}
	c.mu.Lock()
	c.gen++
	c.mu.Unlock()
	for _, m := range keep {
		m.Ack()
	}
	c.log.Debug("stored results", "batch", len(outs), "written", written)
	if c.cfg.OnStored != nil {
		c.cfg.OnStored(outs)
	}
	c.publishExtra(extra)
}

// nakAll gives a batch back to come again after a failed store call.
func (c *Coordinator) nakAll(msgs []jetstream.Msg, what string, err error) {
	c.log.Error(what+"; the results will come again", "count", len(msgs), "error", err)
	for _, m := range msgs {
		m.NakWithDelay(time.Second)
	}
}

// onReport records a worker's report.
func (c *Coordinator) onReport(m *nats.Msg) {
	r, err := wire.DecodeWorkerReport(m.Data, c.cfg.Reports)
	if err == nil && m.Subject != c.cfg.Names.WorkerSubject(r.ID) {
		err = fmt.Errorf("report of %s on subject %s", r.ID, m.Subject)
	}
	if err != nil {
		c.log.Warn("dropping worker report", "subject", m.Subject, "error", err)
		return
	}
	if r.Leaving {
		c.log.Info("worker left", "worker", r.ID, "done", r.Done, "failed", r.Failed)
	}
	if why := c.reg.update(r, time.Now()); why != "" {
		c.log.Debug("dropping worker report", "worker", r.ID, "reason", why)
	}
}

// maxDeliveries is the part of the server's max-deliveries advisory used.
type maxDeliveries struct {
	StreamSeq  uint64 `json:"stream_seq"`
	Deliveries uint64 `json:"deliveries"`
}

// onMaxDeliveries records a job that ran out of deliveries without any
// result as failed, and removes it from the queue. The coordinator cannot
// tell why no result came: each worker may have been lost, hung or killed,
// or given the job back (a nak); the reason says only what happened.
func (c *Coordinator) onMaxDeliveries(ctx context.Context, m *nats.Msg) {
	var a maxDeliveries
	if err := json.Unmarshal(m.Data, &a); err != nil || a.StreamSeq == 0 {
		c.log.Warn("bad max-deliveries advisory", "error", err)
		return
	}
	raw, err := c.jobs.GetMsg(ctx, a.StreamSeq)
	if err != nil {
		c.log.Debug("max-deliveries: job already gone", "seq", a.StreamSeq, "error", err)
		return
	}
	jb, err := job.DecodeMessage(raw.Data)
	if err != nil {
		c.log.Warn("max-deliveries: malformed job removed", "seq", a.StreamSeq, "error", err)
		c.jobs.DeleteMsg(ctx, a.StreamSeq)
		return
	}
	// Acks lost while a cluster elects a new consumer leader run a job
	// again and again although its outcome is on its way: not a failure.
	_, perr := c.outs.GetLastMsgForSubject(ctx, c.cfg.Names.ResultSubject(jb.Sweep, jb.ID))
	if perr != nil && !errors.Is(perr, jetstream.ErrMsgNotFound) {
		c.log.Debug("max-deliveries: looking for a queued outcome", "job", jb.ID, "error", perr)
	}
	if perr == nil {
		c.log.Info("delivery limit reached, but an outcome is queued: not failed", "job", jb.ID, "deliveries", a.Deliveries)
	} else if _, found, err := c.db.Outcome(jb.ID); err == nil && !found {
		o := job.Outcome{
			JobID: jb.ID, Sweep: jb.Sweep, Status: job.StatusFailed, Attempts: int(a.Deliveries),
			Error: fmt.Sprintf("delivered %d times, no result (each delivery was given back, or not answered within the ack wait of %v)",
				a.Deliveries, c.cfg.Delivery.AckWait),
		}
		if _, err := c.db.PutOutcomes([]job.Outcome{o}); err != nil {
			c.log.Error("max-deliveries: storing failure", "job", jb.ID, "error", err)
			return
		}
		c.mu.Lock()
		c.gen++
		c.mu.Unlock()
		c.log.Warn("job failed: delivery limit reached", "job", jb.ID, "sweep", jb.Sweep, "deliveries", a.Deliveries)
		if c.cfg.OnStored != nil {
			c.cfg.OnStored([]job.Outcome{o})
		}
	}
	if err := c.jobs.DeleteMsg(ctx, a.StreamSeq); err != nil {
		c.log.Debug("max-deliveries: removing job", "seq", a.StreamSeq, "error", err)
	}
}

// Workers returns the reports of the live workers.
func (c *Coordinator) Workers() []wire.WorkerReport { return c.reg.live(time.Now()) }
