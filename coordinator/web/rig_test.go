package web_test

import (
	"context"
	"path/filepath"
	"sync"
	"testing"
	"time"

	"github.com/hashicorp/go-hclog"

	"fvsweep/coordinator"
	"fvsweep/coordinator/client"
	"fvsweep/coordinator/server"
	"fvsweep/store"
	"fvsweep/sweep/job"
	"fvsweep/sweep/spec"
	"fvsweep/sweep/wire"
	"fvsweep/worker"
)

// pageRig is what the page tests need running: an embedded NATS server, a
// store in a temporary directory, a coordinator and its workers.
type pageRig struct {
	t     *testing.T
	url   string
	db    *store.DB
	coord *coordinator.Coordinator
	names wire.Names
	wg    sync.WaitGroup
}

func newRig(t *testing.T) *pageRig {
	t.Helper()
	srv, err := server.Start(server.Options{Dir: filepath.Join(t.TempDir(), "nats")})
	if err != nil {
		t.Fatal(err)
	}
	r := &pageRig{t: t, url: srv.ClientURL(), names: wire.Names{}}
	nc, err := client.Dial(client.DialOptions{URL: r.url, Name: "test coordinator"})
	if err != nil {
		t.Fatal(err)
	}
	if r.db, err = store.Open(filepath.Join(t.TempDir(), "fvsweep.db"), store.Options{}); err != nil {
		t.Fatal(err)
	}
	ctx, stop := context.WithCancel(context.Background())
	r.coord, err = coordinator.New(ctx, nc, r.db, coordinator.Config{Names: r.names, Log: hclog.NewNullLogger(),
		Delivery: coordinator.Delivery{AckWait: time.Second, MaxDeliver: 2}})
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
	t.Cleanup(func() {
		stop()
		r.wg.Wait()
		nc.Close()
		r.db.Close()
		srv.Shutdown()
		srv.WaitForShutdown()
	})
	select {
	case <-r.coord.Ready():
	case <-time.After(10 * time.Second):
		t.Fatal("coordinator not ready after 10 s")
	}
	return r
}

// addWorker starts a worker running conc jobs at once with run; it stops
// with the test.
func (r *pageRig) addWorker(conc int, run worker.Runner) {
	r.t.Helper()
	nc, err := client.Dial(client.DialOptions{URL: r.url, Name: "test worker"})
	if err != nil {
		r.t.Fatal(err)
	}
	ctx, stop := context.WithCancel(context.Background())
	w, err := worker.New(ctx, nc, worker.Config{Names: r.names, Concurrency: conc, Runners: map[string]worker.Runner{job.BuiltinSolver: run}, RetryDelay: 20 * time.Millisecond,
		FetchWait: 200 * time.Millisecond, ReportEvery: 100 * time.Millisecond, Log: hclog.NewNullLogger()})
	if err != nil {
		r.t.Fatal(err)
	}
	done := make(chan struct{})
	go func() {
		defer close(done)
		defer nc.Close()
		if err := w.Run(ctx); err != nil {
			r.t.Error(err)
		}
	}()
	r.t.Cleanup(func() { stop(); <-done })
}

func (r *pageRig) submit(src string) {
	r.t.Helper()
	sp, err := spec.LoadSource("test.toml", []byte(src), spec.DefaultLimits())
	if err != nil {
		r.t.Fatal(err)
	}
	if _, err := r.coord.Submit(context.Background(), sp, false); err != nil {
		r.t.Fatal(err)
	}
}

// wait polls the store until the sweep has n outcomes or the time is up.
func (r *pageRig) wait(name string, n int, within time.Duration) {
	r.t.Helper()
	for deadline := time.Now().Add(within); ; time.Sleep(10 * time.Millisecond) {
		t, err := r.db.Count(name)
		if err != nil {
			r.t.Fatal(err)
		}
		if t.Done+t.Failed >= n {
			return
		}
		if time.Now().After(deadline) {
			r.t.Fatalf("sweep %s: %d done + %d failed of %d after %v", name, t.Done, t.Failed, n, within)
		}
	}
}
