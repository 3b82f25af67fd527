package coordinator

import (
	"context"
	"encoding/json"
	"time"

	"github.com/nats-io/nats.go"

	"fvsweep/store"
	"fvsweep/sweep/job"
	"fvsweep/sweep/wire"
)

// tallyMaxAge is how stale a cached count may be while outcomes arrive.
const tallyMaxAge = 250 * time.Millisecond

// bump invalidates the cached counts.
func (c *Coordinator) bump() {
	c.mu.Lock()
	c.gen++
	c.mu.Unlock()
}

// count returns the stored tally of a sweep, recounted only when outcomes
// were written since and the cached one is older than tallyMaxAge.
func (c *Coordinator) count(name string) (store.Tally, error) {
	now := time.Now()
	c.mu.Lock()
	t, ok := c.tallies[name]
	gen := c.gen
	c.mu.Unlock()
	if ok && (t.gen == gen || now.Sub(t.at) < tallyMaxAge) {
		return t.t, nil
	}
	n, err := c.db.Count(name)
	if err != nil {
		return n, err
	}
	c.mu.Lock()
	c.tallies[name] = tally{t: n, gen: gen, at: now}
	c.mu.Unlock()
	return n, nil
}

// Status counts the jobs of sweep name, or of every sweep when name is "".
func (c *Coordinator) Status(name string) ([]wire.SweepStatus, error) {
	now := time.Now()
	out, err := SweepStatuses(c.db, name, c.count, func(s string) int { return c.reg.runningIn(s, now) })
	if err != nil {
		return nil, err
	}
	offered := c.reg.offered(now)
	for i := range out {
		if out[i].Canceled || out[i].Queued == 0 {
			continue
		}
		if out[i].Waiting, err = c.waiting(out[i].Sweep, offered); err != nil {
			return nil, err
		}
	}
	return out, nil
}

// SweepStatuses builds the status of sweep name (all sweeps for "") from
// the store: count tallies a sweep (nil: db.Count), running counts its jobs
// running now (nil: none, as when no coordinator is up).
func SweepStatuses(db *store.DB, name string, count func(string) (store.Tally, error), running func(string) int) ([]wire.SweepStatus, error) {
	if count == nil {
		count = db.Count
	}
	var recs []store.SweepRecord
	if name == "" {
		var err error
		if recs, err = db.Sweeps(); err != nil {
			return nil, err
		}
	} else {
		r, err := db.Sweep(name)
		if err != nil {
			return nil, err
		}
		recs = []store.SweepRecord{r}
	}
	out := make([]wire.SweepStatus, 0, len(recs))
	for _, r := range recs {
		t, err := count(r.Name)
		if err != nil {
			return nil, err
		}
		s := wire.SweepStatus{
			Sweep: r.Name, SpecFile: r.SpecFile, JobsTotal: t.Jobs, Done: t.Done, Failed: t.Failed,
			Canceled: r.Canceled, Created: r.Created, Updated: r.Updated,
		}
		left := t.Jobs - t.Done - t.Failed
		if running != nil && !r.Canceled {
			s.Running = min(running(r.Name), left)
		}
		s.Queued = left - s.Running
		out = append(out, s)
	}
	return out, nil
}

// Rows returns every job of sweep name in dispatch order with its state;
// running maps the job IDs running now to their worker (nil: none).
func Rows(db *store.DB, name string, running map[string]string) ([]wire.Row, error) {
	rs, err := db.Query(name, nil)
	if err != nil {
		return nil, err
	}
	out := make([]wire.Row, len(rs))
	for i, r := range rs {
		row := wire.Row{Job: r.Job, Outcome: r.Outcome, Status: job.StatusQueued}
		switch {
		case r.Outcome != nil:
			row.Status = r.Outcome.Status
			row.Worker = r.Outcome.Worker
		case running[r.Job.ID] != "":
			row.Status = job.StatusRunning
			row.Worker = running[r.Job.ID]
		}
		out[i] = row
	}
	return out, nil
}

// inboxOnly serves a request with h only when its reply subject is an
// inbox (wire.IsInbox). The coordinator may publish on its streams' and
// the JetStream API's subjects; a reply subject such as
// "$JS.API.STREAM.DELETE.FVSWEEP_JOBS" would otherwise make it do, for a
// reader, what the reader may not.
func (c *Coordinator) inboxOnly(h nats.MsgHandler) nats.MsgHandler {
	return func(m *nats.Msg) {
		if !wire.IsInbox(m.Reply) {
			c.log.Warn("request whose reply subject is not an inbox; not answered", "subject", m.Subject, "reply", m.Reply)
			return
		}
		h(m)
	}
}

// reply sends v as the JSON answer to a request.
func (c *Coordinator) reply(m *nats.Msg, v any) {
	data, err := json.Marshal(v)
	if err == nil {
		err = m.Respond(data)
	}
	if err != nil {
		c.log.Warn("answering request", "subject", m.Subject, "error", err)
	}
}

func errString(err error) string {
	if err == nil {
		return ""
	}
	return err.Error()
}

// replyChunk is the payload size at which a rows or status reply is sent
// and a new part started (well under NATS's 1 MiB default max_payload; no
// single row or worker report comes near it, given the outcome and report
// bounds).
const replyChunk = 256 << 10

// parts sends a reply in parts to the requester's inbox: room counts an
// item's JSON size and sends the part in hand first when it is full; send
// publishes a part.
type parts struct {
	c     *Coordinator
	reply string
	size  int
	seq   int
}

// room makes room for an item of n bytes: when the part in hand would grow
// past replyChunk it sends it first (flush). It returns false when that
// failed.
func (p *parts) room(n int, flush func() bool) bool {
	if p.size > 0 && p.size+n > replyChunk && !flush() {
		return false
	}
	p.size += n
	return true
}

// send publishes v as the next part; it returns false when that failed.
func (p *parts) send(what string, v any) bool {
	data, err := json.Marshal(v)
	if err == nil {
		err = p.c.nc.Publish(p.reply, data)
	}
	if err != nil {
		p.c.log.Warn("sending "+what, "error", err)
		return false
	}
	p.seq++
	p.size = 0
	return true
}

// reportSize is a close upper estimate of the JSON size of a report,
// cheaper than encoding it (status lists up to thousands of large ones).
func reportSize(r wire.WorkerReport) int {
	n := 320 + len(r.ID) + 2*len(r.Host) // fixed fields, escapes
	for _, j := range r.Current {
		n += 80 + len(j.JobID) + 2*len(j.Sweep)
	}
	return n
}

// onStatus sends the status in parts (see wire.StatusReply), the sweeps
// first, then the workers.
func (c *Coordinator) onStatus(m *nats.Msg) {
	var req wire.SweepRequest
	if err := wire.Decode("status request", m.Data, &req); err != nil {
		c.reply(m, wire.StatusReply{Last: true, Error: err.Error()})
		return
	}
	st, err := c.Status(req.Sweep)
	if err != nil {
		c.reply(m, wire.StatusReply{Last: true, Error: err.Error()})
		return
	}
	p := &parts{c: c, reply: m.Reply}
	part := statusPart{StatusReply: wire.StatusReply{RefusedResults: c.RefusedResults()}}
	next := func() bool {
		ok := p.send("status", part)
		part = statusPart{StatusReply: wire.StatusReply{Seq: p.seq}}
		return ok
	}
	for _, s := range st {
		b, err := json.Marshal(s)
		if err != nil {
			c.log.Warn("sending status", "sweep", s.Sweep, "error", err)
			return
		}
		if !p.room(len(b), next) {
			return
		}
		part.Sweeps = append(part.Sweeps, b)
	}
	for _, w := range c.Workers() {
		if n := len(w.Current); n > wire.StatusCurrentMax {
			w.Current, w.CurrentMore = w.Current[:wire.StatusCurrentMax], n-wire.StatusCurrentMax
		}
		if !p.room(reportSize(w), next) {
			return
		}
		part.Workers = append(part.Workers, w)
	}
	part.Last = true
	next()
}

// statusPart is a wire.StatusReply whose sweeps are encoded already, each
// once, when onStatus measures it; it encodes to the bytes of the
// StatusReply as rowsPart does to those of a RowsReply. Its Sweeps are nil
// (null) in a part that has none, as the StatusReply's would be.
type statusPart struct {
	Sweeps []json.RawMessage `json:"sweeps"`
	wire.StatusReply
}

// onRows streams the rows of a sweep to the requester's inbox in chunks,
// the last one marked Last.
func (c *Coordinator) onRows(m *nats.Msg) {
	var req wire.RowsRequest
	if err := wire.Decode("rows request", m.Data, &req); err != nil {
		c.reply(m, wire.RowsReply{Last: true, Error: err.Error()})
		return
	}
	rows, err := Rows(c.db, req.Sweep, c.reg.running(time.Now()))
	if err != nil {
		c.reply(m, wire.RowsReply{Last: true, Error: err.Error()})
		return
	}
	rec, err := c.db.Sweep(req.Sweep)
	if err != nil {
		c.reply(m, wire.RowsReply{Last: true, Error: err.Error()})
		return
	}
	p := &parts{c: c, reply: m.Reply}
	part := rowsPart{RowsReply: wire.RowsReply{Total: len(rows), SpecFile: rec.SpecFile, Spec: rec.Spec, Studies: rec.Studies}}
	next := func(last bool) bool {
		part.Last = last
		ok := p.send("rows of "+req.Sweep, part)
		part = rowsPart{Rows: part.Rows[:0], RowsReply: wire.RowsReply{Total: len(rows), Seq: p.seq}}
		return ok
	}
	for _, r := range rows {
		b, err := json.Marshal(r)
		if err == nil && len(b) > wire.MaxMessage/2 {
			// Stored before outcomes were bounded: send the job and its
			// status without the outcome's numbers.
			c.log.Warn("a row too large to send: its outcome's maps are left out", "sweep", req.Sweep, "job", r.Job.ID, "bytes", len(b))
			o := *r.Outcome
			o.Errors, o.Functionals, o.Totals = nil, nil, nil
			r.Outcome = &o
			b, err = json.Marshal(r)
		}
		if err != nil {
			c.log.Warn("sending rows of "+req.Sweep, "job", r.Job.ID, "error", err)
			return
		}
		if !p.room(len(b), func() bool { return next(false) }) {
			return
		}
		part.Rows = append(part.Rows, b)
	}
	next(true)
}

// rowsPart is a wire.RowsReply whose rows are encoded already, each once,
// when onRows measures it. Its Rows hide those of the embedded RowsReply
// (encoding/json takes the shallower of two fields of one name), and come
// first as there, so a part encodes to the bytes of the RowsReply.
type rowsPart struct {
	Rows []json.RawMessage `json:"rows"`
	wire.RowsReply
}

func (c *Coordinator) onSubmit(ctx context.Context, m *nats.Msg) {
	var req wire.SubmitRequest
	if err := wire.Decode("submit request", m.Data, &req); err != nil {
		c.reply(m, wire.SubmitReply{Error: err.Error()})
		return
	}
	if c.cfg.ParseSpec == nil {
		c.reply(m, wire.SubmitReply{Error: "this coordinator takes no submissions"})
		return
	}
	spec, err := c.cfg.ParseSpec(req.File, req.Source, req.Solvers)
	if err != nil {
		c.reply(m, wire.SubmitReply{Error: err.Error()})
		return
	}
	rep, err := c.Submit(ctx, spec, req.RetryFailed)
	rep.Error = errString(err)
	c.reply(m, rep)
}

func (c *Coordinator) onCancel(ctx context.Context, m *nats.Msg) {
	var req wire.SweepRequest
	if err := wire.Decode("cancel request", m.Data, &req); err != nil {
		c.reply(m, wire.CancelReply{Error: err.Error()})
		return
	}
	rep, err := c.Cancel(ctx, req.Sweep)
	rep.Error = errString(err)
	c.reply(m, rep)
}
