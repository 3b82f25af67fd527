package client_test

import (
	"bytes"
	"net"
	"regexp"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/hashicorp/go-hclog"

	"fvsweep/coordinator/client"
	"fvsweep/coordinator/server"
)

// Dial refuses settings it cannot use before it connects, and names the
// URL it could not reach.
func TestDialRefuses(t *testing.T) {
	l, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	dead := "nats://" + l.Addr().String()
	l.Close()
	for _, c := range []struct {
		o    client.DialOptions
		want string
	}{
		{client.DialOptions{}, "no NATS URL"},
		{client.DialOptions{URL: dead, Token: "t", CredsFile: "c.creds"}, "give one of --token, --creds and --nkey"},
		{client.DialOptions{URL: dead, CredsFile: "c.creds", NKeyFile: "k.nk"}, "give one of --token, --creds and --nkey"},
		{client.DialOptions{URL: dead, TLS: client.TLSFiles{Cert: "c.pem"}}, "needs both --tls-cert and --tls-key"},
		{client.DialOptions{URL: dead}, "connecting to NATS at " + dead},
	} {
		nc, err := client.Dial(c.o)
		if err == nil {
			nc.Close()
		}
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%+v: error %v, want one saying %q", c.o, err, c.want)
		}
	}
}

// syncBuffer is a bytes.Buffer safe for the connection's callbacks.
type syncBuffer struct {
	mu sync.Mutex
	b  bytes.Buffer
}

func (s *syncBuffer) Write(p []byte) (int, error) {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.Write(p)
}

func (s *syncBuffer) String() string {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.b.String()
}

// With a logger, a connection logs losing its server and finding it again,
// as timestamped lines.
func TestDialLogsReconnect(t *testing.T) {
	dir := t.TempDir()
	srv, err := server.Start(server.Options{Dir: dir})
	if err != nil {
		t.Fatal(err)
	}
	addr := strings.TrimPrefix(srv.ClientURL(), "nats://")
	var out syncBuffer
	log := hclog.New(&hclog.LoggerOptions{Name: "w", Output: &out, Level: hclog.Info})
	nc, err := client.Dial(client.DialOptions{URL: srv.ClientURL(), Name: "test worker", Log: log})
	if err != nil {
		t.Fatal(err)
	}
	defer nc.Close()
	srv.Shutdown()
	srv.WaitForShutdown()
	waitFor(t, &out, "lost the NATS server")
	srv, err = server.Start(server.Options{Dir: dir, Listen: addr})
	if err != nil {
		t.Fatal(err)
	}
	defer srv.Shutdown()
	waitFor(t, &out, "reconnected to the NATS server")
	stamp := regexp.MustCompile(`(?m)^\d{4}-\d\d-\d\dT\d\d:\d\d:\d\d\.\d{3}[-+Z]`)
	for _, l := range strings.Split(strings.TrimSpace(out.String()), "\n") {
		if !stamp.MatchString(l) || !strings.Contains(l, "test worker") {
			t.Errorf("log line %q: want a time and the connection's name", l)
		}
	}
}

func waitFor(t *testing.T, out *syncBuffer, what string) {
	t.Helper()
	for end := time.Now().Add(10 * time.Second); time.Now().Before(end); time.Sleep(20 * time.Millisecond) {
		if strings.Contains(out.String(), what) {
			return
		}
	}
	t.Fatalf("no %q in the log:\n%s", what, out.String())
}
