package deploy

import (
	"fmt"
	"os"
	"slices"
	"strings"
	"testing"

	"github.com/nats-io/nats-server/v2/server"
)

// loadNode parses nats/node-i.conf with the NATS server's own reader.
func loadNode(t *testing.T, i int) *server.Options {
	t.Helper()
	o, err := server.ProcessConfigFile(fmt.Sprintf("nats/node-%d.conf", i))
	if err != nil {
		t.Fatalf("node-%d.conf: %v", i, err)
	}
	return o
}

func setSecrets(t *testing.T) {
	t.Setenv("FVSWEEP_OPERATOR_TOKEN", "c0ffee01")
	t.Setenv("FVSWEEP_SUBMIT_TOKEN", "5ub0123")
	t.Setenv("FVSWEEP_READ_TOKEN", "4ead45")
	t.Setenv("FVSWEEP_WORKER_TOKEN", "deadbeef02")
}

// TestNodeConfigsFormOneCluster: three servers with distinct names, one
// cluster name, each routing to the other two, JetStream on a file store.
func TestNodeConfigsFormOneCluster(t *testing.T) {
	setSecrets(t)
	for i := 1; i <= 3; i++ {
		o := loadNode(t, i)
		if want := fmt.Sprintf("fvsweep-nats-%d", i); o.ServerName != want {
			t.Errorf("node %d: server_name %q, want %q", i, o.ServerName, want)
		}
		if o.Cluster.Name != "fvsweep" || o.Cluster.Port != 6222 || o.Port != 4222 {
			t.Errorf("node %d: cluster %q port %d, client port %d", i, o.Cluster.Name, o.Cluster.Port, o.Port)
		}
		var peers []string
		for _, r := range o.Routes {
			peers = append(peers, r.Host)
		}
		slices.Sort(peers)
		var want []string
		for j := 1; j <= 3; j++ {
			if j != i {
				want = append(want, fmt.Sprintf("fvsweep-nats-%d:6222", j))
			}
		}
		if !slices.Equal(peers, want) {
			t.Errorf("node %d routes to %v, want %v", i, peers, want)
		}
		if !o.JetStream || o.StoreDir != "/var/lib/fvsweep-nats" {
			t.Errorf("node %d: jetstream %v store %q", i, o.JetStream, o.StoreDir)
		}
	}
}

// TestNodeConfigRefusesMissingSecrets: without the token variables the
// server does not start (the configuration does not parse).
func TestNodeConfigRefusesMissingSecrets(t *testing.T) {
	for _, missing := range []string{"FVSWEEP_OPERATOR_TOKEN", "FVSWEEP_SUBMIT_TOKEN", "FVSWEEP_READ_TOKEN", "FVSWEEP_WORKER_TOKEN"} {
		setSecrets(t)
		os.Unsetenv(missing)
		_, err := server.ProcessConfigFile("nats/node-1.conf")
		if err == nil || !strings.Contains(err.Error(), missing) {
			t.Errorf("no %s: err %v, want one naming the variable", missing, err)
		}
	}
}
