package deploy

import (
	"context"
	"errors"
	"fmt"
	"time"

	"github.com/nats-io/nats.go"
	"github.com/nats-io/nats.go/jetstream"

	"fvsweep/sweep/wire"
)

// WaitJetStream waits up to within until the cluster behind nc answers
// JetStream requests (it elects a metadata leader first; a request before
// that goes unanswered). It asks for the jobs stream of the default names,
// which the operator may (found or not), not for the account information.
func WaitJetStream(nc *nats.Conn, within time.Duration) error {
	js, err := jetstream.New(nc)
	if err != nil {
		return err
	}
	deadline := time.Now().Add(within)
	for {
		ctx, cancel := context.WithTimeout(context.Background(), time.Second)
		_, err := js.Stream(ctx, wire.Names{}.JobStream())
		cancel()
		if err == nil || errors.Is(err, jetstream.ErrStreamNotFound) {
			return nil
		}
		if time.Now().After(deadline) {
			return fmt.Errorf("no JetStream cluster after %v: %w", within, err)
		}
		time.Sleep(100 * time.Millisecond) // an error that comes back at once (a refusal) must not spin
	}
}
