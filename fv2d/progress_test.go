package fv2d

import (
	"context"
	"math"
	"reflect"
	"sync/atomic"
	"testing"
	"time"
)

// A run with a progress holder reports t/t_end rising from 0 to exactly 1
// (the last step lands on t_end) and computes bit for bit what a run
// without one computes.
func TestRunProgress(t *testing.T) {
	v := resolve(t, "vortex", map[string]string{"nx": "48", "ny": "48", "t_end": "2"})
	plain, err := Run(context.Background(), v)
	if err != nil {
		t.Fatal(err)
	}
	var p atomic.Uint64
	p.Store(math.Float64bits(math.NaN()))
	stop := make(chan struct{})
	seen := make(chan []float64)
	go func() {
		var got []float64
		for {
			select {
			case <-stop:
				seen <- got
				return
			case <-time.After(200 * time.Microsecond):
				if f := math.Float64frombits(p.Load()); !math.IsNaN(f) {
					got = append(got, f)
				}
			}
		}
	}()
	res, err := Run(WithProgress(context.Background(), &p), v)
	close(stop)
	got := <-seen
	if err != nil {
		t.Fatal(err)
	}
	if f := math.Float64frombits(p.Load()); f != 1 {
		t.Errorf("progress at the end %v, want 1", f)
	}
	for i, f := range got {
		if !(f >= 0 && f <= 1) || i > 0 && f < got[i-1] { // 0 is stored at the start (WithProgress)
			t.Errorf("progress sample %d: %v after %v", i, f, got[max(0, i-1)])
		}
	}
	if !reflect.DeepEqual(plain.Final.U, res.Final.U) || !reflect.DeepEqual(plain.Errors, res.Errors) || plain.Steps != res.Steps {
		t.Error("a run with progress differs from one without")
	}
}
