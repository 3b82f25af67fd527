// Package probe tries every action of fvsweep's NATS protocol, and the
// harmful ones a stolen credential might try, with each role's credential
// on a real server, and tells which the server allowed: the proof of the
// rights of coordinator/server/access.go, on the embedded server and on a
// cluster of deploy/nats.
package probe

import (
	"context"
	"errors"
	"fmt"
	"slices"
	"strings"
	"time"

	"github.com/nats-io/nats.go"

	"fvsweep/coordinator"
	"fvsweep/coordinator/client"
	"fvsweep/sweep/wire"
)

// Target is a server to probe and the credentials of each role on it.
type Target struct {
	// URL or InProcess: the server (see client.DialOptions).
	URL       string
	InProcess nats.InProcessConnProvider
	Names     wire.Names
	// Secrets are the credentials of every role: a password with User set
	// to the role's name, or a bare token with User empty.
	Secrets map[wire.Role]client.DialOptions
	// Timeout bounds one attempt (default 3 s); a refused request is
	// noticed at once, an allowed one that hangs fails the probe.
	Timeout time.Duration
}

// Outcome is what the server did with one attempt.
type Outcome int

const (
	// Failed: the attempt neither succeeded nor was refused (a broken
	// probe or server); it counts as unexpected.
	Failed Outcome = iota
	Allowed
	Refused
)

func (o Outcome) String() string {
	return [...]string{"FAILED", "allowed", "refused"}[o]
}

// Cell is the outcome of one action tried with one role's credential.
type Cell struct {
	Action string
	Role   wire.Role
	Got    Outcome
	Want   Outcome
	Detail string // the error or permissions violation
}

// Matrix is every action tried with every role.
type Matrix struct {
	Actions []Action
	Roles   []wire.Role
	Cells   map[string]map[wire.Role]Cell
}

// Unexpected lists the cells whose outcome is not the expected one:
// grants, refusals and failures alike.
func (m *Matrix) Unexpected() []Cell {
	var out []Cell
	for _, a := range m.Actions {
		for _, r := range m.Roles {
			if c := m.Cells[a.Name][r]; c.Got != c.Want {
				out = append(out, c)
			}
		}
	}
	return out
}

// Markdown is the matrix as a Markdown table: an action per row, a role
// per column; an outcome that is not the expected one is marked "(!)".
func (m *Matrix) Markdown() string {
	var b strings.Builder
	b.WriteString("| action |")
	for _, r := range m.Roles {
		fmt.Fprintf(&b, " %s |", r)
	}
	b.WriteString("\n| --- |" + strings.Repeat(" --- |", len(m.Roles)) + "\n")
	for _, a := range m.Actions {
		fmt.Fprintf(&b, "| %s |", a.Name)
		for _, r := range m.Roles {
			c := m.Cells[a.Name][r]
			mark := ""
			if c.Got != c.Want {
				mark = " (!)"
			}
			fmt.Fprintf(&b, " %s%s |", c.Got, mark)
		}
		b.WriteString("\n")
	}
	return b.String()
}

// Run tries every action of Actions(t.Names) with every role's credential.
// Before each attempt the operator makes the streams, consumers and
// buckets again and puts a queued job, a snapshot and a cancel mark in
// place, so that what one attempt destroys does not decide the next. An
// operator connection stands in for the coordinator: it answers every API
// request with "{}", through the operator's own rights.
func Run(ctx context.Context, t Target) (*Matrix, error) {
	if t.Timeout <= 0 {
		t.Timeout = 3 * time.Second
	}
	op, err := t.dial(wire.RoleOperator, wire.RoleOperator)
	if err != nil {
		return nil, fmt.Errorf("probe: operator: %w", err)
	}
	defer op.Close()
	sub, err := op.Subscribe(t.Names.API("*"), func(m *nats.Msg) { m.Respond([]byte("{}")) })
	if err != nil {
		return nil, fmt.Errorf("probe: stand-in coordinator: %w", err)
	}
	defer sub.Unsubscribe()
	f := newFixture(op, t.Names)
	m := &Matrix{Actions: Actions(t.Names), Roles: wire.Roles, Cells: map[string]map[wire.Role]Cell{}}
	for _, a := range m.Actions {
		m.Cells[a.Name] = map[wire.Role]Cell{}
		for _, r := range m.Roles {
			if err := f.prepare(ctx); err != nil {
				return nil, fmt.Errorf("probe: before %q as %s: %w", a.Name, r, err)
			}
			c := Cell{Action: a.Name, Role: r, Want: Refused}
			if slices.Contains(a.Allow, r) {
				c.Want = Allowed
			}
			c.Got, c.Detail = t.attempt(ctx, f, a, r)
			m.Cells[a.Name][r] = c
		}
	}
	return m, nil
}

// dial connects with role's credential, its replies arriving on the inbox
// of the role as (the role of the command that would do the action).
func (t Target) dial(role, as wire.Role) (*nats.Conn, error) {
	o, ok := t.Secrets[role]
	if !ok {
		return nil, fmt.Errorf("no credential for role %s", role)
	}
	o.URL, o.InProcess, o.Names, o.Role = t.URL, t.InProcess, t.Names, as
	o.Name, o.QuietDenied = "fvsweep probe "+string(role), true
	o.Timeout = t.Timeout
	return client.Dial(o)
}

// attempt runs a with role's credential on a connection of its own and
// says whether the server allowed it. A permissions violation on the
// connection during the attempt is a refusal; an attempt that returns
// without error and without one is allowed, unless the action's effect
// check says otherwise.
func (t Target) attempt(ctx context.Context, f *fixture, a Action, role wire.Role) (Outcome, string) {
	as := role
	if a.As != "" && mayRead(role, a.As) {
		as = a.As
	}
	nc, err := t.dial(role, as)
	if err != nil {
		return Failed, err.Error()
	}
	defer nc.Close()
	ctx, cancel := context.WithTimeout(ctx, t.Timeout)
	defer cancel()
	done := make(chan error, 1)
	go func() { done <- a.Try(ctx, &Env{NC: nc, Names: t.Names, fix: f}) }()
	tick := time.NewTicker(10 * time.Millisecond)
	defer tick.Stop()
	var tryErr error
wait:
	for {
		select {
		case tryErr = <-done:
			break wait
		case <-tick.C:
			if denied(nc) != nil {
				cancel()
				tryErr = <-done
				break wait
			}
		}
	}
	if tryErr == nil {
		nc.Flush() // a refused publish is answered before the flush's pong
	}
	v := denied(nc)
	if a.Took != nil {
		took, err := a.Took(f, context.Background())
		switch {
		case err != nil:
			return Failed, "checking the effect: " + err.Error()
		case took:
			return Allowed, errText(tryErr, v)
		case v != nil:
			return Refused, v.Error()
		}
		return Failed, "no effect: " + errText(tryErr, v)
	}
	switch {
	case v != nil:
		return Refused, v.Error()
	case tryErr != nil:
		return Failed, tryErr.Error()
	}
	return Allowed, ""
}

// mayRead reports whether fvsweep's commands with role's credential use
// the inbox of as: the operator's commands may act for every role, a
// submitter's read as a reader does.
func mayRead(role, as wire.Role) bool {
	return role == as || role == wire.RoleOperator || role == wire.RoleSubmitter && as == wire.RoleReader
}

// denied is the permissions violation the connection has had, if any.
func denied(nc *nats.Conn) error {
	if err := nc.LastError(); err != nil && errors.Is(err, nats.ErrPermissionViolation) {
		return err
	}
	return nil
}

func errText(errs ...error) string {
	var s []string
	for _, e := range errs {
		if e != nil {
			s = append(s, e.Error())
		}
	}
	return strings.Join(s, "; ")
}

// ensure makes the streams, consumers and buckets of n on nc's server.
func ensure(ctx context.Context, f *fixture) error {
	if err := coordinator.EnsureStreams(ctx, f.js, f.names, coordinator.Delivery{}); err != nil {
		return err
	}
	return coordinator.EnsureRoute(ctx, f.js, f.names, probeRoute, "probe-solver@1.0", coordinator.Delivery{})
}
