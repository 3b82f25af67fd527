package coordinator

import (
	"context"
	"errors"
	"fmt"
	"fvsweep/sweep/wire"
	"time"

	"github.com/nats-io/nats.go/jetstream"
)

// Delivery tunes the work-queue consumer that all workers share.
type Delivery struct {
	// AckWait is how long a delivered job may go without an ack or an
	// in-progress heartbeat before it is delivered again. Workers send a
	// heartbeat every AckWait/3. Default 30 s.
	AckWait time.Duration
	// MaxDeliver bounds the deliveries of one job; after the last one the job
	// is recorded as failed with its last error. Default 3.
	MaxDeliver int
	// DupWindow is the window in which a job or result published twice under
	// the same message ID is stored once. Default 10 min.
	DupWindow time.Duration
	// Replicas is the replica count of every stream and bucket (1 on a single
	// server, up to the cluster size). Default 1.
	Replicas int
	// JobBytes and ResultBytes bound the bytes the jobs and the results
	// streams hold (defaults 1 GiB each: a million jobs of typical size);
	// a publish beyond is refused. FieldBytes bounds the snapshot object
	// store (default 16 GiB).
	JobBytes, ResultBytes, FieldBytes int64
}

// Default stream and bucket sizes; see Delivery.
const (
	DefaultJobBytes    = 1 << 30
	DefaultResultBytes = 1 << 30
	DefaultFieldBytes  = 16 << 30
)

func (d Delivery) withDefaults() Delivery {
	if d.AckWait <= 0 {
		d.AckWait = 30 * time.Second
	}
	if d.MaxDeliver <= 0 {
		d.MaxDeliver = 3
	}
	if d.DupWindow <= 0 {
		d.DupWindow = 10 * time.Minute
	}
	if d.Replicas <= 0 {
		d.Replicas = 1
	}
	if d.JobBytes <= 0 {
		d.JobBytes = DefaultJobBytes
	}
	if d.ResultBytes <= 0 {
		d.ResultBytes = DefaultResultBytes
	}
	if d.FieldBytes <= 0 {
		d.FieldBytes = DefaultFieldBytes
	}
	return d
}

// EnsureStreams creates or updates the jobs and results streams, the worker
// and coordinator consumers, the cancel bucket and the field object store.
//
// The jobs stream is a work queue with one message per subject: a job that
// is already queued or running cannot be queued a second time (the publish
// is refused), whatever the duplicate window. Jobs are delivered in the order
// they were published.
func EnsureStreams(ctx context.Context, js jetstream.JetStream, n wire.Names, d Delivery) error {
	// A cluster that has just elected its meta leader may not yet count
	// every peer as online: placing a replicated stream then fails with "no
	// suitable peers" for a moment. Try again for a while before giving up.
	deadline := time.Now().Add(20 * time.Second)
	for {
		err := ensureStreams(ctx, js, n, d)
		var apiErr *jetstream.APIError
		if err == nil || !errors.As(err, &apiErr) || apiErr.ErrorCode != errClusterNoPeers || time.Now().After(deadline) {
			return err
		}
		select {
		case <-ctx.Done():
			return err
		case <-time.After(250 * time.Millisecond):
		}
	}
}

// errClusterNoPeers is the server's JSClusterNoPeersErr ("no suitable peers
// for placement"), which nats.go has no name for.
const errClusterNoPeers jetstream.ErrorCode = 10005

func ensureStreams(ctx context.Context, js jetstream.JetStream, n wire.Names, d Delivery) error {
	d = d.withDefaults()
	_, err := js.CreateOrUpdateStream(ctx, jetstream.StreamConfig{
		Name:                 n.JobStream(),
		Description:          "fvsweep jobs, one message per job subject",
		Subjects:             []string{n.JobFilter("")},
		Retention:            jetstream.WorkQueuePolicy,
		Storage:              jetstream.FileStorage,
		Discard:              jetstream.DiscardNew,
		MaxMsgsPerSubject:    1,
		DiscardNewPerSubject: true,
		Duplicates:           d.DupWindow,
		MaxMsgSize:           wire.MaxMessage,
		MaxBytes:             d.JobBytes,
		Replicas:             d.Replicas,
	})
	if err != nil {
		return fmt.Errorf("stream %s: %w", n.JobStream(), err)
	}
	_, err = js.CreateOrUpdateStream(ctx, jetstream.StreamConfig{
		Name:        n.ResultStream(),
		Description: "fvsweep job outcomes, removed once stored",
		Subjects:    []string{n.ResultFilter()},
		Retention:   jetstream.WorkQueuePolicy,
		Storage:     jetstream.FileStorage,
		// Full, it refuses new outcomes (their workers retry) rather than
		// dropping stored ones.
		Discard:    jetstream.DiscardNew,
		Duplicates: d.DupWindow,
		MaxMsgSize: wire.MaxMessage,
		MaxBytes:   d.ResultBytes,
		Replicas:   d.Replicas,
	})
	if err != nil {
		return fmt.Errorf("stream %s: %w", n.ResultStream(), err)
	}
	if err := EnsureRoute(ctx, js, n, "", "fv2d", d); err != nil {
		return err
	}
	_, err = js.CreateOrUpdateConsumer(ctx, n.ResultStream(), jetstream.ConsumerConfig{
		Durable:     n.CoordinatorConsumer(),
		Description: "fvsweep coordinator: outcomes to the store",
		AckPolicy:   jetstream.AckExplicitPolicy,
		// Outcomes a killed coordinator held come back after this; a batch
		// that takes longer to store comes again as duplicates, no-ops.
		AckWait:       d.AckWait,
		MaxDeliver:    -1,
		MaxAckPending: 20000,
		Replicas:      d.Replicas,
	})
	if err != nil {
		return fmt.Errorf("consumer %s: %w", n.CoordinatorConsumer(), err)
	}
	_, err = js.CreateOrUpdateKeyValue(ctx, jetstream.KeyValueConfig{
		Bucket:      n.CancelBucket(),
		Description: "fvsweep canceled sweeps",
		Storage:     jetstream.FileStorage,
		Replicas:    d.Replicas,
	})
	if err != nil {
		return fmt.Errorf("bucket %s: %w", n.CancelBucket(), err)
	}
	_, err = js.CreateOrUpdateObjectStore(ctx, jetstream.ObjectStoreConfig{
		Bucket:      n.FieldBucket(),
		Description: "fvsweep field snapshots (float32)",
		Storage:     jetstream.FileStorage,
		MaxBytes:    d.FieldBytes,
		Replicas:    d.Replicas,
	})
	if err != nil {
		return fmt.Errorf("object store %s: %w", n.FieldBucket(), err)
	}
	return nil
}

// EnsureRoute creates or updates the durable pull consumer of the jobs of
// route (wire.Route; "" for fv2d), which the workers offering that solver
// share; label names the solver ("NAME@VERSION") in its description.
//
// The consumers of the jobs stream filter disjoint subjects
// (wire.Names.RouteFilter), as a work-queue stream requires. The fv2d
// consumer of a store from before outside programs had no filter; it is
// updated in place to fv2d's, and its queued jobs, whose subjects have
// not changed, stay in it.
func EnsureRoute(ctx context.Context, js jetstream.JetStream, n wire.Names, route, label string, d Delivery) error {
	d = d.withDefaults()
	_, err := js.CreateOrUpdateConsumer(ctx, n.JobStream(), jetstream.ConsumerConfig{
		Durable:       n.RouteConsumer(route),
		Description:   "fvsweep workers offering " + label,
		FilterSubject: n.RouteFilter(route),
		AckPolicy:     jetstream.AckExplicitPolicy,
		AckWait:       d.AckWait,
		MaxDeliver:    d.MaxDeliver,
		MaxAckPending: 100000,
		MaxWaiting:    4096,
		Replicas:      d.Replicas,
	})
	if err != nil {
		return fmt.Errorf("consumer %s: %w", n.RouteConsumer(route), err)
	}
	return nil
}
