package job

import (
	"fmt"
	"math"
)

// maxRecordID bounds the job_id of a stored record. Records written by
// fvsweep have NewID values; the bound only keeps hostile input away from a
// store's key size limit.
const maxRecordID = 512

// The two levels of checking: a message from another process must be
// complete; a stored record (or one about to be stored) must only be
// well-formed, so that records of older or newer versions still read.
const (
	asRecord  = false
	asMessage = true
)

// Check reports why j cannot be stored as a job record, or nil: an empty or
// oversized job_id, an empty case, a cost that is not a finite non-negative
// number. A job message must also pass the checks of DecodeMessage.
func (j Job) Check() error { return j.check(asRecord) }

// check is the one check of a job; message adds what a job message must
// carry: an ID as NewID writes it, a sweep and parameters.
func (j Job) check(message bool) error {
	if err := checkID(j.ID, message); err != nil {
		return err
	}
	switch {
	case message && j.Sweep == "":
		return fmt.Errorf("job %s: no sweep", j.ID)
	case j.Case == "":
		return fmt.Errorf("job %s: empty case", j.ID)
	case message && len(j.Params) == 0:
		return fmt.Errorf("job %s: no params", j.ID)
	}
	if err := checkFinite("cost", j.Cost); err != nil {
		return fmt.Errorf("job %s: %w", j.ID, err)
	}
	if j.Cost < 0 {
		return fmt.Errorf("job %s: negative cost %g", j.ID, j.Cost)
	}
	return nil
}

// Check reports why o cannot be stored as an outcome record, or nil: an
// empty or oversized job_id, a status other than done or failed, negative
// attempts or steps, a number that is not finite (JSON has none). A result
// message must also pass the checks of DecodeOutcomeMessage.
func (o Outcome) Check() error { return o.check(asRecord) }

// check is the one check of an outcome; message adds what a result message
// must carry: an ID as NewID writes it, a sweep, and a reason for a failure.
func (o Outcome) check(message bool) error {
	if err := checkID(o.JobID, message); err != nil {
		return err
	}
	switch {
	case message && o.Sweep == "":
		return fmt.Errorf("job %s: no sweep", o.JobID)
	case !o.Status.Valid():
		return fmt.Errorf("job %s: status %q is neither %q nor %q", o.JobID, o.Status, StatusDone, StatusFailed)
	case message && o.Status == StatusFailed && o.Error == "":
		return fmt.Errorf("job %s: failed without a reason", o.JobID)
	case o.Attempts < 0 || o.Steps < 0 || o.CPUS < 0:
		return fmt.Errorf("job %s: negative attempts, steps or cpu_s", o.JobID)
	}
	check := func(what string, v float64) error {
		if err := checkFinite(what, v); err != nil {
			return fmt.Errorf("job %s: %w", o.JobID, err)
		}
		return nil
	}
	for _, f := range []struct {
		name string
		v    float64
	}{{"wall_s", o.WallS}, {"cpu_s", o.CPUS}, {"t_final", o.TFinal}, {"cell_updates_per_s", o.CellUpdatesPerS}} {
		if err := check(f.name, f.v); err != nil {
			return err
		}
	}
	for k, n := range o.Errors {
		for _, f := range []struct {
			name string
			v    float64
		}{{"l1", n.L1}, {"l2", n.L2}, {"linf", n.Linf}} {
			if err := check("errors."+k+"."+f.name, f.v); err != nil {
				return err
			}
		}
	}
	for k, v := range o.Functionals {
		if err := check("functionals."+k, v); err != nil {
			return err
		}
	}
	for k, t := range o.Totals {
		if err := check("totals."+k+".initial", t.Initial); err != nil {
			return err
		}
		if err := check("totals."+k+".final", t.Final); err != nil {
			return err
		}
	}
	return nil
}

// checkID checks a job_id: as NewID writes it in a message, present and not
// oversized in a record.
func checkID(id string, message bool) error {
	switch {
	case message && !ValidID(id):
		return fmt.Errorf("job_id %q is not 32 hex digits", id)
	case id == "":
		return fmt.Errorf("empty job_id")
	case len(id) > maxRecordID:
		return fmt.Errorf("job_id of %d bytes is longer than %d", len(id), maxRecordID)
	}
	return nil
}

func checkFinite(what string, v float64) error {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return fmt.Errorf("%s is %v (JSON has no non-finite numbers)", what, v)
	}
	return nil
}
