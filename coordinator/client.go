package coordinator

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"fvsweep/sweep/wire"
	"os"
	"time"

	"github.com/nats-io/nats.go"
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
	// Other asynchronous errors are printed to stderr.
	QuietDenied bool
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
			if !o.QuietDenied || !errors.Is(err, nats.ErrPermissionViolation) {
				fmt.Fprintf(os.Stderr, "fvsweep: %s: %v\n", o.Name, err)
			}
		}),
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

// ErrNoCoordinator is returned (wrapped) by the Client when no coordinator
// answers on the connection.
var ErrNoCoordinator = errors.New("no coordinator is answering")

// Client sends the API requests of the commands to a running coordinator.
type Client struct {
	nc    *nats.Conn
	names wire.Names
	// Timeout bounds a request (default 10 s); Submit waits up to ten times
	// as long, since a large sweep takes a while to queue.
	Timeout time.Duration
}

// NewClient returns a client on nc.
func NewClient(nc *nats.Conn, names wire.Names) *Client {
	return &Client{nc: nc, names: names, Timeout: 10 * time.Second}
}

// request sends req to verb and decodes the reply into rep.
func (c *Client) request(ctx context.Context, verb string, timeout time.Duration, req, rep any) error {
	data, err := json.Marshal(req)
	if err != nil {
		return err
	}
	ctx, cancel := context.WithTimeout(ctx, timeout)
	defer cancel()
	m, err := requestChecked(ctx, c.nc, c.names.API(verb), data)
	if errors.Is(err, nats.ErrPermissionViolation) {
		return fmt.Errorf("%s: %w", verb, err)
	}
	if errors.Is(err, nats.ErrNoResponders) || errors.Is(err, context.DeadlineExceeded) || errors.Is(err, nats.ErrTimeout) {
		return fmt.Errorf("%s: %w (%v)", verb, ErrNoCoordinator, err)
	}
	if err != nil {
		return fmt.Errorf("%s: %w", verb, err)
	}
	return wire.Decode(verb+" reply", m.Data, rep)
}

func replyErr(s string) error {
	if s == "" {
		return nil
	}
	return errors.New(s)
}

// Ping checks that a coordinator answers and returns its store's path.
func (c *Client) Ping(ctx context.Context) (string, error) {
	ctx, cancel := context.WithTimeout(ctx, c.Timeout)
	defer cancel()
	m, err := requestChecked(ctx, c.nc, c.names.API(wire.VerbPing), nil)
	if errors.Is(err, nats.ErrPermissionViolation) {
		return "", fmt.Errorf("ping: %w", err)
	}
	if err != nil {
		return "", fmt.Errorf("ping: %w (%v)", ErrNoCoordinator, err)
	}
	return string(m.Data), nil
}

// Status asks for the status of sweep name ("" for all) and the live workers.
func (c *Client) Status(ctx context.Context, name string) (wire.StatusReply, error) {
	var rep wire.StatusReply
	if err := c.request(ctx, wire.VerbStatus, c.Timeout, wire.SweepRequest{Sweep: name}, &rep); err != nil {
		return rep, err
	}
	return rep, replyErr(rep.Error)
}

// Submit sends a spec's source to be expanded and queued.
func (c *Client) Submit(ctx context.Context, req wire.SubmitRequest) (wire.SubmitReply, error) {
	var rep wire.SubmitReply
	if err := c.request(ctx, wire.VerbSubmit, 10*c.Timeout, req, &rep); err != nil {
		return rep, err
	}
	return rep, replyErr(rep.Error)
}

// Cancel cancels sweep name.
func (c *Client) Cancel(ctx context.Context, name string) (wire.CancelReply, error) {
	var rep wire.CancelReply
	if err := c.request(ctx, wire.VerbCancel, c.Timeout, wire.SweepRequest{Sweep: name}, &rep); err != nil {
		return rep, err
	}
	return rep, replyErr(rep.Error)
}

// Rows fetches every job of sweep name with its state; the coordinator
// sends them in chunks.
func (c *Client) Rows(ctx context.Context, name string) ([]wire.Row, error) {
	rows, _, err := c.rows(ctx, name)
	return rows, err
}

// RowsSpec is Rows and the sweep's spec as last submitted (file name and
// TOML source), for study settings such as design orders.
func (c *Client) RowsSpec(ctx context.Context, name string) (rows []wire.Row, specFile, spec string, err error) {
	rows, first, err := c.rows(ctx, name)
	return rows, first.SpecFile, first.Spec, err
}

func (c *Client) rows(ctx context.Context, name string) ([]wire.Row, wire.RowsReply, error) {
	var first wire.RowsReply
	inbox := c.nc.NewRespInbox()
	sub, err := c.nc.SubscribeSync(inbox)
	if err != nil {
		return nil, first, err
	}
	defer sub.Unsubscribe()
	sub.SetPendingLimits(-1, -1)
	data, _ := json.Marshal(wire.RowsRequest{Sweep: name})
	if err := c.nc.PublishRequest(c.names.API(wire.VerbRows), inbox, data); err != nil {
		return nil, first, err
	}
	var rows []wire.Row
	for seq := 0; ; seq++ {
		ctx, cancel := context.WithTimeout(ctx, c.Timeout)
		m, err := sub.NextMsgWithContext(ctx)
		cancel()
		if err != nil {
			if seq == 0 {
				return nil, first, fmt.Errorf("rows: %w (%v)", ErrNoCoordinator, err)
			}
			return nil, first, fmt.Errorf("rows: after %d chunks: %w", seq, err)
		}
		if len(m.Data) == 0 && m.Header.Get("Status") == "503" {
			return nil, first, fmt.Errorf("rows: %w (no responders)", ErrNoCoordinator)
		}
		var rep wire.RowsReply
		if err := wire.Decode("rows reply", m.Data, &rep); err != nil {
			return nil, first, err
		}
		if rep.Error != "" {
			return nil, first, errors.New(rep.Error)
		}
		if rep.Seq != seq {
			return nil, first, fmt.Errorf("rows: chunk %d arrived as number %d", rep.Seq, seq)
		}
		if seq == 0 {
			first = rep
		}
		rows = append(rows, rep.Rows...)
		if rep.Last {
			return rows, first, nil
		}
	}
}
