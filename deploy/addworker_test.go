package deploy

import (
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
)

// fakeRemote puts stand-in ssh and scp commands first on PATH: ssh appends
// its arguments to DIR/ssh.log, scp copies its sources into DIR/remote.
func fakeRemote(t *testing.T) (dir string, env []string) {
	t.Helper()
	if _, err := exec.LookPath("bash"); err != nil {
		t.Skip("no bash on PATH")
	}
	dir = t.TempDir()
	bin := filepath.Join(dir, "bin")
	remote := filepath.Join(dir, "remote")
	for _, d := range []string{bin, remote} {
		if err := os.Mkdir(d, 0o755); err != nil {
			t.Fatal(err)
		}
	}
	ssh := "#!/bin/sh\nprintf '%s\\n' \"$*\" >>" + filepath.Join(dir, "ssh.log") + "\n"
	// scp -q SRC... HOST:DIR/ : copy every source but the last argument.
	scp := "#!/bin/sh\nshift\nwhile [ $# -gt 1 ]; do cp \"$1\" " + remote + "/; shift; done\n" +
		"printf '%s\\n' \"$1\" >" + filepath.Join(dir, "scp.target") + "\n"
	for name, body := range map[string]string{"ssh": ssh, "scp": scp} {
		if err := os.WriteFile(filepath.Join(bin, name), []byte(body), 0o755); err != nil {
			t.Fatal(err)
		}
	}
	env = []string{"PATH=" + bin + ":" + os.Getenv("PATH"), "HOME=" + dir}
	return dir, env
}

func addWorker(t *testing.T, env []string, args ...string) (string, error) {
	t.Helper()
	cmd := exec.Command("bash", append([]string{"add-worker.sh"}, args...)...)
	cmd.Env = env
	out, err := cmd.CombinedOutput()
	return string(out), err
}

func TestAddWorkerInstallsAndStarts(t *testing.T) {
	dir, env := fakeRemote(t)
	bin := filepath.Join(dir, "fvsweep-binary")
	if err := os.WriteFile(bin, []byte("#!/bin/sh\n"), 0o755); err != nil {
		t.Fatal(err)
	}
	tok := filepath.Join(dir, "token")
	if err := os.WriteFile(tok, []byte("s3cr3t0123\n"), 0o600); err != nil {
		t.Fatal(err)
	}
	out, err := addWorker(t, env, "spare-7", "--nats", "nats://a:4222,nats://b:4222",
		"--token-file", tok, "--binary", bin, "--slots", "6")
	if err != nil {
		t.Fatalf("add-worker.sh: %v\n%s", err, out)
	}
	remote := filepath.Join(dir, "remote")
	envFile, err := os.ReadFile(filepath.Join(remote, "fvsweep.env"))
	if err != nil {
		t.Fatal(err)
	}
	for _, want := range []string{"FVSWEEP_NATS=nats://a:4222,nats://b:4222\n", "FVSWEEP_USER=worker\n", "FVSWEEP_TOKEN=s3cr3t0123\n"} {
		if !strings.Contains(string(envFile), want) {
			t.Errorf("env file lacks %q:\n%s", want, envFile)
		}
	}
	if b, err := os.ReadFile(filepath.Join(remote, "fvsweep")); err != nil || string(b) != "#!/bin/sh\n" {
		t.Errorf("binary not copied as given: %q, %v", b, err)
	}
	unit, err := os.ReadFile(filepath.Join(remote, "fvsweep-worker.service"))
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(unit), "\nExecStart=/usr/local/bin/fvsweep worker --slots 6\n") ||
		!strings.Contains(string(unit), "\nEnvironmentFile=/etc/fvsweep/fvsweep.env\n") {
		t.Errorf("unit:\n%s", unit)
	}
	target, _ := os.ReadFile(filepath.Join(dir, "scp.target"))
	if !strings.HasPrefix(string(target), "spare-7:/tmp/fvsweep-add-worker.") {
		t.Errorf("scp target %q, want spare-7:/tmp/fvsweep-add-worker.PID/", target)
	}
	log, _ := os.ReadFile(filepath.Join(dir, "ssh.log"))
	for _, want := range []string{
		"spare-7 mkdir -m 700 -p /tmp/fvsweep-add-worker.",
		"install -m 0755 /tmp/fvsweep-add-worker.",
		"/fvsweep /usr/local/bin/fvsweep",
		"install -m 0600 /tmp/fvsweep-add-worker.",
		"/fvsweep.env /etc/fvsweep/fvsweep.env",
		"systemctl enable fvsweep-worker.service",
		"systemctl restart fvsweep-worker.service",
	} {
		if !strings.Contains(string(log), want) {
			t.Errorf("remote commands lack %q:\n%s", want, log)
		}
	}
}

func TestAddWorkerRefusesIncompleteArguments(t *testing.T) {
	_, env := fakeRemote(t)
	for _, c := range []struct {
		args []string
		want string
	}{
		{nil, "usage: add-worker.sh HOST"},
		{[]string{"h", "--token-file", "/nonexistent/token"}, "--token-file /nonexistent/token: cannot read it"},
		{[]string{"h", "--nats", "nats://a:4222"}, "no worker token"},
		{[]string{"h"}, "no NATS URL"},
		{[]string{"h", "--slots", "x2"}, "--slots x2: not a positive number"},
		{[]string{"h", "--concurrency", "x2"}, "--concurrency x2: not a positive number"},
		{[]string{"h", "--frobnicate"}, "unknown option --frobnicate"},
	} {
		out, err := addWorker(t, env, c.args...)
		if err == nil || !strings.Contains(out, c.want) {
			t.Errorf("add-worker.sh %v: err %v, output %q, want an error with %q", c.args, err, out, c.want)
		}
	}
}
