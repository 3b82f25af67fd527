package main

import (
	"os"
	"syscall"
	"testing"
	"time"
)

// Only a Ctrl-C on a terminal gives a worker's jobs back at once; SIGTERM
// and a SIGINT without a terminal (systemd stopping a service) drain.
func TestWorkerAbortsAtOnce(t *testing.T) {
	for _, c := range []struct {
		sig  os.Signal
		tty  bool
		want bool
	}{{os.Interrupt, true, true}, {os.Interrupt, false, false}, {syscall.SIGTERM, true, false}, {syscall.SIGTERM, false, false}} {
		if got := abortsAtOnce(c.sig, c.tty); got != c.want {
			t.Errorf("abortsAtOnce(%v, tty %v) = %v, want %v", c.sig, c.tty, got, c.want)
		}
	}
}

// A first signal cancels the context; it calls again at once only when
// atOnce says so, and otherwise only on a second signal.
func TestSignalsAtOnce(t *testing.T) {
	for _, atOnce := range []bool{true, false} {
		called := make(chan struct{}, 2)
		ctx, release := signalsAt(func() { called <- struct{}{} }, func(os.Signal) bool { return atOnce })
		if err := syscall.Kill(os.Getpid(), syscall.SIGTERM); err != nil {
			t.Fatal(err)
		}
		select {
		case <-ctx.Done():
		case <-time.After(5 * time.Second):
			t.Fatal("first signal did not cancel")
		}
		select {
		case <-called:
			if !atOnce {
				t.Error("again called on the first signal without atOnce")
			}
		case <-time.After(300 * time.Millisecond):
			if atOnce {
				t.Error("again not called on the first signal with atOnce")
			}
		}
		if !atOnce {
			syscall.Kill(os.Getpid(), syscall.SIGTERM)
			select {
			case <-called:
			case <-time.After(5 * time.Second):
				t.Error("again not called on the second signal")
			}
		}
		release()
	}
}
