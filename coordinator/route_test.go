package coordinator_test

import (
	"context"
	"path/filepath"
	"testing"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"fvsweep/coordinator"
	"fvsweep/coordinator/client"
	"fvsweep/coordinator/server"
	"fvsweep/sweep/wire"
)

// A store's jobs stream from before outside programs (one consumer
// "workers" without a filter, fv2d jobs queued) takes the routes: the
// consumer is updated in place to fv2d's filter with its queued job, and a
// program's consumer can then share the work-queue stream.
func TestRoutesOnAnOldStream(t *testing.T) {
	srv, err := server.Start(server.Options{Dir: filepath.Join(t.TempDir(), "nats")})
	if err != nil {
		t.Fatal(err)
	}
	defer srv.Shutdown()
	nc, err := client.Dial(client.DialOptions{URL: srv.ClientURL(), Name: "test"})
	if err != nil {
		t.Fatal(err)
	}
	defer nc.Close()
	js, _ := jetstream.New(nc)
	ctx := context.Background()
	n := wire.Names{}
	if _, err := js.CreateStream(ctx, jetstream.StreamConfig{Name: n.JobStream(), Subjects: []string{n.JobFilter("")},
		Retention: jetstream.WorkQueuePolicy, MaxMsgsPerSubject: 1, DiscardNewPerSubject: true, Discard: jetstream.DiscardNew}); err != nil {
		t.Fatal(err)
	}
	// The consumer as EnsureStreams made it before routes.
	if _, err := js.CreateConsumer(ctx, n.JobStream(), jetstream.ConsumerConfig{Durable: n.WorkerConsumer(),
		Description: "fvsweep workers", AckPolicy: jetstream.AckExplicitPolicy, AckWait: 30 * time.Second, MaxDeliver: 3,
		MaxAckPending: 100000, MaxWaiting: 4096, Replicas: 1}); err != nil {
		t.Fatal(err)
	}
	if _, err := js.Publish(ctx, n.JobSubject("old", "0123456789abcdef0123456789abcdef"), []byte(`{}`)); err != nil {
		t.Fatal(err)
	}
	if err := coordinator.EnsureStreams(ctx, js, n, coordinator.Delivery{}); err != nil {
		t.Fatal(err)
	}
	route := wire.Route("heron", "0.4.1")
	if err := coordinator.EnsureRoute(ctx, js, n, route, "heron@0.4.1", coordinator.Delivery{}); err != nil {
		t.Fatal(err)
	}
	if _, err := js.Publish(ctx, n.RouteSubject("new", route, "0123456789abcdef0123456789abcdef"), []byte(`{}`)); err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct{ name, filter string }{{n.WorkerConsumer(), "fvsweep.job.*.*"}, {n.RouteConsumer(route), "fvsweep.job.*." + route + ".*"}} {
		cons, err := js.Consumer(ctx, n.JobStream(), c.name)
		if err != nil {
			t.Fatal(err)
		}
		info, err := cons.Info(ctx)
		if err != nil || info.Config.FilterSubject != c.filter || info.NumPending != 1 {
			t.Fatalf("consumer %s: filter %q, %d pending, %v; want %q and its one job", c.name, info.Config.FilterSubject, info.NumPending, err, c.filter)
		}
	}
}
