package coordinator_test

import (
	"context"
	"testing"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"fvsweep/sweep/wire"
)

// A request whose reply subject is not an inbox goes unanswered: a reader
// who names the JetStream API as the reply subject of a ping cannot make
// the coordinator delete the jobs stream, or publish into it; a request
// with an inbox is answered as before.
func TestRepliesOnlyToInboxes(t *testing.T) {
	r := newRig(t, testDelivery)
	js, err := jetstream.New(r.nc)
	if err != nil {
		t.Fatal(err)
	}
	n := r.names
	for _, reply := range []string{"$JS.API.STREAM.DELETE." + n.JobStream(), n.JobSubject("x", "0123456789abcdef0123456789abcdef")} {
		if err := r.nc.PublishRequest(n.API(wire.VerbPing), reply, nil); err != nil {
			t.Fatal(err)
		}
	}
	ctx, cancel := context.WithTimeout(context.Background(), 5*time.Second)
	defer cancel()
	// The request below is answered after the two above were handled
	// (one subscription handles its messages in order).
	if _, err := r.nc.RequestWithContext(ctx, n.API(wire.VerbPing), nil); err != nil {
		t.Fatalf("ping with an inbox: %v", err)
	}
	s, err := js.Stream(ctx, n.JobStream())
	if err != nil {
		t.Fatalf("jobs stream after a ping replying to its delete subject: %v", err)
	}
	if info, err := s.Info(ctx); err != nil || info.State.Msgs != 0 {
		t.Errorf("jobs stream: %+v, %v; want it empty (no reply published into it)", info, err)
	}
	if !wire.IsInbox("_INBOX.abc") || !wire.IsInbox(n.Inbox(wire.RoleReader)+".abc") || wire.IsInbox("_INBOXES.x") || wire.IsInbox("fvsweep.job.x.y") {
		t.Error("IsInbox misjudges a subject")
	}
}
