package external

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"os"
	"os/exec"
	"strconv"
	"strings"
	"sync"
	"syscall"
	"time"

	"golang.org/x/sys/unix"
)

// How a run of the program is limited (Linux):
//   - wall clock: a timer kills the program's process group (SIGKILL) at
//     the manifest's timeout;
//   - memory: a watcher reads the resident size of the program's process
//     (/proc/PID/statm) every watchEvery and kills the process group when
//     it exceeds the manifest's memory; between two looks a program can
//     overshoot by what it touches in that time. As a hard stop, the
//     address space of the process is capped at asFactor times the memory
//     limit (prlimit RLIMIT_AS right after the start; an allocation past it
//     fails inside the program, which then fails by its own exit status).
//     Resident size is what the limit means; address space alone would
//     count the reservations of runtimes (Python, Go, the JVM) that never
//     become memory.
//   - the process group is killed after every run, so that no child of the
//     program outlives its job, and on the worker's death (Pdeathsig).
const (
	watchEvery = 10 * time.Millisecond
	asFactor   = 4
	tailBytes  = 2048 // bytes of stderr kept for a failure's reason
	tailLines  = 8
)

// exit is how a run of the program ended.
type exit struct {
	err      error   // nil: exit status 0
	timedOut bool    // killed at the timeout
	overMem  int64   // > 0: killed over the memory limit, resident bytes seen
	stderr   string  // last lines of its standard error
	cpuS     float64 // user and system CPU seconds of the program's own process
}

// reason describes a failed exit in one line, or "" for success.
func (e exit) reason(timeout time.Duration, memory int64) string {
	switch {
	case e.timedOut:
		return fmt.Sprintf("killed at the timeout of %s", timeout)
	case e.overMem > 0:
		return fmt.Sprintf("over the memory limit: resident %s > %s", mib(e.overMem), mib(memory))
	case e.err == nil:
		return ""
	}
	msg := e.err.Error()
	var ee *exec.ExitError
	if errors.As(e.err, &ee) {
		if ws, ok := ee.Sys().(syscall.WaitStatus); ok && ws.Signaled() {
			msg = "killed by signal " + ws.Signal().String()
		}
	}
	if e.stderr != "" {
		msg += "; stderr: " + e.stderr
	}
	return msg
}

func mib(b int64) string { return fmt.Sprintf("%.1f MiB", float64(b)/(1<<20)) }

// execute runs argv in dir with env and the limits above. It returns an
// error only when the program could not be started or ctx ended the run.
func execute(ctx context.Context, argv []string, dir string, env []string, timeout time.Duration, memory int64) (exit, error) {
	cmd := exec.Command(argv[0], argv[1:]...)
	cmd.Dir, cmd.Env = dir, env
	stderr := &tail{max: tailBytes}
	cmd.Stdout, cmd.Stderr = &tail{max: tailBytes}, stderr
	cmd.SysProcAttr = &syscall.SysProcAttr{Setpgid: true, Pdeathsig: syscall.SIGKILL}
	cmd.WaitDelay = time.Second // a child holding stderr open does not hold the run
	if err := cmd.Start(); err != nil {
		return exit{}, err
	}
	pid := cmd.Process.Pid
	as := uint64(memory) * asFactor
	_ = unix.Prlimit(pid, unix.RLIMIT_AS, &unix.Rlimit{Cur: as, Max: as}, nil)
	killGroup := func() { _ = syscall.Kill(-pid, syscall.SIGKILL) }

	done := make(chan error, 1)
	go func() { done <- cmd.Wait() }()
	timer := time.NewTimer(timeout)
	defer timer.Stop()
	tick := time.NewTicker(watchEvery)
	defer tick.Stop()
	var out exit
	for {
		select {
		case err := <-done:
			killGroup()
			out.err = err
			if ps := cmd.ProcessState; ps != nil {
				out.cpuS = (ps.UserTime() + ps.SystemTime()).Seconds()
			}
			out.stderr = stderr.lines(tailLines)
			return out, nil
		case <-timer.C:
			out.timedOut = true
			killGroup()
		case <-ctx.Done():
			killGroup()
			<-done
			return exit{}, ctx.Err()
		case <-tick.C:
			if rss := resident(pid); rss > memory && out.overMem == 0 && !out.timedOut {
				out.overMem = rss
				killGroup()
			}
		}
	}
}

var pageSize = int64(os.Getpagesize())

// resident is the resident set size of process pid in bytes, 0 when it
// cannot be read (the process is gone).
func resident(pid int) int64 {
	b, err := os.ReadFile("/proc/" + strconv.Itoa(pid) + "/statm")
	if err != nil {
		return 0
	}
	f := strings.Fields(string(b))
	if len(f) < 2 {
		return 0
	}
	n, _ := strconv.ParseInt(f[1], 10, 64)
	return n * pageSize
}

// tail is an io.Writer that keeps the last max bytes written to it.
type tail struct {
	mu  sync.Mutex
	max int
	buf []byte
}

func (t *tail) Write(p []byte) (int, error) {
	t.mu.Lock()
	defer t.mu.Unlock()
	t.buf = append(t.buf, p...)
	if len(t.buf) > 2*t.max {
		t.buf = append(t.buf[:0], t.buf[len(t.buf)-t.max:]...)
	}
	return len(p), nil
}

// lines returns the last n non-empty lines kept, joined by " | ", at most
// max bytes, with invalid UTF-8 and control characters replaced.
func (t *tail) lines(n int) string {
	t.mu.Lock()
	defer t.mu.Unlock()
	b := t.buf
	if len(b) > t.max {
		b = b[len(b)-t.max:]
	}
	var keep []string
	for _, l := range bytes.Split(b, []byte{'\n'}) {
		if s := strings.TrimSpace(clean(l)); s != "" {
			keep = append(keep, s)
		}
	}
	if len(keep) > n {
		keep = keep[len(keep)-n:]
	}
	return strings.Join(keep, " | ")
}

func clean(b []byte) string {
	return strings.Map(func(r rune) rune {
		if r == '\t' {
			return ' '
		}
		if r < 0x20 || r == 0x7f || r == 0xfffd {
			return '?'
		}
		return r
	}, strings.ToValidUTF8(string(b), "?"))
}
