package job

import (
	"fmt"
	"iter"
	"maps"
	"math"
	"time"
)

// Bounds are what a result message from a worker may hold: its size and
// the range of every number. A coordinator refuses an outcome outside them
// (Outcome.CheckBounds); they keep a hostile or broken worker from storing
// huge records or numbers that make no sense in a table.
type Bounds struct {
	// MaxFunctionals bounds the entries of Functionals, MaxVars those of
	// Errors and of Totals.
	MaxFunctionals int
	MaxVars        int
	// MaxKey bounds the length in bytes of a map key; MaxText that of the
	// error text; MaxName that of the worker name and the snapshot
	// reference.
	MaxKey  int
	MaxText int
	MaxName int
	// MaxSteps, MaxAttempts and MaxWall bound steps, attempts and wall_s;
	// MaxRate bounds cell_updates_per_s.
	MaxSteps    int
	MaxAttempts int
	MaxWall     time.Duration
	MaxRate     float64
}

// DefaultBounds are the bounds a coordinator applies unless told otherwise.
// Every figure is well above what fvsweep's solver reports (a run has a
// handful of functionals and at most 4 conserved variables) and far below
// what would hurt the store, a table or a reply.
func DefaultBounds() Bounds {
	return Bounds{
		MaxFunctionals: 64,
		MaxVars:        16,
		MaxKey:         64,
		MaxText:        2048,
		MaxName:        256,
		MaxSteps:       1_000_000_000,
		MaxAttempts:    1000,
		MaxWall:        30 * 24 * time.Hour,
		MaxRate:        1e13,
	}
}

// CheckBounds reports why o, a result message already decoded and checked
// by DecodeOutcomeMessage, is outside b, or nil. Besides sizes and ranges
// it holds status and error consistent: a done outcome carries no error
// text, a failed one carries one.
func (o Outcome) CheckBounds(b Bounds) error {
	bad := func(format string, args ...any) error {
		return fmt.Errorf("job %s: %s", o.JobID, fmt.Sprintf(format, args...))
	}
	switch {
	case o.Status == StatusDone && o.Error != "":
		return bad("done with an error text")
	case o.Status == StatusFailed && o.Error == "":
		return bad("failed without a reason")
	case len(o.Functionals) > b.MaxFunctionals:
		return bad("%d functionals, at most %d", len(o.Functionals), b.MaxFunctionals)
	case len(o.Errors) > b.MaxVars || len(o.Totals) > b.MaxVars:
		return bad("%d error norms and %d totals, at most %d each", len(o.Errors), len(o.Totals), b.MaxVars)
	case len(o.Error) > b.MaxText:
		return bad("error text of %d bytes, at most %d", len(o.Error), b.MaxText)
	case len(o.Worker) > b.MaxName || len(o.Snapshot) > b.MaxName:
		return bad("worker name or snapshot reference longer than %d bytes", b.MaxName)
	case o.Steps > b.MaxSteps:
		return bad("%d steps, at most %d", o.Steps, b.MaxSteps)
	case o.Attempts < 1 || o.Attempts > b.MaxAttempts:
		return bad("attempt %d outside 1..%d", o.Attempts, b.MaxAttempts)
	case !(o.WallS >= 0 && o.WallS <= b.MaxWall.Seconds()):
		return bad("wall_s %g outside 0..%g", o.WallS, b.MaxWall.Seconds())
	case !(o.CellUpdatesPerS >= 0 && o.CellUpdatesPerS <= b.MaxRate):
		return bad("cell_updates_per_s %g outside 0..%g", o.CellUpdatesPerS, b.MaxRate)
	case !(o.TFinal >= 0):
		return bad("negative t_final %g", o.TFinal)
	}
	for _, keys := range []iter.Seq[string]{maps.Keys(o.Functionals), maps.Keys(o.Errors), maps.Keys(o.Totals)} {
		for k := range keys {
			if k == "" || len(k) > b.MaxKey {
				return bad("key %.20q: want 1..%d bytes", k, b.MaxKey)
			}
		}
	}
	for k, n := range o.Errors {
		// Norms of an error are non-negative (common practice: a norm is).
		if !(n.L1 >= 0 && n.L2 >= 0 && n.Linf >= 0) {
			return bad("errors.%s: negative norm (%g, %g, %g)", k, n.L1, n.L2, n.Linf)
		}
	}
	return nil
}

// Valid reports whether b is usable: every size and limit positive.
func (b Bounds) Valid() error {
	if b.MaxFunctionals <= 0 || b.MaxVars <= 0 || b.MaxKey <= 0 || b.MaxText <= 0 || b.MaxName <= 0 ||
		b.MaxSteps <= 0 || b.MaxAttempts <= 0 || b.MaxWall <= 0 || !(b.MaxRate > 0) || math.IsInf(b.MaxRate, 0) {
		return fmt.Errorf("outcome bounds: every limit must be positive and finite: %+v", b)
	}
	return nil
}
