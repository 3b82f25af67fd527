package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"os"

	"github.com/hashicorp/go-hclog"
	natsserver "github.com/nats-io/nats-server/v2/server"
	"github.com/nats-io/nats.go"

	"fvsweep/coordinator"
	"fvsweep/coordinator/client"
	"fvsweep/coordinator/datadir"
	"fvsweep/coordinator/server"
	"fvsweep/coordinator/web"
	"fvsweep/store"
	"fvsweep/sweep/job"
	"fvsweep/sweep/wire"
)

func init() {
	register(command{name: "serve", run: runServe,
		summary: "run the coordinator (and an embedded NATS server)",
		about: `Runs the coordinator of the store in DIR: it takes submissions, queues jobs
on NATS JetStream, stores the outcomes workers send back and answers status,
table and export. Without --nats it starts an embedded NATS server with its
JetStream files in DIR/nats, listening on --listen. Workers join with
'fvsweep worker --nats URL'. The client URL is written to
DIR/coordinator.url while it runs, so that the other commands find it.
SIGINT or SIGTERM stops it after storing the outcomes in hand.`,
		flags: flagSet([]flagDoc{
			{"listen", "HOST:PORT", "client address of the embedded server; any address but loopback needs --token-file", "127.0.0.1:4222"},
		}, limitDocs, webDocs, serverDocs, boundDocs, commonFlags(true)),
		examples: []string{
			"fvsweep serve --data fvsweep-data",
			"fvsweep serve --listen 0.0.0.0:4222 --token-file op.key",
			"fvsweep serve --nats nats://node-1:4222 --user operator --token-file op.key",
		}})
}

// service is a running coordinator with its store and, unless an external
// NATS server is used, its embedded server.
type service struct {
	srv   *natsserver.Server // nil with --nats
	nc    *nats.Conn
	db    *store.DB
	coord *coordinator.Coordinator
	url   string // client URL
	log   hclog.Logger
	web   *web.Server // the status page, if --http
	// readToken is the readers' secret of the embedded server, which the
	// status page takes when it has no --http-token.
	readToken string

	dir  datadir.Dir
	stop context.CancelFunc
	done chan error
}

// startService opens the store read-write, starts the embedded server on
// listen (unless c.nats is set), connects, and runs a coordinator.
//
// tune, if given, adjusts the coordinator's configuration (boundFlags.apply).
func startService(c *common, sf *serverFlags, listen string, log hclog.Logger, onStored func([]job.Outcome), tune ...func(*coordinator.Config)) (s *service, err error) {
	if err := sf.check(); err != nil {
		return nil, err
	}
	// A data directory made here for a service that then fails to start
	// is removed again: it holds nothing but empty files.
	if _, serr := os.Stat(c.data); errors.Is(serr, os.ErrNotExist) {
		defer func() {
			if err != nil {
				os.RemoveAll(c.data)
			}
		}()
	}
	db, err := store.Open(c.dir().DB(), store.Options{})
	if errors.Is(err, store.ErrInUse) {
		return nil, fmt.Errorf("%w: another fvsweep run or serve uses %s; send it work with 'fvsweep submit'", err, c.data)
	}
	if err != nil {
		return nil, err
	}
	s = &service{db: db, log: log, dir: c.dir(), readToken: sf.readToken}
	o := c.dialOptions(c.nats, "fvsweep coordinator", wire.RoleOperator)
	o.Log = log.Named("nats")
	if c.nats == "" {
		s.srv, err = server.Start(server.Options{Dir: c.dir().NATS(), Listen: listen, Log: log,
			Access: sf.access(c), TLS: c.tls})
		if err != nil {
			db.Close()
			return nil, err
		}
		o.InProcess, o.TLS = s.srv, client.TLSFiles{}
		s.url = s.srv.ClientURL()
	} else {
		s.url = c.nats
	}
	if s.nc, err = client.Dial(o); err != nil {
		s.close()
		return nil, err
	}
	ctx, cancel := context.WithCancel(context.Background())
	cfg := coordinator.Config{
		Log: log.Named("coordinator"), ParseSpec: c.parseSpec, OnStored: onStored, Delivery: sf.delivery(),
	}
	for _, f := range tune {
		f(&cfg)
	}
	s.coord, err = coordinator.New(ctx, s.nc, db, cfg)
	if err != nil {
		cancel()
		s.close()
		return nil, err
	}
	s.stop, s.done = cancel, make(chan error, 1)
	go func() { s.done <- s.coord.Run(ctx) }()
	select {
	case <-s.coord.Ready():
	case err := <-s.done: // Run failed before it could answer
		s.stop, s.done = nil, nil
		cancel()
		s.close()
		return nil, err
	}
	if err := s.dir.WriteURL(s.url); err != nil {
		log.Warn("cannot write the coordinator URL; other commands need --nats", "file", s.dir.URLFile(), "error", err)
	}
	return s, nil
}

// dial connects a local client (a worker of run) to the service's server.
func (s *service) dial(c *common, name string, role wire.Role) (*nats.Conn, error) {
	o := c.dialOptions(s.url, name, role)
	if s.srv != nil {
		o.InProcess, o.TLS = s.srv, client.TLSFiles{}
	}
	return client.Dial(o)
}

// close stops the coordinator (storing the outcomes in hand), the server
// and the store, and removes the URL file.
func (s *service) close() error {
	var err error
	if s.web != nil {
		s.web.Close()
	}
	if s.stop != nil {
		s.stop()
		err = <-s.done
		s.dir.RemoveURL()
	}
	if s.nc != nil {
		s.nc.Close()
	}
	if s.srv != nil {
		s.srv.Shutdown()
		s.srv.WaitForShutdown()
	}
	if cerr := s.db.Close(); err == nil {
		err = cerr
	}
	return err
}

func runServe(args []string) int {
	fs := flag.NewFlagSet("serve", flag.ContinueOnError)
	var c common
	c.register(fs)
	var sf serverFlags
	sf.register(fs)
	var wf webFlags
	wf.register(fs)
	listen := fs.String("listen", "127.0.0.1:4222", "")
	var lf limitFlags
	lf.register(fs)
	var bf boundFlags
	bf.register(fs)
	if _, code, done := parseCommand("serve", fs, args); done {
		return code
	}
	lim, err := lf.limits()
	if err != nil {
		return usageErr("serve", "%v", err)
	}
	c.lim = lim
	tune, err := bf.apply()
	if err != nil {
		return usageErr("serve", "%v", err)
	}
	log, err := c.logger("fvsweep")
	if err != nil {
		return usageErr("serve", "%v", err)
	}
	ctx, release := signals(nil)
	defer release()
	if err := wf.check(&c); err != nil {
		return usageErr("serve", "%v", err)
	}
	s, err := startService(&c, &sf, *listen, log, nil, tune)
	if err != nil {
		return fail("serve: %v", err)
	}
	log.Info("coordinator running", "nats", s.url, "store", c.dir().DB())
	fmt.Printf("coordinator: workers join with: fvsweep worker --nats %s\n", s.url)
	if err := wf.start(s, &c, log); err != nil {
		s.close()
		return fail("serve: %v", err)
	}
	<-ctx.Done()
	log.Info("stopping")
	if err := s.close(); err != nil {
		return fail("serve: %v", err)
	}
	return 0
}
