package faults

import (
	"context"
	"errors"
	"strings"
	"testing"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"fvsweep/coordinator/client"
	"fvsweep/coordinator/server"
	"fvsweep/coordinator/server/probe"
	"fvsweep/sweep/wire"
)

// TestRightsMatrixCluster tries every action with every role's user on the
// three nodes of deploy/nats, run as fvsweep node processes, and expects
// exactly the matrix of the embedded server (docs/access.md): the users
// and rights of common.conf are the deployed ones.
func TestRightsMatrixCluster(t *testing.T) {
	if testing.Short() {
		t.Skip("starts a three-node cluster")
	}
	r := newRig(t, clusterEnv...)
	_, url := r.cluster()
	secrets := map[wire.Role]client.DialOptions{}
	for _, kv := range clusterEnv {
		name, val, _ := strings.Cut(kv, "=")
		for _, role := range wire.Roles {
			if name == server.SecretEnv(role) {
				secrets[role] = client.DialOptions{User: string(role), Token: val}
			}
		}
	}
	if len(secrets) != len(wire.Roles) {
		t.Fatalf("clusterEnv has secrets for %d roles, want %d", len(secrets), len(wire.Roles))
	}
	waitLeader(t, url, secrets[wire.RoleOperator])
	ctx, cancel := context.WithTimeout(context.Background(), 2*time.Minute)
	defer cancel()
	m, err := probe.Run(ctx, probe.Target{URL: url, Secrets: secrets, Timeout: 5 * time.Second})
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("rights matrix on the deploy/nats cluster:\n%s", m.Markdown())
	for _, c := range m.Unexpected() {
		t.Errorf("%s as %s: %s, want %s (%s)", c.Action, c.Role, c.Got, c.Want, c.Detail)
	}
}

// waitLeader waits until the cluster answers JetStream requests of the
// operator (it elects a metadata leader first).
func waitLeader(t *testing.T, url string, o client.DialOptions) {
	t.Helper()
	o.URL, o.Role, o.Name = url, wire.RoleOperator, "leader wait"
	nc, err := client.Dial(o)
	if err != nil {
		t.Fatal(err)
	}
	defer nc.Close()
	js, _ := jetstream.New(nc)
	deadline := time.Now().Add(30 * time.Second)
	for {
		ctx, cancel := context.WithTimeout(context.Background(), time.Second)
		_, err := js.Stream(ctx, wire.Names{}.JobStream())
		cancel()
		if err == nil || errors.Is(err, jetstream.ErrStreamNotFound) {
			return
		}
		if time.Now().After(deadline) {
			t.Fatalf("no JetStream leader after 30 s: %v", err)
		}
	}
}
