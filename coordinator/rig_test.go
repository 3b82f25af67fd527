package coordinator_test

import (
	"context"
	"os"
	"path/filepath"
	"sync"
	"testing"
	"time"

	"github.com/hashicorp/go-hclog"
	natsserver "github.com/nats-io/nats-server/v2/server"
	"github.com/nats-io/nats.go"

	"fvsweep/coordinator"
	"fvsweep/coordinator/client"
	"fvsweep/coordinator/server"
	"fvsweep/store"
	"fvsweep/sweep/job"
	"fvsweep/sweep/spec"
	"fvsweep/sweep/wire"
	"fvsweep/worker"
)

// rig is an embedded server on a random port, a store in a temporary
// directory, a running coordinator and any number of workers.
type rig struct {
	t     testing.TB
	dir   string
	srv   *natsserver.Server
	url   string
	nc    *nats.Conn
	db    *store.DB
	coord *coordinator.Coordinator
	names wire.Names

	stop    context.CancelFunc
	wg      sync.WaitGroup
	workers []*worker.Worker
	wstop   []context.CancelFunc
}

// testDelivery is short enough that redeliveries happen within a test.
var testDelivery = coordinator.Delivery{AckWait: time.Second, MaxDeliver: 2}

func newRig(t testing.TB, d coordinator.Delivery, tune ...func(*coordinator.Config)) *rig {
	t.Helper()
	srv, err := server.Start(server.Options{Dir: filepath.Join(t.TempDir(), "nats")})
	if err != nil {
		t.Fatal(err)
	}
	r := newRigAt(t, srv.ClientURL(), d, tune...)
	r.srv = srv
	return r
}

// newRigAt is a rig whose coordinator uses the NATS server at url (no
// workers can be added unless r.srv is set).
func newRigAt(t testing.TB, url string, d coordinator.Delivery, tune ...func(*coordinator.Config)) *rig {
	t.Helper()
	r := &rig{t: t, dir: t.TempDir(), names: wire.Names{}, url: url}
	var err error
	r.nc, err = client.Dial(client.DialOptions{URL: url, Name: "test coordinator"})
	if err != nil {
		t.Fatal(err)
	}
	r.db, err = store.Open(filepath.Join(r.dir, "fvsweep.db"), store.Options{})
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	r.stop = cancel
	cfg := coordinator.Config{
		Names: r.names, Delivery: d, Log: testLog(t, "coordinator"),
		ParseSpec: func(file, src string, _ []wire.ManifestText) (*spec.Plan, error) {
			return spec.LoadSource(file, []byte(src), spec.DefaultLimits())
		},
	}
	for _, f := range tune {
		f(&cfg)
	}
	r.coord, err = coordinator.New(ctx, r.nc, r.db, cfg)
	if err != nil {
		t.Fatal(err)
	}
	r.wg.Add(1)
	go func() {
		defer r.wg.Done()
		if err := r.coord.Run(ctx); err != nil {
			t.Error(err)
		}
	}()
	t.Cleanup(r.close)
	select {
	case <-r.coord.Ready():
	case <-time.After(10 * time.Second):
		t.Fatal("coordinator not ready after 10 s")
	}
	return r
}

func testLog(t testing.TB, name string) hclog.Logger {
	level := hclog.Warn
	if os.Getenv("FVSWEEP_TEST_DEBUG") != "" {
		return hclog.New(&hclog.LoggerOptions{Name: name, Level: hclog.Debug, Output: testWriter{t}})
	}
	if testing.Verbose() {
		level = hclog.Info
	}
	return hclog.New(&hclog.LoggerOptions{Name: name, Level: level, Output: testWriter{t}})
}

type testWriter struct{ t testing.TB }

func (w testWriter) Write(p []byte) (int, error) { w.t.Log(string(p)); return len(p), nil }

// addWorker starts a worker with its own connection.
func (r *rig) addWorker(conc int, run worker.RunnerFunc, tweak ...func(*worker.Config)) *worker.Worker {
	r.t.Helper()
	nc, err := client.Dial(client.DialOptions{URL: r.url, Name: "test worker"})
	if err != nil {
		r.t.Fatal(err)
	}
	cfg := worker.Config{Names: r.names, Concurrency: conc, Runners: map[string]worker.Runner{job.BuiltinSolver: run}, RetryDelay: 20 * time.Millisecond,
		FetchWait: 200 * time.Millisecond, ReportEvery: 100 * time.Millisecond, Log: testLog(r.t, "worker")}
	for _, f := range tweak {
		f(&cfg)
	}
	ctx, cancel := context.WithCancel(context.Background())
	w, err := worker.New(ctx, nc, cfg)
	if err != nil {
		r.t.Fatal(err)
	}
	r.workers = append(r.workers, w)
	r.wstop = append(r.wstop, cancel)
	r.wg.Add(1)
	go func() {
		defer r.wg.Done()
		defer nc.Close()
		if err := w.Run(ctx); err != nil {
			r.t.Error(err)
		}
	}()
	return w
}

func (r *rig) close() {
	for _, c := range r.wstop {
		c()
	}
	r.stop()
	r.wg.Wait()
	r.nc.Close()
	r.db.Close()
	if r.srv != nil {
		r.srv.Shutdown()
		r.srv.WaitForShutdown()
	}
}

func (r *rig) spec(src string) *spec.Plan {
	r.t.Helper()
	s, err := spec.LoadSource("test.toml", []byte(src), spec.DefaultLimits())
	if err != nil {
		r.t.Fatal(err)
	}
	return s
}

func (r *rig) submit(src string) wire.SubmitReply {
	r.t.Helper()
	rep, err := r.coord.Submit(context.Background(), r.spec(src), false)
	if err != nil {
		r.t.Fatal(err)
	}
	return rep
}

// wait polls the store until the sweep has n outcomes or the time is up.
func (r *rig) wait(name string, n int, within time.Duration) store.Tally {
	r.t.Helper()
	deadline := time.Now().Add(within)
	for {
		t, err := r.db.Count(name)
		if err != nil {
			r.t.Fatal(err)
		}
		if t.Done+t.Failed >= n {
			return t
		}
		if time.Now().After(deadline) {
			r.t.Fatalf("sweep %s: %d done + %d failed of %d after %v", name, t.Done, t.Failed, n, within)
		}
		time.Sleep(10 * time.Millisecond)
	}
}
