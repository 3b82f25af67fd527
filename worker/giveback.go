package worker

import (
	"context"
	"fmt"
	"time"

	"github.com/nats-io/nats.go/jetstream"
)

// giveBack returns a job this worker will not run (it is stopping) to the
// queue so that the next pull, here or in a process started right after,
// gets it at once.
//
// A plain -NAK only queues the message for redelivery in the server's
// memory; the stored delivery time stays, so a server that stops before
// redelivering (run's embedded one on Ctrl-C) delivers the job again only
// an ack wait after its last heartbeat. A -NAK with a delay rewrites that
// stored time to "expired, due after the delay" (JetStream's documented
// nak-with-delay acknowledgement), so a delay of 1 ns survives a restart.
// The nak is sent as a request, whose reply the server sends once it has
// applied the nak: the worker's caller may close the connection and the
// server right after. A job whose server does not answer comes back after
// the ack wait, as before.
func (w *Worker) giveBack(m jetstream.Msg) {
	if m.Reply() == "" {
		return
	}
	ctx, cancel := context.WithTimeout(context.Background(), 2*time.Second)
	defer cancel()
	body := fmt.Appendf(nil, `-NAK {"delay": %d}`, time.Nanosecond.Nanoseconds())
	if _, err := w.nc.RequestWithContext(ctx, m.Reply(), body); err != nil {
		w.log.Debug("returning a job to the queue", "subject", m.Subject(), "error", err)
		m.NakWithDelay(time.Nanosecond)
	}
}
