package client_test

import (
	"net"
	"strings"
	"testing"

	"fvsweep/coordinator/client"
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
