package faults

import (
	"context"
	"errors"
	"fvsweep/sweep/job"
	"fvsweep/sweep/wire"
	"strings"
	"testing"
	"time"

	"github.com/nats-io/nats.go"
	"github.com/nats-io/nats.go/jetstream"
)

// TestHostileMessages publishes malformed and hostile messages on the job
// and result subjects of a running coordinator and worker: not JSON, the
// wrong schema, a job whose ID does not match its parameters, a job on
// another job's subject, results for no known job, a near-limit payload of
// garbage, and one over the limit. Both processes log and drop them and go
// on; a real sweep submitted afterwards is stored exactly once, and no
// message is left in either stream.
func TestHostileMessages(t *testing.T) {
	r := newRig(t)
	spec, name, ids := r.writeSpec(bigAndSmall)
	coord, url := r.serve(freePort(t))
	w := r.worker("worker-a", url, 2)
	nc, err := nats.Connect(url)
	if err != nil {
		t.Fatal(err)
	}
	defer nc.Close()
	js, err := jetstream.New(nc)
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
	defer cancel()
	n := wire.Names{}
	const id1, id2 = "00000000000000000000000000000001", "00000000000000000000000000000002"
	mismatched := job.Job{ID: id1, Sweep: "hostile", Case: "burgers-sine",
		Params: map[string]string{"nx": "16", "ny": "4", "t_end": "0.01"}, Cost: 1}
	unknownCase := job.Job{ID: id2, Sweep: "hostile", Case: "no-such-case", Params: map[string]string{"nx": "8"}, Cost: 1}
	garbage := strings.Repeat("\xff", wire.MaxMessage-4096)
	msgs := []struct {
		subject, data string
	}{
		{n.JobSubject("hostile", id1), "not json at all"},
		{n.JobSubject("hostile", id2), `{"job_id":"` + id2 + `","sweep":"hostile","case":"c","params":{},"extra":true}`},
		{n.JobSubject("hostile", id1), mustEncode(t, mismatched)},
		{n.JobSubject("hostile", "00000000000000000000000000000003"), mustEncode(t, mismatched)}, // another job's subject
		{n.JobSubject("hostile", id2), mustEncode(t, unknownCase)},
		{n.JobSubject("hostile", "00000000000000000000000000000004"), garbage},
		{n.ResultSubject("hostile", id1), "{{{"},
		{n.ResultSubject("hostile", id1), `{"job_id":"` + id1 + `","sweep":"hostile","status":"maybe"}`},
		{n.ResultSubject("hostile", id2), `{"job_id":"` + id2 + `","sweep":"hostile","status":"done","worker":"forger"}`},
		{n.ResultSubject("hostile", id2), garbage},
	}
	for _, m := range msgs {
		// One message per job subject: wait for the worker to take one
		// before the next lands on the same subject.
		for {
			_, err := js.Publish(ctx, m.subject, []byte(m.data))
			if err == nil {
				break
			}
			if ctx.Err() != nil {
				t.Fatalf("publishing to %s: %v", m.subject, err)
			}
			time.Sleep(50 * time.Millisecond)
		}
	}
	if _, err := js.Publish(ctx, n.JobSubject("hostile", id1), make([]byte, 2*wire.MaxMessage)); !errors.Is(err, nats.ErrMaxPayload) {
		t.Errorf("publishing 2 MiB: %v, want it refused as over the maximum payload", err)
	}
	r.submit(spec, url)
	r.waitDone(name, url, len(ids), 60*time.Second)
	for _, p := range []*proc{coord, w} {
		if ok, code := p.exited(); ok {
			t.Fatalf("%s exited (code %d) after the hostile messages", p.name, code)
		}
	}
	for _, s := range []string{n.JobStream(), n.ResultStream()} {
		deadline := time.Now().Add(10 * time.Second)
		for {
			st, err := js.Stream(ctx, s)
			if err != nil {
				t.Fatal(err)
			}
			if st.CachedInfo().State.Msgs == 0 {
				break
			}
			if time.Now().After(deadline) {
				t.Errorf("stream %s still holds %d messages", s, st.CachedInfo().State.Msgs)
				break
			}
			time.Sleep(100 * time.Millisecond)
		}
	}
	wlog, clog := w.output(), coord.output()
	if got := strings.Count(wlog, "dropping malformed job"); got < 4 {
		t.Errorf("worker logged %d malformed jobs, want at least 4 (not JSON, wrong schema, wrong subject, garbage):\n%s", got, tail(wlog, 3000))
	}
	if !strings.Contains(wlog, "its parameters give ID") || !strings.Contains(wlog, "no-such-case") {
		t.Errorf("worker did not report the mismatched ID and the unknown case:\n%s", tail(wlog, 3000))
	}
	if got := strings.Count(clog, "dropping result"); got < 5 {
		t.Errorf("coordinator logged %d dropped results, want at least 5", got)
	}
	coord.stop(20 * time.Second)
	f, _ := r.count(name, ids, coord, nil)
	wantClean(t, f)
}

func mustEncode(t *testing.T, j job.Job) string {
	b, err := job.Encode(j)
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}
