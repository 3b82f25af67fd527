package server

import (
	"crypto/subtle"
	"crypto/tls"
	"fmt"
	"net"

	natsserver "github.com/nats-io/nats-server/v2/server"

	"fvsweep/coordinator/client"
	"fvsweep/sweep/wire"
)

// Who may do what on NATS. The same two sets of rights are written out in
// deploy/nats/common.conf for a cluster (access_test.go holds them equal):
//
//   - the coordinator (and the client commands: submit, status, cancel,
//     table, export) may do everything fvsweep does, nothing outside its
//     names;
//   - a worker may pull jobs through the shared consumer and ack them,
//     publish outcomes, reports and snapshots, watch the cancel marks and
//     ask for status and rows, but not publish a job, submit or cancel a
//     sweep, or change a stream or consumer.

// CoordinatorRights are the NATS permissions of the coordinator user.
func CoordinatorRights(n wire.Names) *natsserver.Permissions {
	return &natsserver.Permissions{
		Publish: &natsserver.SubjectPermission{Allow: []string{
			prefix(n) + ".>", "$JS.API.>", "$JS.ACK.>", "$JS.FC.>",
			"$KV." + n.CancelBucket() + ".>", "$O." + n.FieldBucket() + ".>", "_INBOX.>",
		}},
		Subscribe: &natsserver.SubjectPermission{Allow: []string{
			prefix(n) + ".>", maxDeliveriesSubject(n), "_INBOX.>",
		}},
	}
}

// WorkerRights are the NATS permissions of the worker user.
func WorkerRights(n wire.Names) *natsserver.Permissions {
	jobs, cons := n.JobStream(), n.WorkerConsumer()
	kv, obj := "KV_"+n.CancelBucket(), "OBJ_"+n.FieldBucket()
	return &natsserver.Permissions{
		Publish: &natsserver.SubjectPermission{
			Allow: []string{
				"$JS.API.INFO",
				"$JS.API.CONSUMER.INFO." + jobs + "." + cons,
				"$JS.API.CONSUMER.MSG.NEXT." + jobs + "." + cons,
				"$JS.ACK." + jobs + "." + cons + ".>",
				"$JS.API.STREAM.INFO." + kv,
				"$JS.API.CONSUMER.CREATE." + kv + ".>",
				"$JS.API.CONSUMER.DELETE." + kv + ".>",
				"$JS.FC." + kv + ".>",
				"$JS.API.STREAM.INFO." + obj,
				"$JS.API.STREAM.MSG.GET." + obj,
				"$JS.API.DIRECT.GET." + obj + ".>",
				"$JS.API.STREAM.PURGE." + obj,
				"$O." + n.FieldBucket() + ".>",
				n.ResultFilter(),
				n.WorkerFilter(),
				n.API(wire.VerbPing), n.API(wire.VerbStatus), n.API(wire.VerbRows),
			},
			Deny: []string{n.JobFilter(""), n.API(wire.VerbSubmit), n.API(wire.VerbCancel)},
		},
		Subscribe: &natsserver.SubjectPermission{Allow: []string{"_INBOX.>"}},
	}
}

func prefix(n wire.Names) string {
	if n.Prefix == "" {
		return wire.DefaultPrefix
	}
	return n.Prefix
}

func maxDeliveriesSubject(n wire.Names) string {
	return fmt.Sprintf("$JS.EVENT.ADVISORY.CONSUMER.MAX_DELIVERIES.%s.%s", n.JobStream(), n.WorkerConsumer())
}

// Access says who may connect to the embedded server. With no Token the
// server takes anyone (it must then listen on loopback only).
type Access struct {
	// Token is the coordinator's secret: full rights (CoordinatorRights).
	// A client sends it as a bare token, or as the password of user
	// "coordinator".
	Token string
	// WorkerToken, if set, is the workers' secret: WorkerRights only. A
	// client sends it as a bare token or as the password of user "worker".
	// Without it, workers use Token.
	WorkerToken string
	// Names are the names the rights are scoped to.
	Names wire.Names
}

// tokenAuth checks a connecting client's token (or user and password)
// against Access and gives it the matching rights.
type tokenAuth struct {
	a     Access
	coord *natsserver.Permissions
	work  *natsserver.Permissions
}

func newTokenAuth(a Access) *tokenAuth {
	return &tokenAuth{a: a, coord: CoordinatorRights(a.Names), work: WorkerRights(a.Names)}
}

func same(a, b string) bool { return b != "" && subtle.ConstantTimeCompare([]byte(a), []byte(b)) == 1 }

// Check implements the NATS server's Authentication.
func (t *tokenAuth) Check(c natsserver.ClientAuthentication) bool {
	o := c.GetOpts()
	secret, user := o.Token, o.Username
	if user != "" {
		secret = o.Password
	}
	switch {
	case (user == "" || user == "coordinator") && same(secret, t.a.Token):
		c.RegisterUser(&natsserver.User{Username: "coordinator", Permissions: t.coord})
	case (user == "" || user == "worker") && same(secret, t.a.WorkerToken):
		c.RegisterUser(&natsserver.User{Username: "worker", Permissions: t.work})
	default:
		return false
	}
	return true
}

// IsLoopback reports whether host (a name or an address) only ever means
// this machine: "localhost" or a loopback address.
func IsLoopback(host string) bool {
	if host == "localhost" {
		return true
	}
	ip := net.ParseIP(host)
	return ip != nil && ip.IsLoopback()
}

// serverTLS builds the server side of f.
func serverTLS(f client.TLSFiles) (*tls.Config, error) {
	if f.Cert == "" || f.Key == "" {
		return nil, fmt.Errorf("TLS: the server needs both --tls-cert and --tls-key")
	}
	cfg, err := natsserver.GenTLSConfig(&natsserver.TLSConfigOpts{CertFile: f.Cert, KeyFile: f.Key, CaFile: f.CA, Verify: f.CA != ""})
	if err != nil {
		return nil, fmt.Errorf("TLS: %w", err)
	}
	return cfg, nil
}
