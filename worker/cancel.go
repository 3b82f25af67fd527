package worker

import (
	"context"
	"errors"
	"sync"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"fvsweep/sweep/wire"
)

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
