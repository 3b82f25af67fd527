package server

import (
	"crypto/subtle"
	"crypto/tls"
	"fmt"
	"slices"
	"strings"

	natsserver "github.com/nats-io/nats-server/v2/server"

	"fvsweep/coordinator/client"
	"fvsweep/sweep/wire"
)

// Who may do what on NATS: one list per role (wire.Role), scoped to the
// names of one prefix. The embedded server gives them to the holders of
// the role's secret (Access); deploy/nats/common.conf is generated from
// them (CommonConf; access_test.go holds the file equal).
//
//   - operator: the coordinator. Its own subjects, the JetStream API of its
//     four streams (jobs, results, the cancel bucket, the snapshot store)
//     and their consumers, nothing account-wide but reading the account's
//     figures: no other stream. It answers requests on the submitter's and the
//     reader's inboxes and may do all a worker does (run starts workers on
//     the operator's secret).
//   - submitter: the API verbs submit, cancel and forget, and all a reader
//     may.
//   - reader: the API verbs ping, status and rows, and reading snapshots.
//   - worker: fetch from the workers' consumers (one per solver) and ack,
//     nak or extend its deliveries; publish outcomes, reports and snapshot objects; watch the
//     cancel marks. No purge, no delete, no stream or consumer changes, no
//     API verb, no inbox but its own.

// Rights are the NATS permissions of role r for the names n.
func Rights(r wire.Role, n wire.Names) *natsserver.Permissions {
	var pub, sub []string
	switch r {
	case wire.RoleOperator:
		pub, sub = operatorRights(n)
	case wire.RoleSubmitter:
		pub = append(apiRights(n, wire.VerbSubmit, wire.VerbCancel, wire.VerbForget), readRights(n)...)
		sub = []string{inbox(n, wire.RoleSubmitter), inbox(n, wire.RoleReader)}
	case wire.RoleReader:
		pub = readRights(n)
		sub = []string{inbox(n, wire.RoleReader)}
	case wire.RoleWorker:
		pub = workerRights(n)
		sub = []string{inbox(n, wire.RoleWorker)}
	default:
		panic("server.Rights: unknown role " + string(r))
	}
	return &natsserver.Permissions{
		Publish:   &natsserver.SubjectPermission{Allow: pub},
		Subscribe: &natsserver.SubjectPermission{Allow: sub},
	}
}

// inbox matches every reply subject of role r's connections.
func inbox(n wire.Names, r wire.Role) string { return n.Inbox(r) + ".>" }

// streams are the four JetStream streams of n: jobs, results, the cancel
// bucket's and the snapshot store's.
func streams(n wire.Names) []string {
	return []string{n.JobStream(), n.ResultStream(), n.CancelStream(), n.FieldStream()}
}

func operatorRights(n wire.Names) (pub, sub []string) {
	// $JS.API.INFO reads the account's figures (usage and limits, no
	// names); nats.go asks for them before it creates a key-value bucket.
	pub = []string{n.AllFilter(), "$JS.API.INFO"}
	for _, s := range streams(n) {
		pub = append(pub,
			"$JS.API.STREAM.*."+s,        // info, create, update, delete, purge
			"$JS.API.STREAM.MSG.*."+s,    // get, delete
			"$JS.API.DIRECT.GET."+s,      // get by sequence
			"$JS.API.DIRECT.GET."+s+".>", // last message of a subject
			"$JS.API.CONSUMER.*."+s+".>", // create, info, delete
			"$JS.API.CONSUMER.MSG.NEXT."+s+".*",
			"$JS.ACK."+s+".>",
			"$JS.FC."+s+".>",
		)
	}
	pub = append(pub, "$KV."+n.CancelBucket()+".>", "$O."+n.FieldBucket()+".>",
		inbox(n, wire.RoleSubmitter), inbox(n, wire.RoleReader))
	sub = []string{n.AllFilter(), maxDeliveriesSubject(n)}
	for _, r := range wire.Roles {
		sub = append(sub, inbox(n, r))
	}
	return pub, sub
}

// apiRights are the request subjects of verbs.
func apiRights(n wire.Names, verbs ...string) []string {
	var out []string
	for _, v := range verbs {
		out = append(out, n.API(v))
	}
	return out
}

// readRights: status and rows, and a snapshot object read (its meta by a
// direct get, its chunks through an ordered consumer on the chunk
// subjects).
func readRights(n wire.Names) []string {
	obj, o := n.FieldStream(), "$O."+n.FieldBucket()
	return append(apiRights(n, wire.VerbPing, wire.VerbStatus, wire.VerbRows),
		"$JS.API.STREAM.INFO."+obj,
		"$JS.API.DIRECT.GET."+obj+"."+o+".M.>",
		"$JS.API.CONSUMER.CREATE."+obj+".*."+o+".C.>",
		// The read deletes its consumer at the end; the snapshot store
		// has no consumers but those of reads.
		"$JS.API.CONSUMER.DELETE."+obj+".*",
		"$JS.FC."+obj+".>",
	)
}

// workerRights: the workers' consumers (every consumer of the jobs stream
// is one: fv2d's and one per outside program and version, which the
// coordinator creates), the cancel marks' watch, snapshot objects,
// outcomes and reports.
func workerRights(n wire.Names) []string {
	jobs := n.JobStream()
	kv, obj := n.CancelStream(), n.FieldStream()
	return []string{
		"$JS.API.CONSUMER.INFO." + jobs + ".*",
		"$JS.API.CONSUMER.MSG.NEXT." + jobs + ".*",
		"$JS.ACK." + jobs + ".*.>",
		"$JS.API.STREAM.INFO." + kv,
		"$JS.API.CONSUMER.CREATE." + kv + ".*.$KV." + n.CancelBucket() + ".>",
		// A watch deletes its own consumer when it stops; the cancel
		// bucket has no other consumers, and a watch deleted under another
		// worker is made again by nats.go's ordered consumer.
		"$JS.API.CONSUMER.DELETE." + kv + ".*",
		"$JS.FC." + kv + ".>",
		"$JS.API.STREAM.INFO." + obj,
		"$JS.API.DIRECT.GET." + obj + ".$O." + n.FieldBucket() + ".M.>",
		"$O." + n.FieldBucket() + ".>",
		n.ResultFilter(),
		n.WorkerFilter(),
	}
}

func maxDeliveriesSubject(n wire.Names) string {
	return fmt.Sprintf("$JS.EVENT.ADVISORY.CONSUMER.MAX_DELIVERIES.%s.*", n.JobStream())
}

// secretNames are, per role, the environment variable a cluster node
// (deploy/nats) reads the role's password from and serve's flag for it.
var secretNames = map[wire.Role]struct{ env, flag string }{
	wire.RoleOperator:  {"FVSWEEP_OPERATOR_TOKEN", "token"},
	wire.RoleSubmitter: {"FVSWEEP_SUBMIT_TOKEN", "submit-token"},
	wire.RoleReader:    {"FVSWEEP_READ_TOKEN", "read-token"},
	wire.RoleWorker:    {"FVSWEEP_WORKER_TOKEN", "worker-token"},
}

// SecretEnv is the environment variable a cluster node (deploy/nats) reads
// the password of role r's user from; serve reads the submitter's, the
// reader's and the workers' secrets from the same variables.
func SecretEnv(r wire.Role) string { return secretNames[r].env }

// CommonConf is the users-and-rights part of deploy/nats/common.conf for
// the names n: one permissions block per role and one user per role, named
// after it, whose password is the environment variable SecretEnv(role).
func CommonConf(n wire.Names) string {
	var b strings.Builder
	list := func(indent, key string, subjects []string) {
		fmt.Fprintf(&b, "%s%s: [\n", indent, key)
		for _, s := range subjects {
			fmt.Fprintf(&b, "%s  %q\n", indent, s)
		}
		fmt.Fprintf(&b, "%s]\n", indent)
	}
	for _, r := range wire.Roles {
		p := Rights(r, n)
		fmt.Fprintf(&b, "%s_rights: {\n", r)
		list("  ", "publish", p.Publish.Allow)
		list("  ", "subscribe", p.Subscribe.Allow)
		b.WriteString("}\n\n")
	}
	b.WriteString("authorization {\n  users: [\n")
	for _, r := range wire.Roles {
		fmt.Fprintf(&b, "    { user: %s, password: $%s, permissions: $%s_rights }\n", r, SecretEnv(r), r)
	}
	b.WriteString("  ]\n}\n")
	return b.String()
}

// Access says who may connect to the embedded server. With no Token the
// server takes anyone, with every right (it must then listen on loopback
// only).
type Access struct {
	// Token is the operator's secret (the coordinator's and the person's
	// who runs it). A client sends a secret as a bare token, or as the
	// password of the user named after its role ("operator", "submitter",
	// "reader", "worker").
	Token string
	// SubmitToken, ReadToken and WorkerToken, where set, are the secrets of
	// the submitter, reader and worker roles. Each needs Token, and all
	// the secrets given must differ.
	SubmitToken, ReadToken, WorkerToken string
	// Names are the names the rights are scoped to.
	Names wire.Names
}

// secret is role r's secret in a ("" where the role has none).
func (a Access) secret(r wire.Role) string {
	switch r {
	case wire.RoleOperator:
		return a.Token
	case wire.RoleSubmitter:
		return a.SubmitToken
	case wire.RoleReader:
		return a.ReadToken
	case wire.RoleWorker:
		return a.WorkerToken
	}
	return ""
}

// check refuses secrets that would give a role the rights of another.
func (a Access) check() error {
	var given []string
	for _, r := range wire.Roles[1:] {
		if a.secret(r) != "" && a.Token == "" {
			return fmt.Errorf("--%s needs --token: the operator's own secret", secretNames[r].flag)
		}
	}
	for _, r := range wire.Roles {
		s := a.secret(r)
		if s == "" {
			continue
		}
		if slices.Contains(given, s) {
			return fmt.Errorf("the %s secret equals another role's: each role needs a secret of its own", r)
		}
		given = append(given, s)
	}
	return nil
}

// tokenAuth checks a connecting client's token (or user and password)
// against Access and gives it the matching role's rights.
type tokenAuth struct {
	a      Access
	rights map[wire.Role]*natsserver.Permissions
}

func newTokenAuth(a Access) *tokenAuth {
	t := &tokenAuth{a: a, rights: map[wire.Role]*natsserver.Permissions{}}
	for _, r := range wire.Roles {
		t.rights[r] = Rights(r, a.Names)
	}
	return t
}

func same(a, b string) bool { return b != "" && subtle.ConstantTimeCompare([]byte(a), []byte(b)) == 1 }

// Check implements the NATS server's Authentication.
func (t *tokenAuth) Check(c natsserver.ClientAuthentication) bool {
	o := c.GetOpts()
	secret, user := o.Token, o.Username
	if user != "" {
		secret = o.Password
	}
	for _, r := range wire.Roles {
		if (user == "" || user == string(r)) && same(secret, t.a.secret(r)) {
			c.RegisterUser(&natsserver.User{Username: string(r), Permissions: t.rights[r]})
			return true
		}
	}
	return false
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
