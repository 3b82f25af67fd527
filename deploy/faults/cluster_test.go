package faults

import (
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/nats-io/nats.go"

	"fvsweep/deploy"
	"fvsweep/sweep/wire"
)

// shortJobs is 60 jobs of 10 to 250 ms: a sweep of a few seconds on two
// single-slot workers.
const shortJobs = `name = "short-jobs"
[[study]]
case = "density-wave"
fixed = { t_end = 0.3 }
cross = { limiter = ["minmod", "vanleer", "mc", "superbee"], flux = ["hll", "hllc", "rusanov", "roe", "exact"] }
refine = { nx = [48, 64, 96] }
`

// singleNode starts a NATS node of its own (no cluster) on port, with its
// file store in the rig's directory.
func (r *rig) singleNode(port int) (*proc, string) {
	r.t.Helper()
	conf := filepath.Join(r.dir, "single.conf")
	src := fmt.Sprintf("server_name: single\nlisten: 127.0.0.1:%d\njetstream { store_dir: %q }\n", port, filepath.Join(r.dir, "single-store"))
	if err := os.WriteFile(conf, []byte(src), 0o644); err != nil {
		r.t.Fatal(err)
	}
	p := r.start("node", "node", "--config", conf)
	p.waitOutput("clients on", 20*time.Second)
	return p, fmt.Sprintf("nats://127.0.0.1:%d", port)
}

// TestCoordinatorKilledAndRestarted: the coordinator (on a NATS node of
// its own) is SIGKILLed mid-sweep and restarted; outcomes sent meanwhile
// wait unacked in the stream, every job is stored exactly once.
func TestCoordinatorKilledAndRestarted(t *testing.T) {
	r := newRig(t)
	spec, name, ids := r.writeSpec(shortJobs)
	_, url := r.singleNode(freePort(t))
	coord := r.start("serve", r.serveArgs("--nats", url)...)
	coord.waitOutput("workers join with", 20*time.Second)
	obs := observe(t, url)
	r.submit(spec, url)
	r.worker("worker-a", url, 1)
	r.worker("worker-b", url, 1)
	if st := r.waitDone(name, url, len(ids)/4, 60*time.Second); st.Done >= len(ids) {
		t.Fatal("the sweep finished before the kill")
	}
	coord.kill()
	time.Sleep(time.Second) // workers go on; their outcomes queue up
	coord.run()
	coord.waitOutput("workers join with", 20*time.Second)
	r.waitDone(name, url, len(ids), 60*time.Second)
	coord.stop(20 * time.Second)
	f, _ := r.count(name, ids, coord, obs)
	wantClean(t, f)
}

// cluster starts the three nodes of deploy/nats (ports and directories
// moved to loopback) as fvsweep node processes, with route authentication.
func (r *rig) cluster() ([]*proc, string) {
	r.t.Helper()
	var nodes [3]deploy.Node
	for i := range nodes {
		nodes[i] = deploy.Node{Host: "127.0.0.1", ClientPort: freePort(r.t), ClusterPort: freePort(r.t),
			StoreDir: filepath.Join(r.dir, fmt.Sprintf("store-%d", i+1))}
	}
	confs, err := deploy.WriteNodeConfigs(deploy.NATSDir(), r.dir, nodes)
	if err != nil {
		r.t.Fatal(err)
	}
	var ps []*proc
	var urls []string
	for i, c := range confs {
		ps = append(ps, r.start(fmt.Sprintf("node-%d", i+1), "node", "--config", c))
		urls = append(urls, fmt.Sprintf("nats://127.0.0.1:%d", nodes[i].ClientPort))
	}
	for _, p := range ps {
		p.waitOutput("clients on", 20*time.Second)
	}
	return ps, strings.Join(urls, ",")
}

var clusterEnv = []string{
	"FVSWEEP_OPERATOR_TOKEN=c0ffee0123", "FVSWEEP_WORKER_TOKEN=beef4567", "FVSWEEP_ROUTE_TOKEN=r0ute89",
	"FVSWEEP_SUBMIT_TOKEN=5ubm1701", "FVSWEEP_READ_TOKEN=4ead8902",
}

// TestClusterLosesANode: three nodes from deploy/nats, streams with three
// replicas; one node is SIGKILLed mid-sweep; the sweep completes with
// every job stored exactly once.
func TestClusterLosesANode(t *testing.T) {
	r := newRig(t, clusterEnv...)
	spec, name, ids := r.writeSpec(shortJobs)
	nodes, url := r.cluster()
	coordEnv := []string{"FVSWEEP_USER=operator", "FVSWEEP_TOKEN=c0ffee0123"}
	r.env = append(clusterEnv, coordEnv...)
	var coord *proc
	deadline := time.Now().Add(30 * time.Second)
	for { // the cluster elects a metadata leader first
		// Ack wait x deliveries must outlast the cluster's recovery from a
		// lost node (leader elections: seconds on a loaded machine).
		coord = r.start("serve", r.serveArgs("--nats", url, "--replicas", "3", "--ack-wait", "2s", "--max-deliver", "10")...)
		if waitEither(coord, "workers join with", 10*time.Second) || time.Now().After(deadline) {
			break
		}
	}
	coord.waitOutput("workers join with", time.Second)
	obs := observe(t, url, nats.UserInfo("operator", "c0ffee0123"), nats.CustomInboxPrefix(wire.Names{}.Inbox(wire.RoleOperator)))
	r.submit(spec, url)
	r.env = append(clusterEnv, "FVSWEEP_USER=worker", "FVSWEEP_TOKEN=beef4567")
	r.worker("worker-a", url, 1)
	r.worker("worker-b", url, 1)
	r.env = append(clusterEnv, coordEnv...)
	if st := r.waitDone(name, url, len(ids)/3, 60*time.Second); st.Done >= len(ids) {
		t.Fatal("the sweep finished before the kill")
	}
	victim := nodes[rand.IntN(3)]
	victim.kill()
	t.Logf("killed %s mid-sweep", victim.name)
	r.waitDone(name, url, len(ids), 90*time.Second)
	coord.stop(20 * time.Second)
	f, _ := r.count(name, ids, coord, obs)
	wantClean(t, f)
}

// waitEither waits for substr in p's output and reports whether it came
// before p exited or d passed.
func waitEither(p *proc, substr string, d time.Duration) bool {
	deadline := time.Now().Add(d)
	for time.Now().Before(deadline) {
		out := p.output()
		if i := strings.LastIndex(out, "=== start"); i >= 0 && strings.Contains(out[i:], substr) {
			return true
		}
		if ok, _ := p.exited(); ok {
			time.Sleep(300 * time.Millisecond)
			return false
		}
		time.Sleep(20 * time.Millisecond)
	}
	return false
}
