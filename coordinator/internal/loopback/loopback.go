// Package loopback says which hosts only ever mean this machine: the test
// the embedded NATS server, a cluster node and the status page make before
// they listen, or answer, without credentials.
package loopback

import (
	"net"
	"strings"
)

// Host reports whether host, a name or an address with or without the
// brackets of an IPv6 literal, only ever means this machine: "localhost" in
// any case or a loopback address (127.0.0.0/8, ::1).
func Host(host string) bool {
	host = strings.TrimSuffix(strings.TrimPrefix(host, "["), "]")
	if strings.EqualFold(host, "localhost") {
		return true
	}
	ip := net.ParseIP(host)
	return ip != nil && ip.IsLoopback()
}
