package worker

import (
	"strings"
	"testing"

	"fvsweep/sweep/job"
)

// An outcome outside the bounds a coordinator takes becomes a failure that
// says why; a long reason is cut to the longest error text.
func TestWithinBounds(t *testing.T) {
	b := job.DefaultBounds()
	o := withinBounds(job.Outcome{JobID: strings.Repeat("a", 32), Sweep: "s", Worker: "w", Attempts: 1,
		Status: job.StatusDone, Error: "a done outcome with a reason"})
	if o.Status != job.StatusFailed || !strings.Contains(o.Error, "outside the bounds") || o.CheckBounds(b) != nil {
		t.Errorf("done with an error text: %+v", o)
	}
	o = withinBounds(job.Outcome{JobID: strings.Repeat("a", 32), Sweep: "s", Worker: "w", Attempts: 1,
		Status: job.StatusFailed, Error: strings.Repeat("x", 10*b.MaxText)})
	if len(o.Error) != b.MaxText || o.CheckBounds(b) != nil {
		t.Errorf("long reason: %d bytes, %v", len(o.Error), o.CheckBounds(b))
	}
}
