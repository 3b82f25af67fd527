package client

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"strings"
	"time"

	"github.com/nats-io/nats.go"

	"fvsweep/sweep/job"
	"fvsweep/sweep/wire"
)

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

// New returns a client on nc.
func New(nc *nats.Conn, names wire.Names) *Client {
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

// Status asks for the status of sweep name ("" for all) and the live
// workers; the coordinator sends it in parts, joined here.
func (c *Client) Status(ctx context.Context, name string) (wire.StatusReply, error) {
	rep := wire.StatusReply{Sweeps: []wire.SweepStatus{}, Workers: []wire.WorkerReport{}}
	err := c.parts(ctx, wire.VerbStatus, wire.SweepRequest{Sweep: name}, func(seq int, data []byte) (bool, error) {
		var part wire.StatusReply
		last, err := decodePart("status", seq, data, &part)
		if err != nil {
			return false, err
		}
		if seq == 0 {
			rep.RefusedResults = part.RefusedResults
		}
		rep.Sweeps = append(rep.Sweeps, part.Sweeps...)
		rep.Workers = append(rep.Workers, part.Workers...)
		return last, nil
	})
	return rep, err
}

// Forget asks the coordinator to discard stored outcomes (see
// wire.ForgetRequest).
func (c *Client) Forget(ctx context.Context, req wire.ForgetRequest) (wire.ForgetReply, error) {
	var rep wire.ForgetReply
	if err := c.request(ctx, wire.VerbForget, c.Timeout, req, &rep); err != nil {
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
// TOML source) with its study settings, such as design orders (nil from a
// coordinator that does not send them).
func (c *Client) RowsSpec(ctx context.Context, name string) (rows []wire.Row, specFile, spec string, studies []job.StudySettings, err error) {
	rows, first, err := c.rows(ctx, name)
	return rows, first.SpecFile, first.Spec, first.Studies, err
}

func (c *Client) rows(ctx context.Context, name string) ([]wire.Row, wire.RowsReply, error) {
	var first wire.RowsReply
	var rows []wire.Row
	err := c.parts(ctx, wire.VerbRows, wire.RowsRequest{Sweep: name}, func(seq int, data []byte) (bool, error) {
		var rep wire.RowsReply
		last, err := decodePart("rows", seq, data, &rep)
		if err != nil {
			return false, err
		}
		if seq == 0 {
			first = rep
		}
		rows = append(rows, rep.Rows...)
		return last, nil
	})
	if err != nil {
		return nil, first, err
	}
	return rows, first, nil
}

// decodePart decodes part number seq of a reply sent in parts into v.
func decodePart[T interface{ Part() (int, bool, string) }](verb string, seq int, data []byte, v *T) (last bool, err error) {
	if err := wire.Decode(verb+" reply", data, v); err != nil {
		return false, err
	}
	got, last, text := (*v).Part()
	if text != "" {
		return false, errors.New(text)
	}
	if got != seq {
		return false, fmt.Errorf("%s: part %d arrived as number %d", verb, got, seq)
	}
	return last, nil
}

// parts sends req to verb and hands each part of the reply, in order, to
// take until it says the last has come.
func (c *Client) parts(ctx context.Context, verb string, req any, take func(seq int, data []byte) (last bool, err error)) error {
	inbox := c.nc.NewRespInbox()
	sub, err := c.nc.SubscribeSync(inbox)
	if err != nil {
		return err
	}
	defer sub.Unsubscribe()
	sub.SetPendingLimits(-1, -1)
	data, _ := json.Marshal(req)
	subject := c.names.API(verb)
	before := c.nc.LastError()
	if err := c.nc.PublishRequest(subject, inbox, data); err != nil {
		return err
	}
	// A refused publish comes back as an error before the flush's pong.
	if err := c.nc.Flush(); err == nil {
		if err := deniedSince(c.nc, before, subject); err != nil {
			return fmt.Errorf("%s: %w", verb, err)
		}
	}
	for seq := 0; ; seq++ {
		ctx, cancel := context.WithTimeout(ctx, c.Timeout)
		m, err := sub.NextMsgWithContext(ctx)
		cancel()
		if err != nil {
			if seq == 0 {
				return fmt.Errorf("%s: %w (%v)", verb, ErrNoCoordinator, err)
			}
			return fmt.Errorf("%s: after %d parts: %w", verb, seq, err)
		}
		if len(m.Data) == 0 && m.Header.Get("Status") == "503" {
			return fmt.Errorf("%s: %w (no responders)", verb, ErrNoCoordinator)
		}
		last, err := take(seq, m.Data)
		if err != nil || last {
			return err
		}
	}
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
	return fmt.Errorf("not allowed with these credentials (a role may do only its own requests: see docs/access.md): %w", err)
}
