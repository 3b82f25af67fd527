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

// binaryAndToken writes a stand-in fvsweep binary and a token file into dir.
func binaryAndToken(t *testing.T, dir string) (bin, tok string) {
	t.Helper()
	bin = filepath.Join(dir, "fvsweep-binary")
	if err := os.WriteFile(bin, []byte("#!/bin/sh\n"), 0o755); err != nil {
		t.Fatal(err)
	}
	tok = filepath.Join(dir, "token")
	if err := os.WriteFile(tok, []byte("s3cr3t0123\n"), 0o600); err != nil {
		t.Fatal(err)
	}
	return bin, tok
}

func TestAddWorkerInstallsAndStarts(t *testing.T) {
	dir, env := fakeRemote(t)
	bin, tok := binaryAndToken(t, dir)
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
		// "fvsweep worker --slots" takes 1 to 256 (docs/commands.md); the
		// script refuses the rest before it installs anything.
		{[]string{"h", "--slots", "x2"}, "--slots x2: want a whole number from 1 to 256"},
		{[]string{"h", "--slots", "0"}, "--slots 0: want a whole number from 1 to 256"},
		{[]string{"h", "--slots", "000"}, "--slots 000: want a whole number from 1 to 256"},
		{[]string{"h", "--slots", "-3"}, "--slots -3: want a whole number from 1 to 256"},
		{[]string{"h", "--slots", "1.5"}, "--slots 1.5: want a whole number from 1 to 256"},
		{[]string{"h", "--slots", ""}, "--slots : want a whole number from 1 to 256"},
		{[]string{"h", "--slots", "257"}, "--slots 257: want a whole number from 1 to 256"},
		{[]string{"h", "--slots", "99999999999999999999"}, "--slots 99999999999999999999: want a whole number from 1 to 256"},
		{[]string{"h", "--slots"}, "--slots needs a number"},
		{[]string{"h", "--concurrency", "x2"}, "--concurrency x2: want a whole number from 1 to 256"},
		{[]string{"h", "--concurrency", "0"}, "--concurrency 0: want a whole number from 1 to 256"},
		{[]string{"h", "--frobnicate"}, "unknown option --frobnicate"},
	} {
		out, err := addWorker(t, env, c.args...)
		if err == nil || !strings.Contains(out, c.want) {
			t.Errorf("add-worker.sh %v: err %v, output %q, want an error with %q", c.args, err, out, c.want)
		}
	}
}

// TestAddWorkerSlots checks the --slots value that reaches the unit and the
// warning for --concurrency, the deprecated name (docs/commands.md).
func TestAddWorkerSlots(t *testing.T) {
	const warning = "add-worker: warning: --concurrency is deprecated; use --slots\n"
	for _, c := range []struct {
		flag, value string
		want        string // the unit's ExecStart line
		warn        bool
	}{
		{"--slots", "1", "ExecStart=/usr/local/bin/fvsweep worker --slots 1", false},
		{"--slots", "256", "ExecStart=/usr/local/bin/fvsweep worker --slots 256", false},
		{"--slots", "008", "ExecStart=/usr/local/bin/fvsweep worker --slots 8", false},
		{"--concurrency", "3", "ExecStart=/usr/local/bin/fvsweep worker --slots 3", true},
	} {
		dir, env := fakeRemote(t)
		bin, tok := binaryAndToken(t, dir)
		cmd := exec.Command("bash", "add-worker.sh", "h", "--nats", "nats://a:4222",
			"--token-file", tok, "--binary", bin, c.flag, c.value)
		cmd.Env = env
		var stderr strings.Builder
		cmd.Stderr = &stderr
		if err := cmd.Run(); err != nil {
			t.Errorf("%s %s: %v\n%s", c.flag, c.value, err, stderr.String())
			continue
		}
		if got := strings.Contains(stderr.String(), warning); got != c.warn {
			t.Errorf("%s %s: deprecation warning on stderr %v, want %v:\n%s", c.flag, c.value, got, c.warn, stderr.String())
		}
		unit, err := os.ReadFile(filepath.Join(dir, "remote", "fvsweep-worker.service"))
		if err != nil {
			t.Fatal(err)
		}
		if !strings.Contains(string(unit), "\n"+c.want+"\n") {
			t.Errorf("%s %s: unit lacks %q:\n%s", c.flag, c.value, c.want, unit)
		}
	}
}
