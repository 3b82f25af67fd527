package server_test

import (
	"net"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"fvsweep/coordinator/server"
)

// Start refuses, before it starts anything, an embedded server that anyone
// beyond this machine could use, or whose worker secret gives nothing less.
func TestStartRefusesOpenAccess(t *testing.T) {
	for _, c := range []struct {
		o    server.Options
		want string
	}{
		{server.Options{Listen: "0.0.0.0:0"}, "needs credentials"},
		{server.Options{Listen: "192.0.2.1:4222"}, "needs credentials"},
		{server.Options{Access: server.Access{WorkerToken: "w"}}, "--worker-token needs --token"},
		{server.Options{Access: server.Access{ReadToken: "r"}}, "--read-token needs --token"},
		{server.Options{Access: server.Access{Token: "same", WorkerToken: "same"}}, "the worker secret equals another role's"},
		{server.Options{Access: server.Access{Token: "t", SubmitToken: "s", ReadToken: "s"}}, "the reader secret equals another role's"},
		{server.Options{Listen: "127.0.0.1:70000"}, "bad port"},
	} {
		c.o.Dir = t.TempDir()
		s, err := server.Start(c.o)
		if err == nil {
			s.Shutdown()
		}
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%+v: error %v, want one saying %q", c.o, err, c.want)
		}
	}
}

// A loopback host needs no credentials however it is written: the name
// localhost is case-insensitive (RFC 4343, recalled from memory), and the
// server then listens on a loopback address only.
func TestStartOnLoopbackWithoutToken(t *testing.T) {
	for _, listen := range []string{"127.0.0.1:0", "localhost:0", "LOCALHOST:0", "[::1]:0"} {
		l, err := net.Listen("tcp", listen)
		if err != nil {
			t.Logf("%s: cannot listen there on this machine (no IPv6?): %v", listen, err)
			continue
		}
		l.Close()
		s, err := server.Start(server.Options{Listen: listen, Dir: t.TempDir()})
		if err != nil {
			t.Errorf("%s without a token: %v", listen, err)
			continue
		}
		addr, ok := s.Addr().(*net.TCPAddr)
		if !ok || !addr.IP.IsLoopback() {
			t.Errorf("%s: listens on %v, want a loopback address", listen, s.Addr())
		}
		s.Shutdown()
	}
}

// A server that cannot start says why at once: the port taken, the
// JetStream directory unusable (a file where a directory should be: the
// tests may run as root, for whom a read-only directory is writable).
func TestStartReportsCauseAtOnce(t *testing.T) {
	l, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	defer l.Close()
	file := filepath.Join(t.TempDir(), "file")
	if err := os.WriteFile(file, nil, 0o644); err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		o    server.Options
		want string
	}{
		{server.Options{Listen: l.Addr().String(), Dir: t.TempDir()}, "address already in use"},
		{server.Options{Dir: filepath.Join(file, "nats")}, "not a directory"},
	} {
		start := time.Now()
		s, err := server.Start(c.o)
		if err == nil {
			s.Shutdown()
		}
		if took := time.Since(start); err == nil || !strings.Contains(err.Error(), c.want) || took > 3*time.Second {
			t.Errorf("%+v: %v after %v; want %q within 3s", c.o, err, took, c.want)
		}
	}
}
