package coordinator

import (
	"strings"

	"github.com/nats-io/nats.go"

	"fvsweep/store"
	"fvsweep/sweep/job"
	"fvsweep/sweep/wire"
)

// Forget discards the stored outcomes of sweep req.Sweep that the request
// picks (see wire.ForgetRequest), so that the next submission runs those
// jobs again; the store files a record of what, when and by whom (by).
func (c *Coordinator) Forget(req wire.ForgetRequest, by string) (wire.ForgetReply, error) {
	if req.Job != "" && !job.ValidID(req.Job) {
		return wire.ForgetReply{}, errBadJobID(req.Job)
	}
	rec, err := c.db.Forget(req.Sweep, Selection(req), by)
	if err != nil {
		return wire.ForgetReply{}, err
	}
	c.bump()
	c.log.Info("outcomes forgotten", "sweep", req.Sweep, "what", rec.What, "by", by, "count", len(rec.Jobs), "shared", rec.Shared)
	return wire.ForgetReply{Forgotten: len(rec.Jobs)}, nil
}

// Selection is the store's selection of a forget request.
func Selection(req wire.ForgetRequest) store.Selection {
	return store.Selection{JobID: req.Job, Study: req.Study, HasStudy: req.HasStudy, Failed: req.Failed}
}

type errBadJobID string

func (e errBadJobID) Error() string { return "job " + string(e) + ": not a job ID (32 hex digits)" }

func (c *Coordinator) onForget(m *nats.Msg) {
	var req wire.ForgetRequest
	if err := wire.Decode("forget request", m.Data, &req); err != nil {
		c.reply(m, wire.ForgetReply{Error: err.Error()})
		return
	}
	rep, err := c.Forget(req, Requester(req.By, m.Reply))
	rep.Error = errString(err)
	c.reply(m, rep)
}

// Requester names who sent a request: the name the client gives (its user
// and host) and the inbox prefix of its reply subject, which the server's
// per-role inbox rights tie to the connection's user.
func Requester(given, reply string) string {
	if len(given) > 128 {
		given = given[:128]
	}
	inbox, _, _ := strings.Cut(reply, ".")
	if inbox == "" {
		return given
	}
	return given + " via " + inbox
}
