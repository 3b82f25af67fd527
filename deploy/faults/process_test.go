package faults

import (
	"fmt"
	"fvsweep/sweep/job"
	"strings"
	"syscall"
	"testing"
	"time"
)

// serveArgs are the flags of a coordinator under test: a one-second ack
// wait so that redeliveries happen within a test, and debug JSON logs, from
// which the store writes are counted.
func (r *rig) serveArgs(extra ...string) []string {
	return append([]string{"serve", "--data", r.data, "--ack-wait", "1s", "--max-deliver", "5",
		"--log-level", "debug", "--log-json"}, extra...)
}

// serve starts a coordinator with its embedded server on port.
func (r *rig) serve(port int, extra ...string) (*proc, string) {
	r.t.Helper()
	p := r.start("serve", r.serveArgs(append([]string{"--listen", fmt.Sprintf("127.0.0.1:%d", port)}, extra...)...)...)
	p.waitOutput("workers join with", 20*time.Second)
	return p, fmt.Sprintf("nats://127.0.0.1:%d", port)
}

// worker starts a worker named id with conc slots.
func (r *rig) worker(id, url string, conc int, extra ...string) *proc {
	r.t.Helper()
	p := r.start(id, append([]string{"worker", "--nats", url, "--id", id, "--slots", fmt.Sprint(conc)}, extra...)...)
	p.waitOutput("slots on", 20*time.Second)
	return p
}

func (r *rig) submit(spec, url string) {
	r.t.Helper()
	out, errs, code := r.cli("submit", spec, "--data", r.data, "--nats", url)
	if code != 0 {
		r.t.Fatalf("submit: exit %d: %s%s", code, out, errs)
	}
}

// bigAndSmall is one job of about three seconds with the AVX-512 kernels,
// longer on any other (the largest, dispatched first; the tests below need
// it still running a second after it starts), and eight small ones.
const bigAndSmall = `name = "big-and-small"
[[study]]
case = "density-wave"
fixed = { t_end = 6, nx = 256 }
[[study]]
case = "density-wave"
fixed = { t_end = 0.2, nx = 32 }
cross = { limiter = ["minmod", "vanleer", "mc", "superbee"], flux = ["hll", "hllc"] }
`

// bigJob returns the ID of the one job with nx = 256 of bigAndSmall.
func bigJob(t *testing.T, jobs map[string]job.Job) string {
	t.Helper()
	for id, j := range jobs {
		if j.Params["nx"] == "256" {
			return id
		}
	}
	t.Fatal("no nx=256 job")
	return ""
}

// bigOnA is a coordinator with bigAndSmall submitted and worker A one
// second into the big job, the one it takes first.
type bigOnA struct {
	r         *rig
	name, url string
	ids       map[string]job.Job
	big       string
	coord, a  *proc
	obs       *observer
}

func startBigOnA(t *testing.T) bigOnA {
	t.Helper()
	m := bigOnA{r: newRig(t)}
	var spec string
	spec, m.name, m.ids = m.r.writeSpec(bigAndSmall)
	m.big = bigJob(t, m.ids)
	m.coord, m.url = m.r.serve(freePort(t))
	m.obs = observe(t, m.url)
	m.r.submit(spec, m.url)
	m.a = m.r.worker("worker-a", m.url, 1)
	time.Sleep(time.Second)
	return m
}

// TestWorkerKilledMidJob: worker A takes the big job first and is
// SIGKILLed a second into it; the job is redelivered after the ack wait to
// worker B and stored once, from B, on its second delivery.
func TestWorkerKilledMidJob(t *testing.T) {
	m := startBigOnA(t)
	r, name, ids, big, coord, url, obs := m.r, m.name, m.ids, m.big, m.coord, m.url, m.obs
	m.a.kill()
	if n := len(obs.results(big)); n != 0 {
		t.Fatalf("the big job finished within a second (%d results): the kill was not mid-job", n)
	}
	r.worker("worker-b", url, 1)
	r.waitDone(name, url, len(ids), 60*time.Second)
	coord.stop(20 * time.Second)
	f, outs := r.count(name, ids, coord, obs)
	wantClean(t, f)
	if o := outs[big]; o.Worker != "worker-b" || o.Attempts != 2 {
		t.Errorf("big job stored from %s on delivery %d, want worker-b on delivery 2", o.Worker, o.Attempts)
	}
}

// TestWorkerCutOffLongerThanAckWait: worker A is frozen (SIGSTOP) mid-job
// for longer than the ack wait; worker B takes the job and its outcome is
// stored; A then wakes (SIGCONT), finishes and publishes its late
// outcome, which changes nothing: the stored outcome stays B's.
func TestWorkerCutOffLongerThanAckWait(t *testing.T) {
	m := startBigOnA(t)
	r, name, ids, big, coord, url, obs, a := m.r, m.name, m.ids, m.big, m.coord, m.url, m.obs, m.a
	a.signal(syscall.SIGSTOP)
	r.worker("worker-b", url, 1)
	r.waitDone(name, url, len(ids), 60*time.Second)
	if outs := obs.results(big); len(outs) != 1 || outs[0].Worker != "worker-b" {
		t.Fatalf("big job results while A was frozen: %+v, want one from worker-b", outs)
	}
	a.signal(syscall.SIGCONT)
	deadline := time.Now().Add(30 * time.Second)
	for len(obs.results(big)) < 2 && time.Now().Before(deadline) {
		time.Sleep(50 * time.Millisecond)
	}
	late := obs.results(big)
	if len(late) != 2 || late[1].Worker != "worker-a" {
		t.Fatalf("after waking A: results %+v, want B's then A's late one", late)
	}
	time.Sleep(500 * time.Millisecond) // time for the coordinator to see it, were it not dropped
	a.stop(10 * time.Second)
	coord.stop(20 * time.Second)
	f, outs := r.count(name, ids, coord, obs)
	wantClean(t, f)
	if f.ExtraRuns != 1 {
		t.Errorf("extra runs %d, want 1 (A's late outcome)", f.ExtraRuns)
	}
	if o := outs[big]; o.Worker != "worker-b" {
		t.Errorf("big job stored from %s, want worker-b: the late duplicate changed it", o.Worker)
	}
}

// TestEmbeddedServerRestartKeepsQueue: jobs queued with no worker survive a
// SIGKILL of the coordinator with its embedded server; after a restart on
// the same data directory a worker runs them all, none submitted again.
func TestEmbeddedServerRestartKeepsQueue(t *testing.T) {
	r := newRig(t)
	spec, name, ids := r.writeSpec(bigAndSmall)
	port := freePort(t)
	coord, url := r.serve(port)
	r.submit(spec, url)
	if st, ok := r.status(name, url); !ok || st.Queued != len(ids) {
		t.Fatalf("before the kill: %+v, want %d queued", st, len(ids))
	}
	coord.kill()
	coord.run()
	coord.waitOutput("workers join with", 20*time.Second)
	st, ok := r.status(name, url)
	if !ok || st.Queued != len(ids) || st.Done != 0 {
		t.Fatalf("after the restart: %+v, want %d still queued", st, len(ids))
	}
	obs := observe(t, url)
	r.worker("worker-a", url, 2)
	r.waitDone(name, url, len(ids), 60*time.Second)
	coord.stop(20 * time.Second)
	f, _ := r.count(name, ids, coord, obs)
	wantClean(t, f)
	if strings.Count(coord.output(), "=== start") != 2 {
		t.Errorf("coordinator started %d times, want 2", strings.Count(coord.output(), "=== start"))
	}
}
