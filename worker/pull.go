package worker

import (
	"context"
	"errors"
	"time"

	"github.com/nats-io/nats.go"
	"github.com/nats-io/nats.go/jetstream"
)

// holdFor is about how much work, at the mean run time so far, the
// prefetch buffer holds per slot.
const holdFor = 200 * time.Millisecond

// pull keeps the buffer filled until ctx is done, then closes it. It
// fetches when at least half of the room is free (or the buffer is empty
// and a slot is free), as many jobs as there is room for, from the
// consumers of the solvers the worker offers (one per solver): with one,
// a long poll of FetchWait; with several, first what each has at once,
// and when none has any, a long poll of FetchWait/k on each in turn.
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
		var avail []jetstream.Consumer
		for _, r := range w.routes {
			w.lookup(ctx, r)
			if r.cons != nil {
				avail = append(avail, r.cons)
			}
		}
		switch len(avail) {
		case 0:
			select {
			case <-ctx.Done():
			case <-time.After(w.cfg.FetchWait):
			}
		case 1:
			w.fetch(ctx, avail[0], n, w.cfg.FetchWait)
		default:
			got := 0
			for i := range avail {
				if got >= n {
					break
				}
				got += w.fetch(ctx, avail[(w.rot+i)%len(avail)], n-got, 0)
			}
			if got == 0 {
				w.fetch(ctx, avail[w.rot%len(avail)], n, w.cfg.FetchWait/time.Duration(len(avail)))
			}
			w.rot++
		}
	}
}

// fetch moves up to n jobs of cons into the buffer, waiting up to wait for
// them (0: only those there now), and returns how many came.
func (w *Worker) fetch(ctx context.Context, cons jetstream.Consumer, n int, wait time.Duration) int {
	// The fetch ends with ctx: the server delivers nothing more to a
	// request whose inbox has gone, so a drain takes no new jobs.
	var batch jetstream.MessageBatch
	var err error
	cancel := func() {}
	if wait > 0 {
		var fctx context.Context
		fctx, cancel = context.WithTimeout(ctx, wait)
		batch, err = cons.Fetch(n, jetstream.FetchContext(fctx))
	} else {
		batch, err = cons.FetchNoWait(n)
	}
	defer cancel()
	if err != nil {
		w.log.Warn("fetching jobs", "error", err)
		select {
		case <-ctx.Done():
		case <-time.After(w.cfg.RetryDelay):
		}
		return 0
	}
	got := 0
	for m := range batch.Messages() {
		got++
		w.held.Add(1)
		w.mu.Lock()
		w.buffered[m] = time.Now()
		w.mu.Unlock()
		w.queue <- m // room() keeps it from blocking
	}
	if err := batch.Error(); err != nil && !errors.Is(err, nats.ErrTimeout) &&
		!errors.Is(err, context.DeadlineExceeded) && !errors.Is(err, context.Canceled) {
		w.log.Debug("fetch ended", "error", err)
	}
	return got
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
			w.giveBack(m)
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
