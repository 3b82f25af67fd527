package worker

import (
	"context"
	"errors"
	"maps"
	"slices"
	"time"

	"github.com/nats-io/nats.go/jetstream"

	"fvsweep/sweep/job"
	"fvsweep/sweep/wire"
)

// Versioned is a Runner of one version of an outside program. The worker
// pulls the jobs of that version only (wire.Route) and refuses a job of
// another version. A Runner that is not Versioned runs the jobs of its
// solver that name no version.
type Versioned interface {
	Runner
	Version() string
}

// route is the consumer of the jobs of one solver the worker offers.
type route struct {
	solver, version string
	label           string // "fv2d", "NAME@VERSION"
	route           string // wire.Route
	cons            jetstream.Consumer
	looked          time.Time // last lookup of a missing consumer
}

// lookAgain is how often a worker looks for the consumer of a program
// that no sweep has queued jobs for yet (the coordinator makes it when a
// sweep names the program).
const lookAgain = 2 * time.Second

// offered lists the routes of the runners, fv2d first, then by label.
func (w *Worker) offered() []*route {
	var out []*route
	for _, name := range slices.Sorted(maps.Keys(w.cfg.Runners)) {
		r := &route{solver: name, label: name}
		if v, ok := w.cfg.Runners[name].(Versioned); ok && name != job.BuiltinSolver {
			r.version = v.Version()
			r.label = name + "@" + r.version
		}
		r.route = wire.Route(r.solver, r.version)
		if name == job.BuiltinSolver {
			out = append([]*route{r}, out...)
		} else {
			out = append(out, r)
		}
	}
	return out
}

// versionOf is the version of the runner of solver name, "" if none.
func (w *Worker) versionOf(name string) string {
	if v, ok := w.cfg.Runners[name].(Versioned); ok && name != job.BuiltinSolver {
		return v.Version()
	}
	return ""
}

// programs are the labels of the outside programs offered, for reports.
func (w *Worker) programs() []string {
	var out []string
	for _, r := range w.routes {
		if r.route != "" {
			out = append(out, r.label)
		}
	}
	return out
}

// lookup finds the consumer of r, at most once per lookAgain.
func (w *Worker) lookup(ctx context.Context, r *route) {
	if r.cons != nil || time.Since(r.looked) < lookAgain {
		return
	}
	r.looked = time.Now()
	n := w.cfg.Names
	c, err := w.js.Consumer(ctx, n.JobStream(), n.RouteConsumer(r.route))
	switch {
	case err == nil:
		r.cons = c
		w.log.Info("pulling the jobs of a solver", "solver", r.label, "consumer", n.RouteConsumer(r.route))
	case errors.Is(err, jetstream.ErrConsumerNotFound):
		w.log.Debug("no jobs queued yet for a solver", "solver", r.label)
	default:
		w.log.Warn("looking up a solver's consumer", "solver", r.label, "error", err)
	}
}
