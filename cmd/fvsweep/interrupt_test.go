package main

import (
	"bytes"
	"os"
	"os/exec"
	"regexp"
	"sync"
	"testing"
	"time"

	"github.com/creack/pty"
)

// TestMain lets the test binary stand in for the fvsweep binary: run with
// FVSWEEP_TEST_MAIN=1 it is the command (main), so that a test can start
// it in a terminal of its own.
func TestMain(m *testing.M) {
	if os.Getenv("FVSWEEP_TEST_MAIN") == "1" {
		main()
		os.Exit(0)
	}
	os.Exit(m.Run())
}

// terminal is a command running in a pseudo-terminal, with all it has
// written so far.
type terminal struct {
	cmd   *exec.Cmd
	tty   *os.File
	mu    sync.Mutex
	out   bytes.Buffer
	read  chan struct{} // closed when the terminal has no more output
	start time.Time
}

func startInTerminal(t *testing.T, args ...string) *terminal {
	t.Helper()
	exe, err := os.Executable()
	if err != nil {
		t.Fatal(err)
	}
	cmd := exec.Command(exe, args...)
	cmd.Env = append(os.Environ(), "FVSWEEP_TEST_MAIN=1")
	tty, err := pty.StartWithSize(cmd, &pty.Winsize{Rows: 40, Cols: 140})
	if err != nil {
		t.Fatal(err)
	}
	term := &terminal{cmd: cmd, tty: tty, read: make(chan struct{}), start: time.Now()}
	go func() {
		defer close(term.read)
		buf := make([]byte, 4096)
		for {
			n, err := tty.Read(buf)
			term.mu.Lock()
			term.out.Write(buf[:n])
			term.mu.Unlock()
			if err != nil {
				return
			}
		}
	}()
	t.Cleanup(func() {
		if cmd.ProcessState == nil {
			cmd.Process.Kill()
			cmd.Wait()
		}
		tty.Close()
	})
	return term
}

// waitFor waits until the output matches re, at most d; it returns how
// long after the start that was, or fails.
func (term *terminal) waitFor(t *testing.T, re *regexp.Regexp, d time.Duration) time.Duration {
	t.Helper()
	for deadline := time.Now().Add(d); ; {
		term.mu.Lock()
		ok := re.Match(term.out.Bytes())
		term.mu.Unlock()
		if ok {
			return time.Since(term.start)
		}
		if time.Now().After(deadline) {
			t.Fatalf("no %q within %v of output; the terminal shows:\n%s", re, d, term.text())
		}
		time.Sleep(20 * time.Millisecond)
	}
}

// exit waits for the command to end, at most d, and returns its status.
func (term *terminal) exit(t *testing.T, d time.Duration) int {
	t.Helper()
	done := make(chan error, 1)
	go func() { done <- term.cmd.Wait() }()
	select {
	case <-done:
	case <-time.After(d):
		t.Fatalf("still running after %v; the terminal shows:\n%s", d, term.text())
	}
	select { // the rest of the output
	case <-term.read:
	case <-time.After(time.Second):
	}
	return term.cmd.ProcessState.ExitCode()
}

var ansi = regexp.MustCompile(`\x1b\[[0-9;?]*[A-Za-z]`)

func (term *terminal) text() string {
	term.mu.Lock()
	defer term.mu.Unlock()
	return ansi.ReplaceAllString(term.out.String(), "")
}

// Two jobs of a few seconds each and two short ones, on two slots: the
// long ones run first.
const interruptSpec = `name = "ctrlc"
[[study]]
label = "waves"
case = "density-wave"
fixed = { t_end = 1.5, threads = 1 }
axes = { amp = [0.1, 0.2] }
refine = { nx = [16, 160] }
`

// Ctrl-C in a terminal stops run with status 130 and gives the running
// jobs back at once: the same command run right after starts them within
// two seconds of queueing the sweep (not after the ack wait of 30 s), and
// the sweep ends.
func TestCtrlCThenResumeInTerminal(t *testing.T) {
	if testing.Short() {
		t.Skip("runs the command twice in a terminal (about 15 s)")
	}
	spec, data := specFiles(t, interruptSpec)
	args := []string{"run", spec, "--data", data, "--concurrency", "2", "--format", "none"}
	running := regexp.MustCompile(`0/4 done\s+0 failed\s+2 running`)

	first := startInTerminal(t, args...)
	first.waitFor(t, running, 20*time.Second)
	time.Sleep(300 * time.Millisecond)
	if _, err := first.tty.Write([]byte{0x03}); err != nil { // Ctrl-C, as typed
		t.Fatal(err)
	}
	if code := first.exit(t, 10*time.Second); code != exitInterrupted {
		t.Fatalf("exit status %d after Ctrl-C, want %d; the terminal shows:\n%s", code, exitInterrupted, first.text())
	}
	if !regexp.MustCompile(`interrupted: 0 of 4 jobs stored .*back in the queue; run the same command again to resume`).MatchString(first.text()) {
		t.Errorf("no interrupt message; the terminal shows:\n%s", first.text())
	}

	again := startInTerminal(t, args...)
	queued := again.waitFor(t, regexp.MustCompile(`sweep ctrlc: 4 jobs, 0 already stored, 4 queued`), 20*time.Second)
	started := again.waitFor(t, regexp.MustCompile(`[1-9] running`), 30*time.Second)
	t.Logf("resumed run: sweep queued after %v, jobs running after %v", queued.Round(time.Millisecond), started.Round(time.Millisecond))
	if started-queued > 2*time.Second {
		t.Errorf("the interrupted jobs started %v after the sweep was queued, want within 2 s", (started - queued).Round(time.Millisecond))
	}
	if code := again.exit(t, 60*time.Second); code != 0 {
		t.Fatalf("resumed run: exit status %d; the terminal shows:\n%s", code, again.text())
	}
	if !regexp.MustCompile(`4/4 done\s+0 failed`).MatchString(again.text()) {
		t.Errorf("resumed run did not show the sweep done; the terminal shows:\n%s", again.text())
	}
}
