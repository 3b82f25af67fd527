package datadir

import (
	"context"
	"errors"
	"fmt"
	"os"
	"sort"
	"strings"
	"time"

	"github.com/nats-io/nats.go"

	"fvsweep/coordinator"
	"fvsweep/coordinator/client"
	"fvsweep/coordinator/server"
	"fvsweep/store"
	"fvsweep/sweep/job"
	"fvsweep/sweep/wire"
)

// Source is where a command reads from: the running coordinator, or the
// store opened read-only when none answers.
type Source struct {
	// Client asks the running coordinator; nil when reading the store.
	Client *client.Client
	nc     *nats.Conn
	db     *store.DB
}

// Open finds the data of d: the coordinator when one answers at o.URL, or
// at the URL d holds when o.URL is empty; otherwise the store in d,
// read-only. The store is the fallback only when no server was named: a
// URL given in o (a server the user named) that does not answer, or on
// which no coordinator answers, is an error naming it, since the store in
// d need not be that coordinator's. A URL that d holds may be one a
// coordinator that died left behind, and then the store is read. A server
// that refuses the credentials or the request is an error either way.
func Open(ctx context.Context, d Dir, o client.DialOptions) (*Source, error) {
	named := o.URL != ""
	var coordErr error
	if o.URL = d.CoordinatorURL(o.URL); o.URL != "" {
		o.QuietDenied = true
		nc, err := client.Dial(o)
		if err == nil {
			cl := client.New(nc, wire.Names{})
			cl.Timeout = 3 * time.Second
			if _, err = cl.Ping(ctx); err == nil {
				cl.Timeout = 30 * time.Second
				return &Source{Client: cl, nc: nc}, nil
			}
			nc.Close()
			err = fmt.Errorf("no coordinator answers on the NATS server at %s: %w", o.URL, err)
		}
		if errors.Is(err, nats.ErrPermissionViolation) || errors.Is(err, nats.ErrAuthorization) {
			return nil, err // the server answered: the store is not the fallback
		}
		if named {
			return nil, fmt.Errorf("%w (the store in %s is read only when no server is named)", err, d)
		}
		coordErr = err
	}
	db, err := store.Open(d.DB(), store.Options{ReadOnly: true, Timeout: 2 * time.Second})
	if err != nil {
		if coordErr != nil {
			return nil, fmt.Errorf("%v; and %v", coordErr, err)
		}
		if errors.Is(err, os.ErrNotExist) {
			return nil, fmt.Errorf("no coordinator running and no store at %s (see --data)", d.DB())
		}
		return nil, err
	}
	return &Source{db: db}, nil
}

// Live reports whether s asks a running coordinator.
func (s *Source) Live() bool { return s.Client != nil }

// Close closes the connection or the store.
func (s *Source) Close() {
	if s.nc != nil {
		s.nc.Close()
	}
	if s.db != nil {
		s.db.Close()
	}
}

// Status is the status of sweep name ("" for every sweep) with the live
// workers; read from the store, nothing is running and no worker listed.
func (s *Source) Status(ctx context.Context, name string) (wire.StatusReply, error) {
	if s.Client != nil {
		return s.Client.Status(ctx, name)
	}
	var rep wire.StatusReply
	var err error
	rep.Sweeps, err = coordinator.SweepStatuses(s.db, name, nil, nil)
	return rep, err
}

// Sweep is a sweep's jobs with their states, in dispatch order, and its
// spec as last submitted.
type Sweep struct {
	Name     string
	Rows     []wire.Row
	SpecFile string // the spec's file name
	Spec     string // the spec's TOML source
	// Studies are the resolved study settings the store keeps; nil for a
	// record written before it kept them.
	Studies []job.StudySettings
}

// Sweep reads sweep name.
func (s *Source) Sweep(ctx context.Context, name string) (*Sweep, error) {
	sw := &Sweep{Name: name}
	var err error
	if s.Client != nil {
		sw.Rows, sw.SpecFile, sw.Spec, sw.Studies, err = s.Client.RowsSpec(ctx, name)
		return sw, s.namesIfMissing(ctx, err, name)
	}
	rec, err := s.db.Sweep(name)
	if err != nil {
		return nil, s.namesIfMissing(ctx, err, name)
	}
	sw.SpecFile, sw.Spec, sw.Studies = rec.SpecFile, rec.Spec, rec.Studies
	sw.Rows, err = coordinator.Rows(s.db, name, nil)
	return sw, err
}

// namesIfMissing adds the names of the sweeps there are to err when it
// says that sweep name is not found; other errors, and nil, it returns as
// they are. A coordinator's answer carries the store's error as text,
// which ends in the same words.
func (s *Source) namesIfMissing(ctx context.Context, err error, name string) error {
	if err == nil || !strings.HasSuffix(err.Error(), fmt.Sprintf("sweep %q: %v", name, store.ErrNotFound)) {
		return err
	}
	rep, serr := s.Status(ctx, "")
	if serr != nil {
		return err
	}
	names := make([]string, len(rep.Sweeps))
	for i, sw := range rep.Sweeps {
		names[i] = sw.Sweep
	}
	if len(names) == 0 {
		return fmt.Errorf("%w; no sweep is stored yet", err)
	}
	sort.Strings(names)
	return fmt.Errorf("%w; the sweeps are: %s", err, strings.Join(names, ", "))
}

// ReadSweep opens the data of d (see Open), reads sweep name and closes it.
func ReadSweep(ctx context.Context, d Dir, o client.DialOptions, name string) (*Sweep, error) {
	src, err := Open(ctx, d, o)
	if err != nil {
		return nil, err
	}
	defer src.Close()
	return src.Sweep(ctx, name)
}

// Cancel cancels sweep name through the running coordinator (live true,
// rep says how many queued jobs it dropped), or, with no server named in o
// and none answering, marks it canceled in the store of d for the
// coordinator to apply when it starts: only when no coordinator holds the
// store (the file lock). A server named in o that does not answer is an
// error (see Open), and the store is left alone.
func Cancel(ctx context.Context, d Dir, o client.DialOptions, name string) (rep wire.CancelReply, live bool, err error) {
	src, err := Open(ctx, d, o)
	if err != nil {
		return rep, false, err
	}
	if src.Client != nil {
		defer src.Close()
		rep, err = src.Client.Cancel(ctx, name)
		return rep, true, src.namesIfMissing(ctx, err, name)
	}
	src.Close() // read-only; reopen for writing
	db, err := openToEdit(d)
	if err != nil {
		return rep, false, err
	}
	defer db.Close()
	if err := db.SetCanceled(name, true); err != nil {
		return rep, false, (&Source{db: db}).namesIfMissing(ctx, err, name)
	}
	return rep, false, nil
}

// Snapshot reads the field snapshot ref (see client.FetchField): through
// the NATS server at o.URL, or at the URL d holds, else from the embedded
// server's files in d, opened just for this. A URL given in o that cannot
// be reached is an error; the URL d holds may be one a coordinator that
// died left behind, and then its server's files are free to open.
func Snapshot(ctx context.Context, d Dir, o client.DialOptions, ref string) ([]byte, error) {
	given := o.URL != ""
	if o.URL = d.CoordinatorURL(o.URL); o.URL != "" {
		nc, err := client.Dial(o)
		if err == nil {
			defer nc.Close()
			ctx, cancel := context.WithTimeout(ctx, 30*time.Second)
			defer cancel()
			return client.FetchField(ctx, nc, ref)
		}
		if given {
			return nil, err
		}
	}
	return server.ReadStoredField(d.NATS(), ref)
}

// Forget discards stored outcomes of a sweep (see wire.ForgetRequest)
// through the running coordinator (live true), or, with none answering,
// in the store of d, opened read-write: only when no server is named in o
// (see Open) and no coordinator holds the store (the file lock), so a
// coordinator never misses a forget.
func Forget(ctx context.Context, d Dir, o client.DialOptions, req wire.ForgetRequest) (rep wire.ForgetReply, live bool, err error) {
	src, err := Open(ctx, d, o)
	if err != nil {
		return rep, false, err
	}
	if src.Client != nil {
		defer src.Close()
		rep, err = src.Client.Forget(ctx, req)
		return rep, true, src.namesIfMissing(ctx, err, req.Sweep)
	}
	src.Close() // read-only; reopen for writing
	db, err := openToEdit(d)
	if err != nil {
		return rep, false, err
	}
	defer db.Close()
	rec, err := db.Forget(req.Sweep, coordinator.Selection(req), coordinator.Requester(req.By, "")+" (store opened directly)")
	rep.Forgotten = len(rec.Jobs)
	return rep, false, (&Source{db: db}).namesIfMissing(ctx, err, req.Sweep)
}

// openToEdit opens the existing store of d read-write, for a change made
// while no coordinator runs; it fails at once with store.ErrInUse while a
// coordinator holds it, and creates nothing.
func openToEdit(d Dir) (*store.DB, error) {
	if _, err := os.Stat(d.DB()); err != nil {
		return nil, err
	}
	db, err := store.Open(d.DB(), store.Options{})
	if errors.Is(err, store.ErrInUse) {
		return nil, fmt.Errorf("%w: a coordinator holds %s but does not answer; retry when it does", err, d.DB())
	}
	return db, err
}
