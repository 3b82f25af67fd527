package faults

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"
)

// TestServeRefusesOpenListenWithoutToken: the embedded server listens
// beyond loopback only with a token.
func TestServeRefusesOpenListenWithoutToken(t *testing.T) {
	r := newRig(t)
	out, errs, code := r.cli("serve", "--data", r.data, "--listen", fmt.Sprintf("0.0.0.0:%d", freePort(t)))
	if code == 0 || !strings.Contains(errs, "needs credentials") || !strings.Contains(errs, "--token") {
		t.Fatalf("serve --listen 0.0.0.0 without --token: exit %d\n%s%s", code, out, errs)
	}
}

// TestNodeRefusesOpenListenWithoutUsers: the same for a cluster node whose
// configuration has no authorization.
func TestNodeRefusesOpenListenWithoutUsers(t *testing.T) {
	r := newRig(t)
	conf := filepath.Join(r.dir, "open.conf")
	src := fmt.Sprintf("listen: 0.0.0.0:%d\njetstream { store_dir: %q }\n", freePort(t), filepath.Join(r.dir, "st"))
	if err := os.WriteFile(conf, []byte(src), 0o644); err != nil {
		t.Fatal(err)
	}
	out, errs, code := r.cli("node", "--config", conf)
	if code == 0 || !strings.Contains(errs, "without credentials") {
		t.Fatalf("node on 0.0.0.0 without users: exit %d\n%s%s", code, out, errs)
	}
}

// TestWorkerCredentials: with --token and --worker-token on the embedded
// server, a worker without a token or with a wrong one is refused with a
// clear message and a non-zero exit; the worker token runs jobs but cannot
// submit or cancel, nor ask for status (the publish is rejected as a
// permissions violation).
func TestWorkerCredentials(t *testing.T) {
	r := newRig(t)
	spec, name, ids := r.writeSpec(bigAndSmall)
	port := freePort(t)
	coord, url := r.serve(port, "--token", "boss-7f3a", "--worker-token", "crew-19c2")
	for _, c := range []struct {
		env  []string
		want string
	}{
		{nil, "none given"},
		{[]string{"FVSWEEP_TOKEN=crew-wrong"}, "refused the credentials (--token)"},
		{[]string{"FVSWEEP_USER=worker", "FVSWEEP_TOKEN=boss-7f3a"}, `refused the credentials (user "worker"`},
	} {
		r.env = c.env
		out, errs, code := r.cli("worker", "--nats", url, "--slots", "1")
		if code == 0 || !strings.Contains(errs, c.want) || !strings.Contains(errs, "Authorization Violation") {
			t.Errorf("worker with %v: exit %d, want non-zero and %q:\n%s%s", c.env, code, c.want, out, errs)
		}
	}
	r.env = []string{"FVSWEEP_TOKEN=crew-19c2"}
	out, errs, code := r.cli("submit", spec, "--nats", url, "--data", r.data)
	// The worker may not even ask whether a coordinator answers.
	if code == 0 || !strings.Contains(errs, "permissions violation") || !strings.Contains(errs, `"fvsweep.api.ping"`) {
		t.Fatalf("submit with the worker token: exit %d, want a permissions violation:\n%s%s", code, out, errs)
	}
	out, errs, code = r.cli("cancel", name, "--nats", url, "--data", r.data)
	if code == 0 || !strings.Contains(errs, "permissions violation") {
		t.Errorf("cancel with the worker token: exit %d, want a permissions violation:\n%s%s", code, out, errs)
	}
	out, errs, code = r.cli("status", "--nats", url, "--data", r.data)
	if code == 0 || !strings.Contains(errs, `"fvsweep.api.ping"`) {
		t.Errorf("status with the worker token: exit %d, want a permissions violation:\n%s%s", code, out, errs)
	}
	r.worker("worker-a", url, 2)
	r.env = []string{"FVSWEEP_TOKEN=boss-7f3a"}
	r.submit(spec, url)
	r.waitDone(name, url, len(ids), 60*time.Second)
	coord.stop(20 * time.Second)
	f, _ := r.count(name, ids, coord, nil)
	wantClean(t, f)
}
