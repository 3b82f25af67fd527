package client

import (
	"errors"
	"fmt"
	"os"
	"time"

	"github.com/hashicorp/go-hclog"
	"github.com/nats-io/nats.go"

	"fvsweep/sweep/wire"
)

// DialOptions say how a command, a worker or a coordinator connects to NATS.
// Every connection of fvsweep is made by Dial, so that credentials and TLS
// settings are added in one place.
type DialOptions struct {
	// URL is a NATS URL, or a comma-separated list of a cluster's URLs.
	URL string
	// InProcess, if set, connects to an embedded server without a socket.
	InProcess nats.InProcessConnProvider
	// Name is the connection name the server shows.
	Name string
	// Role is whom the connection acts for; its replies arrive under the
	// role's inbox prefix Names.Inbox(Role), the only inbox the role may
	// read. Empty: nats.go's default inbox "_INBOX", for servers without
	// fvsweep's rights.
	Role  wire.Role
	Names wire.Names
	// Token authenticates with a token, if not empty; with User set it is
	// that user's password instead.
	Token string
	User  string
	// CredsFile is a NATS credentials file (user JWT and nkey seed) and
	// NKeyFile a file holding an nkey seed, for clusters set up with them.
	CredsFile string
	NKeyFile  string
	// TLS: CA verifies the server; Cert and Key are a client certificate.
	TLS TLSFiles
	// Timeout bounds the first connection (default 5 s).
	Timeout time.Duration
	// QuietDenied leaves permissions violations unprinted: set it for the
	// connections of the Client, whose requests report them as errors.
	// Other asynchronous errors are printed to stderr, or logged to Log.
	QuietDenied bool
	// Log, if set, receives the asynchronous errors and the connection's
	// losses of the server and reconnections, with their time (a worker's
	// and a coordinator's log).
	Log hclog.Logger
}

// Dial connects to NATS. A worker or coordinator keeps reconnecting for as
// long as the process runs; the first connection fails with an error naming
// the URL.
func Dial(o DialOptions) (*nats.Conn, error) {
	if o.Timeout <= 0 {
		o.Timeout = 5 * time.Second
	}
	opts := []nats.Option{
		nats.Name(o.Name),
		nats.Timeout(o.Timeout),
		nats.MaxReconnects(-1),
		nats.ReconnectWait(500 * time.Millisecond),
		nats.ErrorHandler(func(_ *nats.Conn, _ *nats.Subscription, err error) {
			switch {
			case o.QuietDenied && errors.Is(err, nats.ErrPermissionViolation):
			case o.Log != nil:
				o.Log.Warn("nats", "connection", o.Name, "error", err)
			default:
				fmt.Fprintf(os.Stderr, "fvsweep: %s: %v\n", o.Name, err)
			}
		}),
	}
	if o.Log != nil {
		opts = append(opts,
			nats.DisconnectErrHandler(func(_ *nats.Conn, err error) {
				if err != nil { // nil: closed on purpose
					o.Log.Warn("lost the NATS server; reconnecting", "connection", o.Name, "error", err)
				}
			}),
			nats.ReconnectHandler(func(nc *nats.Conn) {
				o.Log.Info("reconnected to the NATS server", "connection", o.Name, "url", nc.ConnectedUrlRedacted())
			}))
	}
	if o.Role != "" {
		opts = append(opts, nats.CustomInboxPrefix(o.Names.Inbox(o.Role)))
	}
	auth, err := o.authOptions()
	if err != nil {
		return nil, err
	}
	opts = append(opts, auth...)
	url := o.URL
	if o.InProcess != nil {
		opts = append(opts, nats.InProcessServer(o.InProcess))
		url = "" // nats.go ignores the URL
	} else if url == "" {
		return nil, errors.New("no NATS URL (--nats or FVSWEEP_NATS)")
	}
	nc, err := nats.Connect(url, opts...)
	if err != nil {
		if url == "" {
			url = "embedded server"
		}
		if errors.Is(err, nats.ErrAuthorization) || errors.Is(err, nats.ErrAuthExpired) || errors.Is(err, nats.ErrAuthRevoked) {
			return nil, fmt.Errorf("connecting to NATS at %s: the server refused the credentials (%s): %w", url, o.credentialsSaid(), err)
		}
		return nil, fmt.Errorf("connecting to NATS at %s: %w", url, err)
	}
	return nc, nil
}

// authOptions are the nats.go options for the credentials and TLS files.
func (o DialOptions) authOptions() ([]nats.Option, error) {
	var opts []nats.Option
	n := 0
	for _, s := range []string{o.Token, o.CredsFile, o.NKeyFile} {
		if s != "" {
			n++
		}
	}
	if n > 1 {
		return nil, errors.New("give one of --token, --creds and --nkey")
	}
	switch {
	case o.User != "":
		opts = append(opts, nats.UserInfo(o.User, o.Token))
	case o.Token != "":
		opts = append(opts, nats.Token(o.Token))
	case o.CredsFile != "":
		opts = append(opts, nats.UserCredentials(o.CredsFile))
	case o.NKeyFile != "":
		opt, err := nats.NkeyOptionFromSeed(o.NKeyFile)
		if err != nil {
			return nil, fmt.Errorf("--nkey %s: %w", o.NKeyFile, err)
		}
		opts = append(opts, opt)
	}
	if o.TLS.CA != "" {
		opts = append(opts, nats.RootCAs(o.TLS.CA))
	}
	if o.TLS.Cert != "" || o.TLS.Key != "" {
		if o.TLS.Cert == "" || o.TLS.Key == "" {
			return nil, errors.New("a client certificate needs both --tls-cert and --tls-key")
		}
		opts = append(opts, nats.ClientCert(o.TLS.Cert, o.TLS.Key))
	}
	return opts, nil
}

// credentialsSaid names the credentials a refused connection presented.
func (o DialOptions) credentialsSaid() string {
	switch {
	case o.User != "":
		return fmt.Sprintf("user %q with --token", o.User)
	case o.Token != "":
		return "--token"
	case o.CredsFile != "":
		return "--creds " + o.CredsFile
	case o.NKeyFile != "":
		return "--nkey " + o.NKeyFile
	}
	return "none given: the server wants --token, --creds or --nkey (or FVSWEEP_TOKEN)"
}

// TLSFiles are the PEM files of a TLS setup. On the server, Cert and Key
// are its certificate and CA, if set, verifies client certificates (which
// are then required). On a client, CA verifies the server and Cert and Key
// are its own certificate, if the server asks for one.
type TLSFiles struct {
	Cert, Key, CA string
}
