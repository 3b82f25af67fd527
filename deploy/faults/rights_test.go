package faults

import (
	"context"
	"strings"
	"testing"
	"time"

	"fvsweep/coordinator/client"
	"fvsweep/coordinator/server"
	"fvsweep/coordinator/server/probe"
	"fvsweep/deploy"
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
	o := secrets[wire.RoleOperator]
	o.URL, o.Role, o.Name = url, wire.RoleOperator, "leader wait"
	nc, err := client.Dial(o)
	if err != nil {
		t.Fatal(err)
	}
	defer nc.Close()
	if err := deploy.WaitJetStream(nc, 30*time.Second); err != nil {
		t.Fatal(err)
	}
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
