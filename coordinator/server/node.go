package server

import (
	"fmt"
	"net/url"
	"os"
	"time"

	natsserver "github.com/nats-io/nats-server/v2/server"

	"fvsweep/coordinator/internal/loopback"
)

// RouteUser is the user name of the routes between the nodes of a cluster
// started by StartNode with a route token.
const RouteUser = "fvsweep-route"

// StartNode starts a NATS server from a NATS configuration file (those in
// deploy/nats, or any other) and waits until it accepts connections. It
// adds what a plain configuration file cannot say:
//
//   - with the environment variable FVSWEEP_ROUTE_TOKEN set, the routes
//     between the nodes authenticate as RouteUser with that token (both the
//     accepting side and every configured route);
//   - a server that listens for clients on an address other than loopback
//     must have client authorization configured, or it is refused.
//
// The server logs to stderr as nats-server does. The caller stops it with
// Shutdown and WaitForShutdown.
func StartNode(configFile string) (*natsserver.Server, error) {
	opts, err := natsserver.ProcessConfigFile(configFile)
	if err != nil {
		return nil, fmt.Errorf("node config: %w", err)
	}
	if tok := os.Getenv("FVSWEEP_ROUTE_TOKEN"); tok != "" && opts.Cluster.Port != 0 {
		opts.Cluster.Username, opts.Cluster.Password = RouteUser, tok
		for i, r := range opts.Routes {
			u := *r
			u.User = url.UserPassword(RouteUser, tok)
			opts.Routes[i] = &u
		}
	}
	host := opts.Host
	if host == "" {
		host = "0.0.0.0" // nats-server's default
	}
	authorized := len(opts.Users) > 0 || len(opts.Nkeys) > 0 || opts.Authorization != "" || opts.Username != "" ||
		len(opts.TrustedOperators) > 0 || len(opts.TrustedKeys) > 0
	if !loopback.Host(host) && !authorized {
		return nil, fmt.Errorf("node config %s: clients may connect on %s without credentials; add an authorization block (see deploy/nats/common.conf) or listen on 127.0.0.1", configFile, host)
	}
	opts.NoSigs = true
	s, err := natsserver.NewServer(opts)
	if err != nil {
		return nil, fmt.Errorf("node config %s: %w", configFile, err)
	}
	s.ConfigureLogger()
	go s.Start()
	if !s.ReadyForConnections(30 * time.Second) {
		s.Shutdown()
		return nil, fmt.Errorf("nats node %s did not become ready", opts.ServerName)
	}
	return s, nil
}
