package job

// The codec of jobs and outcomes as messages: strict decoders that refuse
// unknown fields, trailing data, oversized input and malformed IDs.

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"math"
)

// MaxMessage is the largest message the decoders accept (NATS's default
// max_payload is 1 MiB).
const MaxMessage = 1 << 20

// DecodeStrict unmarshals one JSON value into v, refusing unknown fields,
// trailing data and messages over MaxMessage.
func DecodeStrict(what string, data []byte, v any) error {
	if len(data) > MaxMessage {
		return fmt.Errorf("%s: message of %d bytes exceeds %d", what, len(data), MaxMessage)
	}
	dec := json.NewDecoder(bytes.NewReader(data))
	dec.DisallowUnknownFields()
	if err := dec.Decode(v); err != nil {
		return fmt.Errorf("%s: %w", what, err)
	}
	if _, err := dec.Token(); err != io.EOF {
		return fmt.Errorf("%s: trailing data after the JSON value", what)
	}
	return nil
}

// Encode is the job message.
func Encode(j Job) ([]byte, error) { return json.Marshal(j) }

// Decode parses a job message and checks its shape: a valid ID, a sweep,
// a case, parameters, a finite cost. It does not check the ID against the
// parameters (that needs the case registry; the worker does it).
func Decode(data []byte) (Job, error) {
	var j Job
	if err := DecodeStrict("job", data, &j); err != nil {
		return Job{}, err
	}
	switch {
	case !ValidID(j.ID):
		return Job{}, fmt.Errorf("job: job_id %q is not 32 hex digits", j.ID)
	case j.Sweep == "":
		return Job{}, fmt.Errorf("job %s: no sweep", j.ID)
	case j.Case == "":
		return Job{}, fmt.Errorf("job %s: no case", j.ID)
	case len(j.Params) == 0:
		return Job{}, fmt.Errorf("job %s: no params", j.ID)
	case math.IsNaN(j.Cost) || math.IsInf(j.Cost, 0) || j.Cost < 0:
		return Job{}, fmt.Errorf("job %s: cost %v is not a finite non-negative number", j.ID, j.Cost)
	}
	return j, nil
}

// EncodeOutcome is the result message.
func EncodeOutcome(o Outcome) ([]byte, error) { return json.Marshal(o) }

// DecodeOutcome parses a result message and checks its shape.
func DecodeOutcome(data []byte) (Outcome, error) {
	var o Outcome
	if err := DecodeStrict("result", data, &o); err != nil {
		return Outcome{}, err
	}
	switch {
	case !ValidID(o.JobID):
		return Outcome{}, fmt.Errorf("result: job_id %q is not 32 hex digits", o.JobID)
	case o.Sweep == "":
		return Outcome{}, fmt.Errorf("result %s: no sweep", o.JobID)
	case !o.Status.Valid():
		return Outcome{}, fmt.Errorf("result %s: status %q is neither done nor failed", o.JobID, o.Status)
	case o.Status == StatusFailed && o.Error == "":
		return Outcome{}, fmt.Errorf("result %s: failed without a reason", o.JobID)
	case o.Attempts < 0:
		return Outcome{}, fmt.Errorf("result %s: negative attempts", o.JobID)
	}
	// An empty map and an absent one mean the same; keep one spelling so that
	// a decoded outcome re-encodes to what it decodes from.
	if len(o.Errors) == 0 {
		o.Errors = nil
	}
	if len(o.Functionals) == 0 {
		o.Functionals = nil
	}
	if len(o.Totals) == 0 {
		o.Totals = nil
	}
	return o, nil
}

// RunningJob is a job a worker is running now.
