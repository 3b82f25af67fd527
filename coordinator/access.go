package coordinator

import (
	"context"
	"crypto/subtle"
	"crypto/tls"
	"errors"
	"fmt"
	"fvsweep/sweep/wire"
	"net"
	"strings"
	"time"

	"github.com/nats-io/nats-server/v2/server"
	"github.com/nats-io/nats.go"
)

// Who may do what on NATS. The same two sets of rights are written out in
// deploy/nats/common.conf for a cluster (a test there compares them):
//
//   - the coordinator (and the client commands: submit, status, cancel,
//     table, export) may do everything fvsweep does, nothing outside its
//     names;
//   - a worker may pull jobs through the shared consumer and ack them,
//     publish outcomes, reports and snapshots, watch the cancel marks and
//     ask for status and rows, but not publish a job, submit or cancel a
//     sweep, or change a stream or consumer.

// CoordinatorRights are the NATS permissions of the coordinator user.
func CoordinatorRights(n wire.Names) *server.Permissions {
	return &server.Permissions{
		Publish: &server.SubjectPermission{Allow: []string{
			prefix(n) + ".>", "$JS.API.>", "$JS.ACK.>", "$JS.FC.>",
			"$KV." + n.CancelBucket() + ".>", "$O." + n.FieldBucket() + ".>", "_INBOX.>",
		}},
		Subscribe: &server.SubjectPermission{Allow: []string{
			prefix(n) + ".>", maxDeliveriesSubject(n), "_INBOX.>",
		}},
	}
}

// WorkerRights are the NATS permissions of the worker user.
func WorkerRights(n wire.Names) *server.Permissions {
	jobs, cons := n.JobStream(), n.WorkerConsumer()
	kv, obj := "KV_"+n.CancelBucket(), "OBJ_"+n.FieldBucket()
	return &server.Permissions{
		Publish: &server.SubjectPermission{
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
		Subscribe: &server.SubjectPermission{Allow: []string{"_INBOX.>"}},
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
	coord *server.Permissions
	work  *server.Permissions
}

func newTokenAuth(a Access) *tokenAuth {
	return &tokenAuth{a: a, coord: CoordinatorRights(a.Names), work: WorkerRights(a.Names)}
}

func same(a, b string) bool { return b != "" && subtle.ConstantTimeCompare([]byte(a), []byte(b)) == 1 }

// Check implements server.Authentication.
func (t *tokenAuth) Check(c server.ClientAuthentication) bool {
	o := c.GetOpts()
	secret, user := o.Token, o.Username
	if user != "" {
		secret = o.Password
	}
	switch {
	case (user == "" || user == "coordinator") && same(secret, t.a.Token):
		c.RegisterUser(&server.User{Username: "coordinator", Permissions: t.coord})
	case (user == "" || user == "worker") && same(secret, t.a.WorkerToken):
		c.RegisterUser(&server.User{Username: "worker", Permissions: t.work})
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

// TLSFiles are the PEM files of a TLS setup. On the server, Cert and Key
// are its certificate and CA, if set, verifies client certificates (which
// are then required). On a client, CA verifies the server and Cert and Key
// are its own certificate, if the server asks for one.
type TLSFiles struct {
	Cert, Key, CA string
}

func (f TLSFiles) set() bool { return f.Cert != "" || f.Key != "" || f.CA != "" }

// serverTLS builds the server side of f.
func serverTLS(f TLSFiles) (*tls.Config, error) {
	if f.Cert == "" || f.Key == "" {
		return nil, fmt.Errorf("TLS: the server needs both --tls-cert and --tls-key")
	}
	cfg, err := server.GenTLSConfig(&server.TLSConfigOpts{CertFile: f.Cert, KeyFile: f.Key, CaFile: f.CA, Verify: f.CA != ""})
	if err != nil {
		return nil, fmt.Errorf("TLS: %w", err)
	}
	return cfg, nil
}

// requestChecked is nc.RequestWithContext that fails at once when the
// server refuses the publish with a permissions violation, instead of
// waiting for a reply that cannot come.
func requestChecked(ctx context.Context, nc *nats.Conn, subject string, data []byte) (*nats.Msg, error) {
	before := nc.LastError()
	ctx, cancel := context.WithCancel(ctx)
	defer cancel()
	type reply struct {
		m   *nats.Msg
		err error
	}
	ch := make(chan reply, 1)
	go func() {
		m, err := nc.RequestWithContext(ctx, subject, data)
		ch <- reply{m, err}
	}()
	tick := time.NewTicker(20 * time.Millisecond)
	defer tick.Stop()
	for {
		select {
		case r := <-ch:
			if err := deniedSince(nc, before, subject); err != nil {
				return nil, err
			}
			return r.m, r.err
		case <-tick.C:
			if err := deniedSince(nc, before, subject); err != nil {
				return nil, err
			}
		}
	}
}

// deniedSince returns the connection's last error if it is a permissions
// violation for subject that happened after before was the last error.
func deniedSince(nc *nats.Conn, before error, subject string) error {
	err := nc.LastError()
	if err == nil || err == before || !errors.Is(err, nats.ErrPermissionViolation) || !strings.Contains(err.Error(), `"`+subject+`"`) {
		return nil
	}
	return fmt.Errorf("not allowed with these credentials (a worker token cannot submit or cancel): %w", err)
}
