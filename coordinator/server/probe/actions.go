package probe

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"strings"
	"time"

	"github.com/nats-io/nats.go"
	"github.com/nats-io/nats.go/jetstream"
	"github.com/nats-io/nuid"

	"fvsweep/coordinator/client"
	"fvsweep/sweep/wire"
)

// Action is one thing a credential may try.
type Action struct {
	Name string
	// Allow are the roles that may do it.
	Allow []wire.Role
	// As is the role of the fvsweep command that does it, whose inbox the
	// connection uses where the credential may read it ("" for things no
	// command does: the credential's own inbox).
	As wire.Role
	// Try does it on env's connection.
	Try func(ctx context.Context, env *Env) error
	// Took, if set, tells afterwards, through the operator, whether it
	// took effect: for actions that are several requests, of which the
	// server may refuse some and carry out others.
	Took func(f *fixture, ctx context.Context) (bool, error)
}

// Env is what an attempt works with: the credential's connection.
type Env struct {
	NC    *nats.Conn
	Names wire.Names
	fix   *fixture
}

func (e *Env) js() (jetstream.JetStream, error) { return jetstream.New(e.NC) }

// cancelMarks opens the cancel bucket on the credential's connection.
func (e *Env) cancelMarks(ctx context.Context) (jetstream.KeyValue, error) {
	js, err := e.js()
	if err != nil {
		return nil, err
	}
	return js.KeyValue(ctx, e.Names.CancelBucket())
}

// snapshots opens the snapshot store on the credential's connection.
func (e *Env) snapshots(ctx context.Context) (jetstream.ObjectStore, error) {
	js, err := e.js()
	if err != nil {
		return nil, err
	}
	return js.ObjectStore(ctx, e.Names.FieldBucket())
}

// The snapshot and cancel mark the fixture keeps in place.
const (
	snapshotName = "probe-snapshot"
	cancelKey    = "probe-sweep"
	probeSweep   = "probe"
)

// probeRoute is the route of the outside program whose consumer the
// fixture keeps in place.
var probeRoute = wire.Route("probe-solver", "1.0")

var snapshotBytes = bytes.Repeat([]byte("fvsweep probe snapshot "), 64)

// fixture is the operator's side: it puts back what attempts destroy.
type fixture struct {
	nc    *nats.Conn
	js    jetstream.JetStream
	names wire.Names
}

func newFixture(nc *nats.Conn, n wire.Names) *fixture {
	js, _ := jetstream.New(nc) // fails only on invalid options
	return &fixture{nc: nc, js: js, names: n}
}

// prepare makes the streams, consumers and buckets (again) and puts a
// queued job, the snapshot and the cancel mark in place.
func (f *fixture) prepare(ctx context.Context) error {
	ctx, cancel := context.WithTimeout(ctx, 30*time.Second)
	defer cancel()
	if err := ensure(ctx, f); err != nil {
		return err
	}
	if _, err := f.js.Publish(ctx, f.names.JobSubject(probeSweep, nuid.Next()), []byte(`{}`)); err != nil {
		return fmt.Errorf("queue a job: %w", err)
	}
	if _, err := f.js.Publish(ctx, f.names.RouteSubject(probeSweep, probeRoute, nuid.Next()), []byte(`{}`)); err != nil {
		return fmt.Errorf("queue a program's job: %w", err)
	}
	obs, err := f.js.ObjectStore(ctx, f.names.FieldBucket())
	if err != nil {
		return err
	}
	if _, err := obs.PutBytes(ctx, snapshotName, snapshotBytes); err != nil {
		return fmt.Errorf("put the snapshot: %w", err)
	}
	kv, err := f.js.KeyValue(ctx, f.names.CancelBucket())
	if err != nil {
		return err
	}
	if _, err := kv.Put(ctx, cancelKey, []byte(probeSweep)); err != nil {
		return fmt.Errorf("put the cancel mark: %w", err)
	}
	return nil
}

// snapshotGone reports whether the fixture's snapshot can no longer be
// read.
func (f *fixture) snapshotGone(ctx context.Context) (bool, error) {
	ctx, cancel := context.WithTimeout(ctx, 10*time.Second)
	defer cancel()
	b, err := client.FetchField(ctx, f.nc, f.names.SnapshotRef(snapshotName))
	if err != nil {
		if errors.Is(err, jetstream.ErrObjectNotFound) || strings.Contains(err.Error(), "not in object store") {
			return true, nil
		}
		return false, err
	}
	return !bytes.Equal(b, snapshotBytes), nil
}

// request sends an API request and waits for the answer.
func request(verb string) func(ctx context.Context, e *Env) error {
	return func(ctx context.Context, e *Env) error {
		_, err := e.NC.RequestWithContext(ctx, e.Names.API(verb), []byte(`{"sweep":"probe"}`))
		return err
	}
}

// jsAPI sends a raw JetStream API request (subject after "$JS.API.") and
// returns the error the server answers, if any.
func jsAPI(subject string, body any) func(ctx context.Context, e *Env) error {
	return func(ctx context.Context, e *Env) error {
		var data []byte
		if body != nil {
			data, _ = json.Marshal(body)
		}
		m, err := e.NC.RequestWithContext(ctx, "$JS.API."+subject, data)
		if err != nil {
			return err
		}
		var rep struct {
			Error *struct {
				Code        int    `json:"code"`
				Description string `json:"description"`
			} `json:"error"`
		}
		if err := json.Unmarshal(m.Data, &rep); err != nil {
			return fmt.Errorf("%s: %w", subject, err)
		}
		if rep.Error != nil {
			return fmt.Errorf("%s: %d %s", subject, rep.Error.Code, rep.Error.Description)
		}
		return nil
	}
}

// subscribe subscribes to subject and waits for the server to take it.
func subscribe(subject string) func(ctx context.Context, e *Env) error {
	return func(ctx context.Context, e *Env) error {
		if _, err := e.NC.SubscribeSync(subject); err != nil {
			return err
		}
		return e.NC.FlushWithContext(ctx)
	}
}

var (
	op        = wire.RoleOperator
	submitter = wire.RoleSubmitter
	reader    = wire.RoleReader
	worker    = wire.RoleWorker
)

// Actions are the actions tried, with the roles expected to be allowed
// each.
func Actions(n wire.Names) []Action {
	obj, kv := n.FieldStream(), n.CancelStream()
	as := []Action{
		{Name: "submit a sweep", Allow: roles(op, submitter), As: submitter, Try: request(wire.VerbSubmit)},
		{Name: "cancel a sweep", Allow: roles(op, submitter), As: submitter, Try: request(wire.VerbCancel)},
		{Name: "forget outcomes", Allow: roles(op, submitter), As: submitter, Try: request(wire.VerbForget)},
		{Name: "status", Allow: roles(op, submitter, reader), As: reader, Try: request(wire.VerbStatus)},
		{Name: "rows (table, export, report)", Allow: roles(op, submitter, reader), As: reader, Try: request(wire.VerbRows)},
		{Name: "read a snapshot (plots)", Allow: roles(op, submitter, reader), As: reader,
			Try: func(ctx context.Context, e *Env) error {
				b, err := client.FetchField(ctx, e.NC, n.SnapshotRef(snapshotName))
				if err == nil && !bytes.Equal(b, snapshotBytes) {
					err = errors.New("the snapshot read back differs")
				}
				return err
			}},
		{Name: "publish a job", Allow: roles(op), Try: func(ctx context.Context, e *Env) error {
			js, err := e.js()
			if err == nil {
				_, err = js.Publish(ctx, n.JobSubject(probeSweep, nuid.Next()), []byte(`{}`))
			}
			return err
		}},
		{Name: "fetch a job and ack it", Allow: roles(op, worker), As: worker, Try: fetchAck(n.WorkerConsumer())},
		{Name: "fetch an outside program's job and ack it", Allow: roles(op, worker), As: worker,
			Try: fetchAck(n.RouteConsumer(probeRoute))},
		{Name: "create a consumer of jobs", Allow: roles(op), Try: jsAPI("CONSUMER.CREATE."+n.JobStream()+".probe-made",
			map[string]any{"stream_name": n.JobStream(), "config": map[string]any{"durable_name": "probe-made", "ack_policy": "explicit",
				"filter_subject": n.RouteFilter(wire.Route("probe-made", "1"))}})},
		{Name: "publish an outcome", Allow: roles(op, worker), As: worker, Try: func(ctx context.Context, e *Env) error {
			js, err := e.js()
			if err == nil {
				_, err = js.Publish(ctx, n.ResultSubject(probeSweep, nuid.Next()), []byte(`{}`))
			}
			return err
		}},
		{Name: "publish a worker report", Allow: roles(op, worker), As: worker, Try: func(ctx context.Context, e *Env) error {
			return e.NC.Publish(n.WorkerSubject("probe"), []byte(`{}`))
		}},
		{Name: "put a snapshot", Allow: roles(op, worker), As: worker, Try: func(ctx context.Context, e *Env) error {
			obs, err := e.snapshots(ctx)
			if err == nil {
				_, err = obs.PutBytes(ctx, "probe-"+nuid.Next(), snapshotBytes)
			}
			return err
		}},
		{Name: "delete a snapshot", Allow: roles(op, worker), As: worker, Try: func(ctx context.Context, e *Env) error {
			obs, err := e.snapshots(ctx)
			if err == nil {
				err = obs.Delete(ctx, snapshotName)
			}
			return err
		}, Took: (*fixture).snapshotGone},
		{Name: "watch the cancel marks", Allow: roles(op, worker), As: worker, Try: func(ctx context.Context, e *Env) error {
			store, err := e.cancelMarks(ctx)
			if err != nil {
				return err
			}
			w, err := store.WatchAll(ctx)
			if err != nil {
				return err
			}
			defer w.Stop()
			for {
				select {
				case u := <-w.Updates():
					if u == nil { // the current values are in
						return nil
					}
				case <-ctx.Done():
					return ctx.Err()
				}
			}
		}},
		{Name: "put a cancel mark", Allow: roles(op), Try: func(ctx context.Context, e *Env) error {
			store, err := e.cancelMarks(ctx)
			if err == nil {
				_, err = store.Put(ctx, cancelKey, []byte("x"))
			}
			return err
		}},
	}
	for _, s := range []string{n.JobStream(), n.ResultStream(), kv, obj} {
		as = append(as, Action{Name: "purge stream " + s, Allow: roles(op), Try: jsAPI("STREAM.PURGE."+s, nil)})
	}
	for _, c := range []struct{ stream, name string }{{n.JobStream(), n.WorkerConsumer()}, {n.ResultStream(), n.CoordinatorConsumer()}} {
		as = append(as, Action{Name: "delete consumer " + c.stream + "/" + c.name, Allow: roles(op),
			Try: jsAPI("CONSUMER.DELETE."+c.stream+"."+c.name, nil)})
	}
	as = append(as,
		Action{Name: "create a stream on orders.>", Try: jsAPI("STREAM.CREATE.PROBE_ORDERS",
			map[string]any{"name": "PROBE_ORDERS", "subjects": []string{"orders.>"}, "storage": "memory"})},
		Action{Name: "JetStream account information", Allow: roles(op), Try: jsAPI("INFO", nil)},
		Action{Name: "subscribe to _INBOX.>", Try: subscribe("_INBOX.>")},
	)
	for _, r := range wire.Roles {
		allow := roles(op, r)
		if r == reader {
			allow = append(allow, submitter)
		}
		as = append(as, Action{Name: "subscribe to the " + string(r) + " inbox", Allow: allow,
			Try: subscribe(n.Inbox(r) + ".>")})
	}
	return as
}

func roles(r ...wire.Role) []wire.Role { return r }

// fetchAck fetches one job from the jobs stream's consumer name and acks it.
func fetchAck(name string) func(ctx context.Context, e *Env) error {
	return func(ctx context.Context, e *Env) error {
		js, err := e.js()
		if err != nil {
			return err
		}
		cons, err := js.Consumer(ctx, e.Names.JobStream(), name)
		if err != nil {
			return err
		}
		batch, err := cons.Fetch(1, jetstream.FetchMaxWait(time.Second))
		if err != nil {
			return err
		}
		m, ok := <-batch.Messages() // the first job, if one came
		if !ok {
			if err := batch.Error(); err != nil {
				return err
			}
			return errors.New("no job delivered")
		}
		if err := m.InProgress(); err != nil {
			return err
		}
		return m.DoubleAck(ctx)
	}
}
