package dockertest

import (
	"encoding/json"
	"fmt"
	"fvsweep/sweep/job"
	"fvsweep/sweep/spec"
	"fvsweep/sweep/wire"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

const clusterSpec = `name = "docker-cluster"
[[study]]
case = "density-wave"
fixed = { t_end = 0.5 }
cross = { limiter = ["minmod", "vanleer", "mc", "superbee"], flux = ["hll", "hllc", "rusanov", "roe", "exact"] }
refine = { nx = [48, 64, 96] }
`

var (
	nodeEnv   = []string{"FVSWEEP_OPERATOR_TOKEN=c0ffee0123", "FVSWEEP_WORKER_TOKEN=beef4567", "FVSWEEP_ROUTE_TOKEN=r0ute89", "FVSWEEP_SUBMIT_TOKEN=5ubm1701", "FVSWEEP_READ_TOKEN=4ead8902"}
	natsURLs  = "nats://fvsweep-nats-1:4222,nats://fvsweep-nats-2:4222,nats://fvsweep-nats-3:4222"
	coordEnv  = []string{"FVSWEEP_NATS=" + natsURLs, "FVSWEEP_USER=operator", "FVSWEEP_TOKEN=c0ffee0123"}
	workerEnv = []string{"FVSWEEP_NATS=" + natsURLs, "FVSWEEP_USER=worker", "FVSWEEP_TOKEN=beef4567"}
)

// TestDockerCluster runs the deployment as it is shipped: the three node
// files of deploy/nats unchanged (host names fvsweep-nats-1..3 on a private
// network), a coordinator with streams of three replicas and two workers,
// each in its own container, users and rights from deploy/nats. Mid-sweep
// one node is stopped and one worker is cut off the network (docker network
// disconnect) for twice the ack wait, then put back. The sweep completes
// with every job stored exactly once.
func TestDockerCluster(t *testing.T) {
	e := Require(t)
	dir := t.TempDir()
	specFile := filepath.Join(dir, "spec.toml")
	if err := os.WriteFile(specFile, []byte(clusterSpec), 0o644); err != nil {
		t.Fatal(err)
	}
	img := e.Fvsweep(t)
	n := e.NewNetwork(t)
	var nodes []*Container
	for i := 1; i <= 3; i++ {
		nodes = append(nodes, e.Start(t, img, Spec{Stem: fmt.Sprintf("nats-%d", i), Network: n,
			Aliases: []string{fmt.Sprintf("fvsweep-nats-%d", i)}, Env: nodeEnv,
			Args: []string{"node", "--config", fmt.Sprintf("%s/node-%d.conf", ConfigDir, i)}}))
	}
	// The coordinator fails while the cluster has no metadata leader yet;
	// docker restarts it, as systemd would.
	coord := e.Start(t, img, Spec{Stem: "coordinator", Network: n, Env: coordEnv, Restart: "on-failure",
		Args: []string{"serve", "--data", "/data", "--replicas", "3", "--ack-wait", "2s", "--log-level", "debug", "--log-json"}})
	coord.WaitLog("workers join with", 90*time.Second)
	coord.CopyIn(specFile, "/spec.toml")
	var workers []*Container
	for _, id := range []string{"worker-a", "worker-b"} {
		workers = append(workers, e.Start(t, img, Spec{Stem: id, Network: n, Env: workerEnv,
			Args: []string{"worker", "--id", id, "--slots", "1"}}))
	}
	for _, w := range workers {
		w.WaitLog("slots on", 60*time.Second)
	}
	out, code, err := coord.Exec(nil, "submit", "/spec.toml", "--data", "/data")
	if err != nil || code != 0 {
		t.Fatalf("submit: exit %d, %v: %s", code, err, out)
	}
	sp, err := spec.LoadSource("spec.toml", []byte(clusterSpec), spec.DefaultLimits())
	if err != nil {
		t.Fatal(err)
	}
	jobs, err := sp.Expand()
	if err != nil {
		t.Fatal(err)
	}
	total := len(jobs)

	if st := waitStored(t, coord, total/4, 120*time.Second); st.Done >= total {
		t.Fatal("the sweep finished before the faults")
	}
	nodes[1].Stop(2 * time.Second)
	t.Log("stopped node 2")
	workers[0].Disconnect(n)
	time.Sleep(4 * time.Second) // twice the ack wait
	workers[0].Connect(n)
	t.Log("worker-a cut off for 4 s, then reconnected")
	waitStored(t, coord, total, 180*time.Second)

	out, code, err = coord.Exec(nil, "export", sp.Name, "--format", "json", "--data", "/data")
	if err != nil || code != 0 {
		t.Fatalf("export: exit %d, %v: %s", code, err, out)
	}
	var rows []struct {
		JobID    string `json:"job_id"`
		Status   string `json:"status"`
		Attempts int    `json:"attempts"`
		Worker   string `json:"worker"`
	}
	if err := json.Unmarshal([]byte(out[strings.Index(out, "["):]), &rows); err != nil {
		t.Fatalf("export: %v\n%s", err, out)
	}
	want := map[string]bool{}
	for _, j := range jobs {
		want[j.ID] = true
	}
	stored, redelivered := 0, 0
	for _, r := range rows {
		if want[r.JobID] && r.Status == string(job.StatusDone) {
			stored++
			delete(want, r.JobID)
		}
		if r.Attempts > 1 {
			redelivered++
		}
	}
	writes := StoreWrites(coord.Logs())
	t.Logf("figures: expected %d, stored %d, lost %d, store writes %d (stored twice %d); %d jobs delivered more than once",
		total, stored, len(want), writes, max(0, writes-stored), redelivered)
	if stored != total || len(want) != 0 || writes != total || len(rows) != total {
		t.Errorf("want every one of %d jobs stored exactly once: %d rows, %d stored, %d lost, %d writes",
			total, len(rows), stored, len(want), writes)
	}
}

// waitStored polls the coordinator's status (through docker exec) until
// the sweep has n outcomes.
func waitStored(t *testing.T, coord *Container, n int, within time.Duration) wire.SweepStatus {
	t.Helper()
	deadline := time.Now().Add(within)
	var st wire.SweepStatus
	for time.Now().Before(deadline) {
		out, code, err := coord.Exec(nil, "status", "docker-cluster", "--json", "--data", "/data")
		if err == nil && code == 0 && json.Unmarshal([]byte(out), &st) == nil && st.Done+st.Failed >= n {
			return st
		}
		time.Sleep(300 * time.Millisecond)
	}
	t.Fatalf("after %v: %d done, %d failed, want %d", within, st.Done, st.Failed, n)
	return st
}
