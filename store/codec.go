package store

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"

	"fvsweep/sweep"
)

// Outcome statuses the store accepts.
const (
	StatusDone   = "done"
	StatusFailed = "failed"
)

// maxKeyLen bounds sweep names and job IDs. Job IDs are 32 hex digits; the
// bound only keeps hostile input away from bbolt's own key size limit.
const maxKeyLen = 512

// checkKey reports whether s can be a sweep name or a job ID.
func checkKey(what, s string) error {
	switch {
	case s == "":
		return fmt.Errorf("empty %s", what)
	case len(s) > maxKeyLen:
		return fmt.Errorf("%s of %d bytes is longer than %d", what, len(s), maxKeyLen)
	}
	return nil
}

func checkFinite(what string, v float64) error {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return fmt.Errorf("%s is %v (JSON has no non-finite numbers)", what, v)
	}
	return nil
}

// CheckOutcome reports why o cannot be stored, or nil. PutOutcomes applies
// the same check to every record; a caller that wants to drop bad records
// rather than fail a whole batch checks them first.
func CheckOutcome(o sweep.Outcome) error {
	if err := checkKey("job_id", o.JobID); err != nil {
		return err
	}
	if o.Status != StatusDone && o.Status != StatusFailed {
		return fmt.Errorf("job %s: status %q is neither %q nor %q", o.JobID, o.Status, StatusDone, StatusFailed)
	}
	if o.Attempts < 0 || o.Steps < 0 {
		return fmt.Errorf("job %s: negative attempts or steps", o.JobID)
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
	}{{"wall_s", o.WallS}, {"t_final", o.TFinal}, {"cell_updates_per_s", o.CellUpdatesPerS}} {
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

// checkJob reports why j cannot be stored as a job of the sweep named name.
func checkJob(j sweep.Job, name string) error {
	if err := checkKey("job_id", j.ID); err != nil {
		return err
	}
	if j.Sweep != "" && j.Sweep != name {
		return fmt.Errorf("job %s belongs to sweep %q, not %q", j.ID, j.Sweep, name)
	}
	if j.Case == "" {
		return fmt.Errorf("job %s: empty case", j.ID)
	}
	if err := checkFinite("cost", j.Cost); err != nil {
		return fmt.Errorf("job %s: %w", j.ID, err)
	}
	if j.Cost < 0 {
		return fmt.Errorf("job %s: negative cost %g", j.ID, j.Cost)
	}
	return nil
}

// DecodeOutcome decodes a stored result record. Bytes that are not a JSON
// object with a job_id and a known status give an error.
func DecodeOutcome(data []byte) (sweep.Outcome, error) {
	var o sweep.Outcome
	if err := json.Unmarshal(data, &o); err != nil {
		return sweep.Outcome{}, fmt.Errorf("result record: %w", err)
	}
	if err := CheckOutcome(o); err != nil {
		return sweep.Outcome{}, fmt.Errorf("result record: %w", err)
	}
	return o, nil
}

// DecodeJob decodes a stored job record. Bytes that are not a JSON object
// with a job_id and a case give an error.
func DecodeJob(data []byte) (sweep.Job, error) {
	var j sweep.Job
	if err := json.Unmarshal(data, &j); err != nil {
		return sweep.Job{}, fmt.Errorf("job record: %w", err)
	}
	if err := checkJob(j, j.Sweep); err != nil {
		return sweep.Job{}, fmt.Errorf("job record: %w", err)
	}
	return j, nil
}

// DecodeSweep decodes a stored sweep record. Bytes that are not a JSON
// object with a name give an error.
func DecodeSweep(data []byte) (SweepRecord, error) {
	var r SweepRecord
	if err := json.Unmarshal(data, &r); err != nil {
		return SweepRecord{}, fmt.Errorf("sweep record: %w", err)
	}
	if err := checkKey("name", r.Name); err != nil {
		return SweepRecord{}, fmt.Errorf("sweep record: %w", err)
	}
	if r.Jobs < 0 {
		return SweepRecord{}, fmt.Errorf("sweep record %q: negative job count", r.Name)
	}
	return r, nil
}

// Status markers as encoding/json writes them. Inside a JSON string a quote
// is escaped, so the first marker found in a record this package wrote is its
// status field.
var (
	markDone   = []byte(`"status":"done"`)
	markFailed = []byte(`"status":"failed"`)
	markStatus = []byte(`"status":"`)
)

// statusOf reads only the status of a stored result record: a scan for the
// marker of the record's status field, and a full decode when the record
// does not have the layout this package writes.
func statusOf(data []byte) (string, error) {
	if i := bytes.Index(data, markStatus); i >= 0 && len(data) > 0 && data[0] == '{' && data[len(data)-1] == '}' {
		switch {
		case bytes.HasPrefix(data[i:], markDone):
			return StatusDone, nil
		case bytes.HasPrefix(data[i:], markFailed):
			return StatusFailed, nil
		}
	}
	var s struct {
		Status string `json:"status"`
	}
	if err := json.Unmarshal(data, &s); err != nil {
		return "", fmt.Errorf("result record: %w", err)
	}
	if s.Status != StatusDone && s.Status != StatusFailed {
		return "", fmt.Errorf("result record: unknown status %q", s.Status)
	}
	return s.Status, nil
}
