package faults

import (
	"bytes"
	"encoding/json"
	"fmt"
	"net"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"strings"
	"sync"
	"syscall"
	"testing"
	"time"

	"github.com/nats-io/nats.go"

	"fvsweep/deploy/dockertest"
	"fvsweep/store"
	"fvsweep/sweep/job"
	"fvsweep/sweep/spec"
	"fvsweep/sweep/wire"
)

// bin is the fvsweep binary all tests run, built once by TestMain.
var bin string

func TestMain(m *testing.M) {
	dir, err := os.MkdirTemp("", "fvsweep-faults-")
	if err != nil {
		fmt.Fprintln(os.Stderr, err)
		os.Exit(1)
	}
	bin, err = dockertest.BuildBinary(dir, runtime.GOOS)
	code := 1
	if err != nil {
		fmt.Fprintln(os.Stderr, err)
	} else {
		code = m.Run()
	}
	os.RemoveAll(dir)
	os.Exit(code)
}

// proc is a child process of fvsweep; its output is appended to one log
// file across restarts.
type proc struct {
	t    *testing.T
	name string
	args []string
	env  []string
	log  string

	mu   sync.Mutex
	cmd  *exec.Cmd
	done chan struct{}
}

// start runs fvsweep args as a child process named name.
func (r *rig) start(name string, args ...string) *proc {
	r.t.Helper()
	p := &proc{t: r.t, name: name, args: args, env: r.env, log: filepath.Join(r.dir, name+".log")}
	p.run()
	r.procs = append(r.procs, p)
	return p
}

func (p *proc) run() {
	p.t.Helper()
	f, err := os.OpenFile(p.log, os.O_CREATE|os.O_WRONLY|os.O_APPEND, 0o644)
	if err != nil {
		p.t.Fatal(err)
	}
	fmt.Fprintf(f, "=== start %s %s\n", p.name, strings.Join(p.args, " "))
	cmd := exec.Command(bin, p.args...)
	cmd.Stdout, cmd.Stderr = f, f
	cmd.Env = append(os.Environ(), p.env...)
	if err := cmd.Start(); err != nil {
		p.t.Fatalf("%s: %v", p.name, err)
	}
	done := make(chan struct{})
	go func() { cmd.Wait(); f.Close(); close(done) }()
	p.mu.Lock()
	p.cmd, p.done = cmd, done
	p.mu.Unlock()
}

// signal sends sig to the process.
func (p *proc) signal(sig syscall.Signal) {
	p.mu.Lock()
	defer p.mu.Unlock()
	p.cmd.Process.Signal(sig)
}

// kill sends SIGKILL and waits for the process to be gone.
func (p *proc) kill() {
	p.signal(syscall.SIGKILL)
	<-p.done
}

// stop sends SIGTERM and waits up to d, then kills.
func (p *proc) stop(d time.Duration) {
	p.signal(syscall.SIGTERM)
	select {
	case <-p.done:
	case <-time.After(d):
		p.t.Errorf("%s did not stop within %v of SIGTERM", p.name, d)
		p.kill()
	}
}

// restart kills the process (if it runs) and starts it again.
func (p *proc) restart() {
	p.kill()
	p.run()
}

// exited reports whether the process has ended, and its exit code.
func (p *proc) exited() (bool, int) {
	select {
	case <-p.done:
		return true, p.cmd.ProcessState.ExitCode()
	default:
		return false, 0
	}
}

func (p *proc) output() string {
	b, _ := os.ReadFile(p.log)
	return string(b)
}

// waitOutput waits until the log holds substr after its n-th "=== start".
func (p *proc) waitOutput(substr string, d time.Duration) {
	p.t.Helper()
	deadline := time.Now().Add(d)
	for {
		out := p.output()
		if i := strings.LastIndex(out, "=== start"); i >= 0 && strings.Contains(out[i:], substr) {
			return
		}
		if time.Now().After(deadline) {
			p.t.Fatalf("%s: no %q after %v:\n%s", p.name, substr, d, out)
		}
		time.Sleep(20 * time.Millisecond)
	}
}

// rig is a set of processes sharing a directory and an environment.
type rig struct {
	t     *testing.T
	dir   string
	data  string // the coordinator's --data
	env   []string
	procs []*proc
}

func newRig(t *testing.T, env ...string) *rig {
	r := &rig{t: t, dir: t.TempDir(), env: env}
	r.data = filepath.Join(r.dir, "data")
	t.Cleanup(func() {
		for _, p := range r.procs {
			if ok, _ := p.exited(); !ok {
				p.signal(syscall.SIGCONT)
				p.kill()
			}
			if t.Failed() {
				t.Logf("--- %s log:\n%s", p.name, tail(p.output(), 8000))
			}
		}
	})
	return r
}

func tail(s string, n int) string {
	if len(s) > n {
		return "..." + s[len(s)-n:]
	}
	return s
}

// cli runs a short fvsweep command and returns its standard output.
func (r *rig) cli(args ...string) (string, string, int) {
	cmd := exec.Command(bin, args...)
	cmd.Env = append(os.Environ(), r.env...)
	var out, errb bytes.Buffer
	cmd.Stdout, cmd.Stderr = &out, &errb
	err := cmd.Run()
	code := 0
	if ee, ok := err.(*exec.ExitError); ok {
		code = ee.ExitCode()
	} else if err != nil {
		r.t.Fatal(err)
	}
	return out.String(), errb.String(), code
}

// freePort returns a TCP port free on 127.0.0.1 now.
func freePort(t testing.TB) int {
	l, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	defer l.Close()
	return l.Addr().(*net.TCPAddr).Port
}

// writeSpec writes src to the rig's directory and returns its path, the
// sweep's name and the jobs it expands to, by ID.
func (r *rig) writeSpec(src string) (string, string, map[string]job.Job) {
	r.t.Helper()
	path := filepath.Join(r.dir, "spec.toml")
	if err := os.WriteFile(path, []byte(src), 0o644); err != nil {
		r.t.Fatal(err)
	}
	sp, err := spec.LoadSource(path, []byte(src), spec.DefaultLimits())
	if err != nil {
		r.t.Fatal(err)
	}
	jobs, err := sp.Expand()
	if err != nil {
		r.t.Fatal(err)
	}
	ids := map[string]job.Job{}
	for _, j := range jobs {
		ids[j.ID] = j
	}
	return path, sp.Name, ids
}

// status asks the running coordinator for the sweep's status.
func (r *rig) status(name string, nats string) (wire.SweepStatus, bool) {
	t0 := time.Now()
	out, errs, code := r.cli("status", name, "--json", "--data", r.data, "--nats", nats)
	var st wire.SweepStatus
	if code != 0 || json.Unmarshal([]byte(out), &st) != nil {
		r.t.Logf("status after %v: exit %d: %s", time.Since(t0), code, strings.TrimSpace(errs))
		return st, false
	}
	return st, true
}

// waitDone polls the coordinator until the sweep has n outcomes.
func (r *rig) waitDone(name, url string, n int, within time.Duration) wire.SweepStatus {
	r.t.Helper()
	deadline := time.Now().Add(within)
	var st wire.SweepStatus
	for time.Now().Before(deadline) {
		if s, ok := r.status(name, url); ok {
			st = s
			if st.Done+st.Failed >= n {
				return st
			}
		}
		time.Sleep(200 * time.Millisecond)
	}
	r.t.Fatalf("sweep %s: %d done, %d failed of %d after %v", name, st.Done, st.Failed, n, within)
	return st
}

// observer counts every outcome published on the results subjects (core
// NATS sees each publish, including those the stream drops as duplicates).
type observer struct {
	mu    sync.Mutex
	seen  map[string][]job.Outcome
	first map[string]time.Time // when each job's first outcome was seen
	nc    *nats.Conn
}

func observe(t *testing.T, url string, opts ...nats.Option) *observer {
	t.Helper()
	o := &observer{seen: map[string][]job.Outcome{}, first: map[string]time.Time{}}
	var err error
	o.nc, err = nats.Connect(url, append(opts, nats.MaxReconnects(-1), nats.ReconnectWait(200*time.Millisecond))...)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(o.nc.Close)
	_, err = o.nc.Subscribe(wire.Names{}.ResultFilter(), func(m *nats.Msg) {
		out, err := job.DecodeOutcomeMessage(m.Data)
		if err != nil {
			return
		}
		o.mu.Lock()
		if len(o.seen[out.JobID]) == 0 {
			o.first[out.JobID] = time.Now()
		}
		o.seen[out.JobID] = append(o.seen[out.JobID], out)
		o.mu.Unlock()
	})
	if err != nil {
		t.Fatal(err)
	}
	o.nc.Flush()
	return o
}

func (o *observer) results(id string) []job.Outcome {
	o.mu.Lock()
	defer o.mu.Unlock()
	return append([]job.Outcome(nil), o.seen[id]...)
}

// workSince is the run time (wall_s of the first outcome) of the jobs
// whose first outcome was seen after t: work that had to be done after t
// whatever happened before.
func (o *observer) workSince(t time.Time) time.Duration {
	o.mu.Lock()
	defer o.mu.Unlock()
	var s float64
	for id, at := range o.first {
		if at.After(t) {
			s += o.seen[id][0].WallS
		}
	}
	return time.Duration(s * float64(time.Second))
}

// jobs is the number of jobs with at least one outcome published.
func (o *observer) jobs() int {
	o.mu.Lock()
	defer o.mu.Unlock()
	return len(o.seen)
}

// extra is the number of outcomes published beyond one per job.
func (o *observer) extra() int {
	o.mu.Lock()
	defer o.mu.Unlock()
	n := 0
	for _, outs := range o.seen {
		n += len(outs) - 1
	}
	return n
}

// figures are what a fault test counts.
type figures struct {
	Expected    int // jobs of the spec
	Stored      int // expected jobs with a done outcome in the store
	Failed      int // expected jobs with a failed outcome
	Lost        int // expected jobs with no outcome
	Unexpected  int // outcomes in the store for jobs not in the spec
	Writes      int // outcome records written by all coordinator lifetimes
	StoredTwice int // Writes beyond one per stored outcome
	ExtraRuns   int // outcomes published beyond one per job (dropped or no-ops)
}

func (f figures) String() string {
	return fmt.Sprintf("expected %d, stored %d, failed %d, lost %d, stored twice %d, unexpected %d (%d store writes); extra runs %d (dropped as duplicates)",
		f.Expected, f.Stored, f.Failed, f.Lost, f.StoredTwice, f.Unexpected, f.Writes, f.ExtraRuns)
}

// count opens the store (the coordinator must have stopped) and the
// coordinator's logs and counts.
func (r *rig) count(name string, ids map[string]job.Job, coord *proc, obs *observer) (figures, map[string]job.Outcome) {
	r.t.Helper()
	db, err := store.Open(filepath.Join(r.data, "fvsweep.db"), store.Options{ReadOnly: true, Timeout: 5 * time.Second})
	if err != nil {
		r.t.Fatal(err)
	}
	defer db.Close()
	if err := db.Verify(); err != nil {
		r.t.Errorf("store after the faults: %v", err)
	}
	outs, err := db.Outcomes(name)
	if err != nil {
		r.t.Fatal(err)
	}
	f := figures{Expected: len(ids)}
	for id := range ids {
		o, ok := outs[id]
		switch {
		case !ok:
			f.Lost++
		case o.Status == job.StatusDone:
			f.Stored++
		default:
			f.Failed++
		}
	}
	for id := range outs {
		if _, ok := ids[id]; !ok {
			f.Unexpected++
		}
	}
	f.Writes = dockertest.StoreWrites(coord.output())
	f.StoredTwice = max(0, f.Writes-(f.Stored+f.Failed))
	if obs != nil {
		f.ExtraRuns = obs.extra()
	}
	return f, outs
}

// wantClean fails the test unless every expected job is stored exactly
// once and nothing is lost.
func wantClean(t *testing.T, f figures) {
	t.Helper()
	t.Logf("figures: %s", f)
	if f.Stored != f.Expected || f.Lost != 0 || f.Failed != 0 || f.StoredTwice != 0 || f.Unexpected != 0 {
		t.Errorf("want every job stored exactly once: %s", f)
	}
}
