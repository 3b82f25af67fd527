package server

import (
	"context"
	"fmt"
	"os"
	"time"

	"fvsweep/coordinator/client"
)

// ReadStoredField reads the field snapshot ref from the JetStream files in
// dir (DATA/nats) when no server runs on them: it starts an embedded
// server there on a free loopback port, reads the object in process and
// shuts the server down. It must not be used while another server uses
// dir.
func ReadStoredField(dir, ref string) ([]byte, error) {
	if st, err := os.Stat(dir); err != nil || !st.IsDir() {
		return nil, fmt.Errorf("snapshot %s: no NATS files at %s (see --data, or give --nats)", ref, dir)
	}
	srv, err := Start(Options{Dir: dir, Name: "fvsweep-reader"})
	if err != nil {
		return nil, fmt.Errorf("snapshot %s: %w", ref, err)
	}
	defer func() {
		srv.Shutdown()
		srv.WaitForShutdown()
	}()
	nc, err := client.Dial(client.DialOptions{InProcess: srv, Name: "fvsweep snapshot reader"})
	if err != nil {
		return nil, fmt.Errorf("snapshot %s: %w", ref, err)
	}
	defer nc.Close()
	ctx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
	defer cancel()
	return client.FetchField(ctx, nc, ref)
}
