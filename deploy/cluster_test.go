package deploy

import (
	"context"
	"errors"
	"fmt"
	"net"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/nats-io/nats-server/v2/server"
	"github.com/nats-io/nats.go"

	"fvsweep/coordinator"
	"fvsweep/store"
	"fvsweep/sweep/spec"
	"fvsweep/sweep/wire"
	"fvsweep/worker"
)

// freePorts returns n distinct free TCP ports on 127.0.0.1.
func freePorts(t testing.TB, n int) []int {
	t.Helper()
	var ls []net.Listener
	var ports []int
	for range n {
		l, err := net.Listen("tcp", "127.0.0.1:0")
		if err != nil {
			t.Fatal(err)
		}
		ls = append(ls, l)
		ports = append(ports, l.Addr().(*net.TCPAddr).Port)
	}
	for _, l := range ls {
		l.Close()
	}
	return ports
}

// loopbackNodes generates the deploy/nats configurations for three nodes
// on 127.0.0.1 under dir.
func loopbackNodes(t testing.TB, dir string) ([3]Node, [3]string) {
	t.Helper()
	p := freePorts(t, 6)
	var nodes [3]Node
	for i := range nodes {
		nodes[i] = Node{Host: "127.0.0.1", ClientPort: p[2*i], ClusterPort: p[2*i+1],
			StoreDir: filepath.Join(dir, fmt.Sprintf("store-%d", i+1))}
	}
	confs, err := WriteNodeConfigs(NATSDir(), dir, nodes)
	if err != nil {
		t.Fatal(err)
	}
	return nodes, confs
}

const (
	coordSecret  = "c0ffee0123"
	workerSecret = "beef4567"
)

// nodeSecrets are the environment of the three nodes: one password per
// role.
var nodeSecrets = map[string]string{
	"FVSWEEP_OPERATOR_TOKEN": coordSecret, "FVSWEEP_WORKER_TOKEN": workerSecret,
	"FVSWEEP_SUBMIT_TOKEN": "5ubm17", "FVSWEEP_READ_TOKEN": "4ead89",
}

// startNodes runs the three configurations in this process.
func startNodes(t testing.TB, confs [3]string) []*server.Server {
	t.Helper()
	for k, v := range nodeSecrets {
		t.Setenv(k, v)
	}
	var srvs []*server.Server
	for _, c := range confs {
		o, err := server.ProcessConfigFile(c)
		if err != nil {
			t.Fatal(err)
		}
		o.NoSigs, o.NoLog = true, true
		s, err := server.NewServer(o)
		if err != nil {
			t.Fatal(err)
		}
		s.ConfigureLogger()
		go s.Start()
		srvs = append(srvs, s)
		t.Cleanup(func() { s.Shutdown(); s.WaitForShutdown() })
	}
	for _, s := range srvs {
		if !s.ReadyForConnections(20 * time.Second) {
			t.Fatalf("node %s not ready", s.Name())
		}
	}
	return srvs
}

func urls(nodes [3]Node) string {
	var u []string
	for _, n := range nodes {
		u = append(u, fmt.Sprintf("nats://%s:%d", n.Host, n.ClientPort))
	}
	return strings.Join(u, ",")
}

// TestClusterConfigRunsASweep runs the deployed node configurations (ports
// and directories moved to loopback) as three servers, creates the streams
// with three replicas as the operator user, runs a worker as the worker
// user, and checks that the sweep completes without a permissions
// violation and that the worker user is refused what it must not do.
func TestClusterConfigRunsASweep(t *testing.T) {
	dir := t.TempDir()
	nodes, confs := loopbackNodes(t, dir)
	startNodes(t, confs)
	url := urls(nodes)

	// Any permissions violation of the coordinator or the worker means the
	// deployed rights are short of what the code does.
	denied := func(who string) nats.Option {
		return nats.ErrorHandler(func(_ *nats.Conn, _ *nats.Subscription, err error) {
			t.Errorf("%s connection: %v", who, err)
		})
	}
	cnc, err := nats.Connect(url, nats.UserInfo("operator", coordSecret), denied("operator"),
		nats.CustomInboxPrefix(wire.Names{}.Inbox(wire.RoleOperator)))
	if err != nil {
		t.Fatal(err)
	}
	defer cnc.Close()
	db, err := store.Open(filepath.Join(dir, "fvsweep.db"), store.Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	ctx, cancel := context.WithTimeout(context.Background(), 60*time.Second)
	defer cancel()
	if err := WaitJetStream(cnc, 30*time.Second); err != nil {
		t.Fatal(err)
	}
	coord, err := coordinator.New(ctx, cnc, db, coordinator.Config{Delivery: coordinator.Delivery{Replicas: 3, AckWait: 2 * time.Second}})
	if err != nil {
		t.Fatal(err)
	}
	runCtx, stop := context.WithCancel(ctx)
	done := make(chan error, 1)
	go func() { done <- coord.Run(runCtx) }()
	defer func() {
		stop()
		if err := <-done; err != nil {
			t.Errorf("coordinator: %v", err)
		}
	}()

	wnc, err := nats.Connect(url, nats.UserInfo("worker", workerSecret), denied("worker"),
		nats.CustomInboxPrefix(wire.Names{}.Inbox(wire.RoleWorker)))
	if err != nil {
		t.Fatal(err)
	}
	defer wnc.Close()
	w, err := worker.New(ctx, wnc, worker.Config{Concurrency: 2, FetchWait: 200 * time.Millisecond})
	if err != nil {
		t.Fatal(err)
	}
	wctx, wstop := context.WithCancel(ctx)
	wdone := make(chan error, 1)
	go func() { wdone <- w.Run(wctx) }()
	defer func() {
		wstop()
		if err := <-wdone; err != nil {
			t.Errorf("worker: %v", err)
		}
	}()

	sp, err := spec.LoadSource("cluster.toml", []byte(`name = "cluster"
[[study]]
case = "burgers-sine"
fixed = { t_end = 0.05 }
cross = { limiter = ["minmod", "vanleer"] }
refine = { nx = [16, 32] }
[[study]]
case = "burgers-sine"
fixed = { t_end = 0.05, nx = 24 }
snapshot = true
`), spec.DefaultLimits())
	if err != nil {
		t.Fatal(err)
	}
	rep, err := coord.Submit(ctx, sp, false)
	if err != nil || rep.Queued != rep.Jobs || rep.Jobs == 0 {
		t.Fatalf("submit: %+v, %v", rep, err)
	}
	for {
		tl, err := db.Count("cluster")
		if err != nil {
			t.Fatal(err)
		}
		if tl.Done == rep.Jobs {
			break
		}
		if ctx.Err() != nil || tl.Failed > 0 {
			outs, _ := db.Outcomes("cluster")
			t.Fatalf("tally %+v of %d jobs; outcomes %+v", tl, rep.Jobs, outs)
		}
		time.Sleep(50 * time.Millisecond)
	}

	// The worker user may not publish a job, submit or cancel.
	violations := make(chan error, 8)
	bad, err := nats.Connect(url, nats.UserInfo("worker", workerSecret),
		nats.ErrorHandler(func(_ *nats.Conn, _ *nats.Subscription, err error) { violations <- err }))
	if err != nil {
		t.Fatal(err)
	}
	defer bad.Close()
	n := wire.Names{}
	for _, subj := range []string{n.JobSubject("cluster", "0123456789abcdef0123456789abcdef"), n.API(wire.VerbSubmit), n.API(wire.VerbCancel)} {
		bad.Publish(subj, []byte(`{}`))
		select {
		case err := <-violations:
			if !errors.Is(err, nats.ErrPermissionViolation) || !strings.Contains(err.Error(), subj) {
				t.Errorf("publish to %s as worker: %v, want a permissions violation", subj, err)
			}
		case <-time.After(5 * time.Second):
			t.Errorf("publish to %s as worker: no permissions violation", subj)
		}
	}
	if _, err := nats.Connect(url, nats.UserInfo("worker", "wrong")); err == nil || !errors.Is(err, nats.ErrAuthorization) {
		t.Errorf("wrong worker password: %v, want an authorization violation", err)
	}
}
