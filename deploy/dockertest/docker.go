// Package dockertest runs the fvsweep binary in containers for tests: it
// builds a static binary, wraps it in an image built FROM scratch (nothing
// is pulled), and starts, stops, kills, disconnects and reads the logs of
// containers on a private network. Every network and container it creates
// carries a random suffix and is removed by t.Cleanup; the image is tagged
// by the hash of its contents and kept, so that the next run reuses it.
//
// Tests call Require first; it skips the test when no docker engine answers,
// so that "go test ./..." passes on a machine without one.
package dockertest

import (
	"bytes"
	"context"
	"crypto/rand"
	"encoding/hex"
	"fmt"
	"os/exec"
	"strings"
	"testing"
	"time"
)

// Engine is a docker engine that answered "docker info".
type Engine struct {
	bin string
}

// Require returns the engine, or skips t when the docker command is missing
// or its engine does not answer.
func Require(t testing.TB) *Engine {
	t.Helper()
	bin, err := exec.LookPath("docker")
	if err != nil {
		t.Skip("docker engine not reachable: no docker command on PATH")
	}
	e := &Engine{bin: bin}
	ctx, cancel := context.WithTimeout(context.Background(), 20*time.Second)
	defer cancel()
	if _, err := e.run(ctx, "info", "--format", "{{.ServerVersion}}"); err != nil {
		t.Skipf("docker engine not reachable: %v", err)
	}
	return e
}

// run runs one docker command and returns its standard output; the error
// carries the command and its standard error.
func (e *Engine) run(ctx context.Context, args ...string) (string, error) {
	var out, errb bytes.Buffer
	cmd := exec.CommandContext(ctx, e.bin, args...)
	cmd.Stdout, cmd.Stderr = &out, &errb
	if err := cmd.Run(); err != nil {
		return out.String(), fmt.Errorf("docker %s: %w: %s", strings.Join(args, " "), err, strings.TrimSpace(errb.String()))
	}
	return out.String(), nil
}

// Docker runs a docker command with a two-minute limit and fails t on error.
func (e *Engine) Docker(t testing.TB, args ...string) string {
	t.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), 2*time.Minute)
	defer cancel()
	out, err := e.run(ctx, args...)
	if err != nil {
		t.Fatal(err)
	}
	return out
}

// quiet runs a docker command for cleanup: errors are logged, not fatal.
func (e *Engine) quiet(t testing.TB, args ...string) {
	ctx, cancel := context.WithTimeout(context.Background(), time.Minute)
	defer cancel()
	if _, err := e.run(ctx, args...); err != nil {
		t.Logf("cleanup: %v", err)
	}
}

// Unique returns stem plus a random suffix, a name no other test run uses.
func Unique(stem string) string {
	var b [5]byte
	rand.Read(b[:])
	return stem + "-" + hex.EncodeToString(b[:])
}

// Network is a private bridge network.
type Network struct {
	Name string
}

// NewNetwork creates a bridge network removed when t ends (after the
// containers, which are cleaned up first because they are created later).
func (e *Engine) NewNetwork(t testing.TB) *Network {
	t.Helper()
	n := &Network{Name: Unique("fvsweep-net")}
	e.Docker(t, "network", "create", "--driver", "bridge", "--label", label, n.Name)
	t.Cleanup(func() { e.quiet(t, "network", "rm", n.Name) })
	return n
}

// label marks everything this package creates.
const label = "fvsweep.dockertest=1"
