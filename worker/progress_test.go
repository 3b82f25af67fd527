package worker_test

import (
	"context"
	"testing"
	"time"

	"github.com/nats-io/nats.go"

	"fvsweep/fv2d"
	"fvsweep/sweep/job"
	"fvsweep/sweep/wire"
	"fvsweep/worker"
)

// runningProgress subscribes to the worker's reports and sends, for each
// report that lists job id running, its progress (nil for none).
func (b *bench) runningProgress(id string) <-chan *float64 {
	b.t.Helper()
	ch := make(chan *float64, 64)
	sub, err := b.nc.Subscribe(b.names.WorkerSubject("test-worker"), func(m *nats.Msg) {
		r, err := wire.DecodeWorkerReport(m.Data, wire.DefaultReportBounds())
		if err != nil {
			b.t.Errorf("report refused: %v", err)
			return
		}
		for _, c := range r.Current {
			if c.JobID == id {
				select {
				case ch <- c.Progress:
				default:
				}
			}
		}
	})
	if err != nil {
		b.t.Fatal(err)
	}
	b.t.Cleanup(func() { sub.Unsubscribe() })
	return ch
}

// A worker's reports of a long fv2d job carry its t/t_end, between 0 and
// 1 and rising from report to report (none while the case is set up); a job of an outside program (a
// runner that tells nothing) is listed without progress.
func TestReportsShowProgress(t *testing.T) {
	b := newBench(t, true)
	params := map[string]string{"nx": "256", "ny": "256", "t_end": "10"}
	v, err := fv2d.Resolve("vortex", params)
	if err != nil {
		t.Fatal(err)
	}
	jb := job.Job{ID: job.NewID(v.String()), Sweep: "s", Case: "vortex", Params: params, Cost: 1}
	reports := b.runningProgress(jb.ID)
	w := b.start(map[string]worker.Runner{job.BuiltinSolver: worker.FV2D{}})
	t.Cleanup(w.Abort) // before the bench's stop, which would let the job finish
	b.publish(jb, b.names.SubjectOf(jb))
	var got []float64
	for deadline := time.After(20 * time.Second); len(got) < 2; {
		select {
		case p := <-reports:
			switch {
			case p != nil:
				got = append(got, *p)
			case len(got) > 0: // none only while the case is set up
				t.Fatalf("a report of the running fv2d job has no progress after %v", got)
			}
		case <-deadline:
			t.Fatalf("progress of %v in 20 s; want two reports", got)
		}
	}
	if !(got[0] >= 0 && got[1] > got[0] && got[1] < 1) {
		t.Errorf("progress %v: want rising within 0..1", got)
	}

	b2 := newBench(t, true)
	other := b2.submit("a", "other")
	reports = b2.runningProgress(other.ID)
	w = b2.start(map[string]worker.Runner{"other": worker.RunnerFunc(func(ctx context.Context, _ job.Job) (worker.Result, error) {
		<-ctx.Done()
		return worker.Result{}, ctx.Err()
	})})
	t.Cleanup(w.Abort)
	select {
	case p := <-reports:
		if p != nil {
			t.Errorf("outside program's job reported progress %v", *p)
		}
	case <-time.After(10 * time.Second):
		t.Fatal("no report of the outside program's job")
	}
}
