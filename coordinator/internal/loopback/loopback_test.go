package loopback

import "testing"

// The loopback addresses are 127.0.0.0/8 and ::1 (RFC 1122, RFC 4291), and
// "localhost" names this machine in any case (RFC 6761, RFC 4343); all
// recalled from memory.
func TestHost(t *testing.T) {
	for host, want := range map[string]bool{
		"localhost": true, "LocalHost": true, "127.0.0.1": true, "127.8.9.10": true, "::1": true, "[::1]": true,
		"0.0.0.0": false, "::": false, "[::]": false, "192.0.2.1": false, "example.org": false, "localhost.example.org": false,
		"": false, "[]": false, "::ffff:192.0.2.1": false,
	} {
		if got := Host(host); got != want {
			t.Errorf("Host(%q) = %v, want %v", host, got, want)
		}
	}
}
