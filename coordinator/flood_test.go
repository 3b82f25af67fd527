package coordinator_test

import (
	"context"
	"encoding/json"
	"fmt"
	"runtime"
	"strings"
	"testing"
	"time"

	"fvsweep/coordinator"
	"fvsweep/coordinator/client"
	"fvsweep/sweep/job"
	"fvsweep/sweep/wire"
)

// maxReport is a worker report of id as large as the bounds b allow: as
// many running jobs as a report may list, with sweep names padded until
// the message is just under the size bound.
func maxReport(t testing.TB, id string, b wire.ReportBounds) []byte {
	t.Helper()
	r := wire.WorkerReport{ID: id, Host: strings.Repeat("h", b.MaxText), Cores: b.MaxCurrent, Concurrency: b.MaxCurrent,
		Started: time.Now(), Sent: time.Now(), Every: b.MaxEvery}
	for i := 0; i < b.MaxCurrent; i++ {
		r.Current = append(r.Current, wire.RunningJob{JobID: job.NewID(fmt.Sprint(i)), Sweep: "s", Since: time.Now()})
	}
	data, _ := json.Marshal(r)
	pad := 1 + (b.MaxBytes-len(data))/len(r.Current) // bytes of sweep name per job that fit
	for i := range r.Current {
		r.Current[i].Sweep = strings.Repeat("s", min(pad, 2*b.MaxText))
	}
	data, _ = json.Marshal(r)
	if _, err := wire.DecodeWorkerReport(data, b); err != nil || len(data) < b.MaxBytes*9/10 {
		t.Fatalf("max report of %d bytes: %v", len(data), err)
	}
	return data
}

func heapMB() float64 {
	runtime.GC()
	var m runtime.MemStats
	runtime.ReadMemStats(&m)
	return float64(m.HeapAlloc) / (1 << 20)
}

// Issue 11 took a coordinator from 35 MB to 867 MB with 200 reports of
// 920 KB, and status then failed. Here one worker credential sends 1,000
// reports of the largest valid size as fast as it can, each from a new
// worker ID, then 1,000 from one ID, then 200 oversized ones: the Go heap
// of the whole process (coordinator, embedded server, clients) stays under
// 200 MB and status answers within 2 s, in parts under the maximum payload.
func TestReportFloodIsBounded(t *testing.T) {
	// Reports state the longest interval allowed, the worst case for
	// expiry; the test shortens that bound to 2 s to see them expire.
	b := wire.DefaultReportBounds()
	b.MaxEvery = 2 * time.Second
	r := newRig(t, testDelivery, func(c *coordinator.Config) { c.Reports = b })
	before := heapMB()
	nc, err := client.Dial(client.DialOptions{URL: r.url, Name: "flooding worker"})
	if err != nil {
		t.Fatal(err)
	}
	defer nc.Close()
	cl := client.New(r.nc, r.names)
	// status answers within 2 s; it returns the reply.
	status := func(when string) wire.StatusReply {
		t.Helper()
		start := time.Now()
		st, err := cl.Status(context.Background(), "")
		if took := time.Since(start); err != nil || took > 2*time.Second {
			t.Fatalf("status %s: %v after %v, want an answer within 2 s", when, err, took)
		}
		return st
	}
	send := func(subject string, data []byte) {
		t.Helper()
		if err := nc.Publish(subject, data); err != nil {
			t.Fatal(err)
		}
	}
	t0 := time.Now()
	for i := 0; i < 1000; i++ {
		id := fmt.Sprintf("flood-%04d", i)
		send(r.names.WorkerSubject(id), maxReport(t, id, b))
	}
	one := maxReport(t, "flood-one", b)
	for i := 0; i < 1000; i++ {
		send(r.names.WorkerSubject("flood-one"), one)
	}
	if err := nc.Flush(); err != nil {
		t.Fatal(err)
	}
	t.Logf("2,000 reports of %d bytes sent in %v", len(one), time.Since(t0))
	var st wire.StatusReply
	for deadline := time.Now().Add(b.MaxEvery); time.Now().Before(deadline); time.Sleep(50 * time.Millisecond) {
		if st = status("during the flood"); len(st.Workers) >= 1001 {
			break
		}
	}
	full := heapMB()
	t.Logf("heap %.0f MB before, %.0f MB with %d workers listed", before, full, len(st.Workers))
	if full > 200 {
		t.Errorf("Go heap %.0f MB after the flood, want under 200 MB", full)
	}
	for _, w := range st.Workers {
		if len(w.Current) > wire.StatusCurrentMax || len(w.Current)+w.CurrentMore != b.MaxCurrent {
			t.Fatalf("worker %s listed with %d running jobs and %d more, want %d of %d", w.ID, len(w.Current), w.CurrentMore,
				wire.StatusCurrentMax, b.MaxCurrent)
		}
	}
	if len(st.Workers) < 900 || len(st.Workers) > b.MaxWorkers {
		t.Errorf("%d workers listed: more than the bound, or the flood did not arrive", len(st.Workers))
	}
	// 200 reports of 920 KB, as in issue 11: dropped, and status still answers.
	huge := []byte(`{"id":"x","host":"` + strings.Repeat("h", 920<<10) + `"}`)
	for i := 0; i < 200; i++ {
		send(r.names.WorkerSubject("x"), huge)
	}
	nc.Flush()
	status("after 200 oversized reports")
	if h := heapMB(); h > 200 {
		t.Errorf("Go heap %.0f MB after the oversized reports, want under 200 MB", h)
	}
	// The workers expire: nothing keeps reporting.
	time.Sleep(3*b.MaxEvery + 500*time.Millisecond)
	if st := status("after the flood"); len(st.Workers) != 0 {
		t.Errorf("after the flood: %d workers still live", len(st.Workers))
	}
}
