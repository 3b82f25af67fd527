package server

import (
	"fmt"
	"net"
	"os"
	"path/filepath"
	"strconv"
	"time"

	"github.com/hashicorp/go-hclog"
	natsserver "github.com/nats-io/nats-server/v2/server"

	"fvsweep/coordinator/client"
	"fvsweep/coordinator/internal/loopback"
)

// Options configure the embedded NATS server.
type Options struct {
	// Dir holds the JetStream file store (DATA/nats).
	Dir string
	// Listen is HOST:PORT for client connections. Empty means 127.0.0.1 on a
	// random port; port 0 or -1 also means random.
	Listen string
	// Name is the server name (default "fvsweep").
	Name string
	// Log receives the server's notices and errors (nil: discard).
	Log hclog.Logger
	// Access holds the tokens clients must present. Listening on an
	// address other than loopback requires Access.Token.
	Access Access
	// TLS, if set, makes client connections use TLS (see client.TLSFiles).
	TLS client.TLSFiles
}

// Start starts an in-process NATS server with JetStream and file
// storage under o.Dir and waits until it accepts connections. The caller
// shuts it down with Shutdown and WaitForShutdown.
func Start(o Options) (*natsserver.Server, error) {
	host, port := "127.0.0.1", natsserver.RANDOM_PORT
	if o.Listen != "" {
		h, p, err := net.SplitHostPort(o.Listen)
		if err != nil {
			return nil, fmt.Errorf("listen address %q: %w", o.Listen, err)
		}
		n, err := strconv.Atoi(p)
		if err != nil || n < -1 || n > 65535 {
			return nil, fmt.Errorf("listen address %q: bad port %q", o.Listen, p)
		}
		if h != "" {
			host = h
		}
		if n > 0 {
			port = n
		}
	}
	if !loopback.Host(host) && o.Access.Token == "" {
		return nil, fmt.Errorf("listening on %s needs credentials: give --token (and --worker-token, --submit-token, --read-token for the other roles), or listen on 127.0.0.1", net.JoinHostPort(host, strconv.Itoa(port)))
	}
	if err := o.Access.check(); err != nil {
		return nil, err
	}
	name := o.Name
	if name == "" {
		name = "fvsweep"
	}
	opts := &natsserver.Options{
		ServerName: name,
		Host:       host,
		Port:       port,
		JetStream:  true,
		StoreDir:   filepath.Clean(o.Dir),
		NoSigs:     true,
		NoLog:      o.Log == nil,
		// A 100,000-job sweep is published in one go; let the in-process
		// and loopback clients have room.
		MaxPending: 256 << 20,
	}
	if o.Access.Token != "" {
		opts.CustomClientAuthentication = newTokenAuth(o.Access)
	}
	if o.TLS != (client.TLSFiles{}) {
		cfg, err := serverTLS(o.TLS)
		if err != nil {
			return nil, err
		}
		opts.TLSConfig, opts.TLS, opts.TLSVerify = cfg, true, o.TLS.CA != ""
		opts.TLSTimeout = 5
	}
	if err := writable(o.Dir); err != nil {
		return nil, fmt.Errorf("nats server: JetStream files: %w", err)
	}
	s, err := natsserver.NewServer(opts)
	if err != nil {
		return nil, fmt.Errorf("nats server: %w", err)
	}
	log := hclog.NewNullLogger()
	if o.Log != nil {
		log = o.Log.Named("nats")
	}
	// The server reports a failure to start (the port is taken, JetStream
	// cannot use its directory) on its log and stops starting; the first
	// such line ends the wait with its words.
	fatal := make(chan string, 1)
	s.SetLoggerV2(serverLog{l: log, fatal: fatal}, false, false, false)
	go s.Start()
	deadline := time.Now().Add(15 * time.Second)
	for !s.ReadyForConnections(50 * time.Millisecond) {
		select {
		case msg := <-fatal:
			s.Shutdown()
			return nil, fmt.Errorf("nats server on %s: %s", net.JoinHostPort(host, strconv.Itoa(port)), msg)
		default:
		}
		if time.Now().After(deadline) {
			s.Shutdown()
			return nil, fmt.Errorf("nats server on %s did not become ready in 15s (store %s)", net.JoinHostPort(host, strconv.Itoa(port)), o.Dir)
		}
	}
	return s, nil
}

// writable makes dir if it is missing and checks that files can be made
// in it: the server would otherwise fail later, and less clearly.
func writable(dir string) error {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	f, err := os.CreateTemp(dir, ".fvsweep-probe-*")
	if err != nil {
		return fmt.Errorf("%s is not writable: %w", dir, err)
	}
	f.Close()
	return os.Remove(f.Name())
}

// serverLog adapts hclog to the NATS server's logger; server notices are
// debug-level chatter for fvsweep users. A fatal line is also sent to
// fatal, if there is room, for Start to report.
type serverLog struct {
	l     hclog.Logger
	fatal chan<- string
}

func (s serverLog) Noticef(f string, v ...any) { s.l.Debug(fmt.Sprintf(f, v...)) }
func (s serverLog) Warnf(f string, v ...any)   { s.l.Warn(fmt.Sprintf(f, v...)) }
func (s serverLog) Fatalf(f string, v ...any) {
	msg := fmt.Sprintf(f, v...)
	s.l.Error(msg)
	select {
	case s.fatal <- msg:
	default:
	}
}
func (s serverLog) Errorf(f string, v ...any) { s.l.Error(fmt.Sprintf(f, v...)) }
func (s serverLog) Debugf(f string, v ...any) { s.l.Trace(fmt.Sprintf(f, v...)) }
func (s serverLog) Tracef(f string, v ...any) { s.l.Trace(fmt.Sprintf(f, v...)) }
