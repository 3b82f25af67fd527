package coordinator_test

import (
	"bufio"
	"context"
	"fmt"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"fvsweep/coordinator/client"
	"fvsweep/coordinator/server"
	"fvsweep/sweep/job"
	"fvsweep/worker"
)

// manySpec is a sweep of n distinct jobs of the Burgers sine case that
// differ only in their step guard (max_steps = from .. from+n-1).
func manySpec(name string, n, from int) string {
	var b strings.Builder
	fmt.Fprintf(&b, "name = %q\n[[study]]\ncase = \"burgers-sine\"\nfixed = { nx = 16 }\naxes = { max_steps = [", name)
	for i := 0; i < n; i++ {
		if i > 0 {
			b.WriteByte(',')
		}
		b.WriteString(strconv.Itoa(from + i))
	}
	b.WriteString("] }\n")
	return b.String()
}

// runSweep submits a sweep of n trivial jobs and waits until all are
// stored; it returns the time from submission to the last stored outcome
// (found by counting the store every 50 ms, about as often as a progress
// bar asks: a count reads every job of the sweep, and counting every 10 ms
// took a sixth of the two cores).
func runSweep(b *testing.B, r *rig, name string, n, from int) time.Duration {
	spec := r.spec(manySpec(name, n, from))
	start := time.Now()
	rep, err := r.coord.Submit(context.Background(), spec, false)
	if err != nil {
		b.Fatal(err)
	}
	if rep.Queued != n {
		b.Fatalf("queued %d of %d", rep.Queued, n)
	}
	for deadline := time.Now().Add(10 * time.Minute); ; time.Sleep(50 * time.Millisecond) {
		t, err := r.db.Count(name)
		if err != nil {
			b.Fatal(err)
		}
		if t.Done+t.Failed >= n {
			return time.Since(start)
		}
		if time.Now().After(deadline) {
			b.Fatalf("sweep %s: %d of %d stored", name, t.Done+t.Failed, n)
		}
	}
}

// BenchmarkThroughputTrivial measures end to end throughput, spec to
// stored outcome, of jobs that do no work, with 2 local workers at their
// default concurrency (a slot per core; FVSWEEP_BENCH_CONCURRENCY sets
// another). Each iteration is a sweep of 20,000 new jobs.
func BenchmarkThroughputTrivial(b *testing.B) {
	const n = 20000
	r := newRig(b, testDelivery)
	conc := 0
	if s := os.Getenv("FVSWEEP_BENCH_CONCURRENCY"); s != "" {
		conc, _ = strconv.Atoi(s)
	}
	r.addWorker(conc, trivial)
	r.addWorker(conc, trivial)
	var total time.Duration
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		total += runSweep(b, r, fmt.Sprintf("tp%d", i), n, 1000+i*n)
	}
	b.ReportMetric(float64(n*b.N)/total.Seconds(), "jobs/s")
	b.ReportMetric(0, "ns/op")
}

// BenchmarkMemory100k runs a sweep of 100,000 trivial jobs with the NATS
// server and 2 workers in a child process, so that this process is the
// coordinator alone (with the spec parsing and the store), and reports its
// peak resident memory (VmHWM), peak Go heap and, at the end, the resident
// pages of mapped files (the store).
func BenchmarkMemory100k(b *testing.B) {
	const n = 100000
	dir := b.TempDir()
	cmd := exec.Command(os.Args[0], "-test.run=^TestHelperServerAndWorkers$")
	cmd.Env = append(os.Environ(), "FVSWEEP_HELPER_DIR="+dir)
	stdin, _ := cmd.StdinPipe()
	stdout, _ := cmd.StdoutPipe()
	cmd.Stderr = os.Stderr
	if err := cmd.Start(); err != nil {
		b.Fatal(err)
	}
	defer func() { stdin.Close(); cmd.Wait() }()
	sc := bufio.NewScanner(stdout)
	url := ""
	for sc.Scan() {
		if u, ok := strings.CutPrefix(sc.Text(), "URL="); ok {
			url = u
			break
		}
	}
	if url == "" {
		b.Fatal("helper process gave no URL")
	}
	go io.Copy(io.Discard, stdout)
	r := newRigAt(b, url, testDelivery)
	var peak atomic.Uint64
	stop := make(chan struct{})
	var wg sync.WaitGroup
	wg.Add(1)
	go func() {
		defer wg.Done()
		var ms runtime.MemStats
		for {
			runtime.ReadMemStats(&ms)
			if ms.HeapInuse > peak.Load() {
				peak.Store(ms.HeapInuse)
			}
			select {
			case <-stop:
				return
			case <-time.After(20 * time.Millisecond):
			}
		}
	}()
	b.ResetTimer()
	var total time.Duration
	for i := 0; i < b.N; i++ {
		total += runSweep(b, r, fmt.Sprintf("mem%d", i), n, 1000+i*n)
	}
	close(stop)
	wg.Wait()
	b.ReportMetric(float64(peak.Load())/(1<<20), "peak-heap-MiB")
	b.ReportMetric(float64(procStatus("VmHWM"))/(1<<20), "peak-RSS-MiB")
	b.ReportMetric(float64(procStatus("RssFile"))/(1<<20), "end-RSS-file-MiB")
	if fi, err := os.Stat(r.db.Path()); err == nil {
		b.ReportMetric(float64(fi.Size())/(1<<20), "store-file-MiB")
	}
	b.ReportMetric(float64(n*b.N)/total.Seconds(), "jobs/s")
	b.ReportMetric(0, "ns/op")
}

// TestHelperServerAndWorkers is the child process of BenchmarkMemory100k:
// an embedded server and 2 trivial workers at their default concurrency,
// until stdin closes.
func TestHelperServerAndWorkers(t *testing.T) {
	dir := os.Getenv("FVSWEEP_HELPER_DIR")
	if dir == "" {
		t.Skip("helper process of BenchmarkMemory100k")
	}
	srv, err := server.Start(server.Options{Dir: filepath.Join(dir, "nats")})
	if err != nil {
		t.Fatal(err)
	}
	defer srv.Shutdown()
	fmt.Printf("URL=%s\n", srv.ClientURL())
	ctx, cancel := context.WithCancel(context.Background())
	var wg sync.WaitGroup
	for range 2 {
		nc, err := client.Dial(client.DialOptions{InProcess: srv})
		if err != nil {
			t.Fatal(err)
		}
		wg.Add(1)
		go func() {
			defer wg.Done()
			w, err := worker.New(ctx, nc, worker.Config{Runners: map[string]worker.Runner{job.BuiltinSolver: worker.RunnerFunc(trivial)}})
			if err == nil {
				w.Run(ctx)
			}
		}()
	}
	io.Copy(io.Discard, os.Stdin)
	cancel()
	wg.Wait()
}

// procStatus is a size in bytes from /proc/self/status: VmHWM, the peak
// resident set size, or RssFile, the resident pages of mapped files such as
// the bbolt store (0 where there is none).
func procStatus(field string) int64 {
	data, err := os.ReadFile("/proc/self/status")
	if err != nil {
		return 0
	}
	for _, line := range strings.Split(string(data), "\n") {
		if f := strings.Fields(line); len(f) >= 2 && f[0] == field+":" {
			kb, _ := strconv.ParseInt(f[1], 10, 64)
			return kb << 10
		}
	}
	return 0
}

// BenchmarkWorkerBusy50ms runs 50 ms jobs on one worker of 2 slots and
// reports the busy fraction: the time its slots spent in jobs over
// 2 x (last job end - first job start), and the worker's own figure.
func BenchmarkWorkerBusy50ms(b *testing.B) {
	const n, conc, jb = 60, 2, 50 * time.Millisecond
	r := newRig(b, testDelivery)
	var mu sync.Mutex
	var first, last time.Time
	var busy time.Duration
	sleep := func(ctx context.Context, j job.Job) (worker.Result, error) {
		t0 := time.Now()
		time.Sleep(jb)
		t1 := time.Now()
		mu.Lock()
		if first.IsZero() || t0.Before(first) {
			first = t0
		}
		if t1.After(last) {
			last = t1
		}
		busy += t1.Sub(t0)
		mu.Unlock()
		return worker.Result{Outcome: job.Outcome{Status: job.StatusDone}}, nil
	}
	var w *worker.Worker
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		rep, err := r.coord.Submit(context.Background(), r.spec(manySpec(fmt.Sprintf("busy%d", i), n, 1000+i*n)), false)
		if err != nil || rep.Queued != n {
			b.Fatal(rep, err)
		}
		if w == nil { // the queue is full before the worker starts
			w = r.addWorker(conc, sleep)
		}
		r.wait(fmt.Sprintf("busy%d", i), n, time.Minute)
	}
	mu.Lock()
	frac := float64(busy) / (conc * float64(last.Sub(first)))
	mu.Unlock()
	b.ReportMetric(100*frac, "busy-%")
	b.ReportMetric(0, "ns/op")
}
