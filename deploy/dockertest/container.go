package dockertest

import (
	"context"
	"fmt"
	"os/exec"
	"strconv"
	"strings"
	"testing"
	"time"
)

func bg() context.Context { return context.Background() }

// Spec says how to start a container.
type Spec struct {
	// Stem is the start of the container's name; a random suffix follows.
	Stem string
	// Network and Aliases: the network it joins and the names other
	// containers reach it by there.
	Network *Network
	Aliases []string
	// Env holds NAME=value pairs.
	Env []string
	// Args follow the image's entry point (the fvsweep binary).
	Args []string
	// Restart is docker's restart policy ("on-failure"; "" for none).
	Restart string
}

// Container is a started container, removed (with its volumes) when the
// test ends.
type Container struct {
	Name string
	e    *Engine
	t    testing.TB
}

// Start starts a detached container of img.
func (e *Engine) Start(t testing.TB, img *Image, s Spec) *Container {
	t.Helper()
	c := &Container{Name: Unique(s.Stem), e: e, t: t}
	args := []string{"run", "--detach", "--name", c.Name, "--label", label, "--hostname", s.Stem}
	if s.Network != nil {
		args = append(args, "--network", s.Network.Name)
		for _, a := range s.Aliases {
			args = append(args, "--network-alias", a)
		}
	}
	if s.Restart != "" {
		args = append(args, "--restart", s.Restart)
	}
	for _, kv := range s.Env {
		args = append(args, "--env", kv)
	}
	args = append(args, img.Tag)
	args = append(args, s.Args...)
	t.Cleanup(func() {
		if t.Failed() {
			t.Logf("logs of %s:\n%s", c.Name, c.Logs())
		}
		e.quiet(t, "rm", "--force", "--volumes", c.Name)
	})
	e.Docker(t, args...)
	return c
}

// Logs returns what the container wrote to stdout and stderr so far.
func (c *Container) Logs() string {
	cmd := exec.Command(c.e.bin, "logs", c.Name)
	out, err := cmd.CombinedOutput()
	if err != nil {
		return fmt.Sprintf("(docker logs %s: %v) %s", c.Name, err, out)
	}
	return string(out)
}

// Exec runs the fvsweep binary in the running container with args and
// returns its combined output and exit code; an error means docker itself
// failed.
func (c *Container) Exec(env []string, args ...string) (string, int, error) {
	a := []string{"exec"}
	for _, kv := range env {
		a = append(a, "--env", kv)
	}
	a = append(a, c.Name, BinaryPath)
	a = append(a, args...)
	cmd := exec.Command(c.e.bin, a...)
	out, err := cmd.CombinedOutput()
	if ee, ok := err.(*exec.ExitError); ok {
		return string(out), ee.ExitCode(), nil
	}
	if err != nil {
		return string(out), -1, fmt.Errorf("docker exec %s: %w", c.Name, err)
	}
	return string(out), 0, nil
}

// CopyIn copies a host file into the container at path.
func (c *Container) CopyIn(host, path string) {
	c.t.Helper()
	c.e.Docker(c.t, "cp", host, c.Name+":"+path)
}

// Stop sends SIGTERM and, after grace, SIGKILL.
func (c *Container) Stop(grace time.Duration) {
	c.t.Helper()
	c.e.Docker(c.t, "stop", "--time", strconv.Itoa(int(grace.Seconds())), c.Name)
}

// Kill sends signal (e.g. "KILL", "STOP", "CONT") to the container's
// main process.
func (c *Container) Kill(signal string) {
	c.t.Helper()
	c.e.Docker(c.t, "kill", "--signal", signal, c.Name)
}

// Restart starts a stopped container again, with the same file system.
func (c *Container) Restart() {
	c.t.Helper()
	c.e.Docker(c.t, "start", c.Name)
}

// Disconnect cuts the container off net; Connect puts it back with aliases.
func (c *Container) Disconnect(n *Network) {
	c.t.Helper()
	c.e.Docker(c.t, "network", "disconnect", "--force", n.Name, c.Name)
}

// Connect joins the container to n under aliases.
func (c *Container) Connect(n *Network, aliases ...string) {
	c.t.Helper()
	args := []string{"network", "connect"}
	for _, a := range aliases {
		args = append(args, "--alias", a)
	}
	c.e.Docker(c.t, append(args, n.Name, c.Name)...)
}

// Running reports whether the container's main process runs.
func (c *Container) Running() bool {
	out, err := c.e.run(bg(), "inspect", "--format", "{{.State.Running}}", c.Name)
	return err == nil && strings.TrimSpace(out) == "true"
}

// WaitLog waits until the container's logs contain substr, and fails t
// with the logs when they do not within d.
func (c *Container) WaitLog(substr string, d time.Duration) {
	c.t.Helper()
	deadline := time.Now().Add(d)
	for {
		logs := c.Logs()
		if strings.Contains(logs, substr) {
			return
		}
		if time.Now().After(deadline) {
			c.t.Fatalf("%s: no %q in the logs after %v:\n%s", c.Name, substr, d, logs)
		}
		time.Sleep(200 * time.Millisecond)
	}
}
