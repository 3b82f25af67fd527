package job

// The one codec of jobs and outcomes. Each record has one encoder and one
// decoder family with two entry points: a strict one for messages between
// processes (unknown fields, trailing data, oversized input and incomplete
// records refused) and a lenient one for stored records (unknown fields
// ignored, so that a store written by a newer version still reads). Both
// apply the record's one check function, at its message or record level.

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
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

// Encode is the JSON form of a job, as message and as stored record: the
// same bytes as json.Marshal(j) (FuzzJobCodec), written by an Encoder. It
// fails only on a cost that is not finite.
func Encode(j Job) ([]byte, error) {
	if err := checkFinite("cost", j.Cost); err != nil {
		return nil, fmt.Errorf("job %s: %w", j.ID, err)
	}
	var e Encoder
	return e.Encode(&j), nil
}

// DecodeMessage parses a job message strictly and checks that it is
// complete: a valid ID, a sweep, a case, parameters, a finite non-negative
// cost. It does not check the ID against the parameters (that needs the
// case registry; the runner does it).
func DecodeMessage(data []byte) (Job, error) {
	var j Job
	if err := DecodeStrict("job", data, &j); err != nil {
		return Job{}, err
	}
	if err := j.check(asMessage); err != nil {
		return Job{}, fmt.Errorf("job message: %w", err)
	}
	return j, nil
}

// DecodeRecord parses a stored job record leniently (unknown fields are
// ignored) and applies Job.Check. A RecordDecoder decodes many records
// faster.
func DecodeRecord(data []byte) (Job, error) {
	var j Job
	if err := json.Unmarshal(data, &j); err != nil {
		return Job{}, fmt.Errorf("job record: %w", err)
	}
	if err := j.Check(); err != nil {
		return Job{}, fmt.Errorf("job record: %w", err)
	}
	return j, nil
}

// EncodeOutcome is the JSON form of an outcome, as message and as stored
// record. It fails on a number that is not finite.
func EncodeOutcome(o Outcome) ([]byte, error) { return json.Marshal(o) }

// DecodeOutcomeMessage parses a result message strictly and checks that it
// is complete: Outcome.Check, a valid ID, a sweep, and a reason for a
// failure.
func DecodeOutcomeMessage(data []byte) (Outcome, error) {
	var o Outcome
	if err := DecodeStrict("result", data, &o); err != nil {
		return Outcome{}, err
	}
	if err := o.check(asMessage); err != nil {
		return Outcome{}, fmt.Errorf("result message: %w", err)
	}
	return o.normal(), nil
}

// DecodeOutcomeRecord parses a stored result record leniently (unknown
// fields are ignored) and applies Outcome.Check.
func DecodeOutcomeRecord(data []byte) (Outcome, error) {
	var o Outcome
	if err := json.Unmarshal(data, &o); err != nil {
		return Outcome{}, fmt.Errorf("result record: %w", err)
	}
	if err := o.Check(); err != nil {
		return Outcome{}, fmt.Errorf("result record: %w", err)
	}
	return o.normal(), nil
}

// normal spells an empty map as nil, as an absent one decodes, so that a
// decoded outcome encodes to what it was decoded from.
func (o Outcome) normal() Outcome {
	if len(o.Errors) == 0 {
		o.Errors = nil
	}
	if len(o.Functionals) == 0 {
		o.Functionals = nil
	}
	if len(o.Totals) == 0 {
		o.Totals = nil
	}
	return o
}

// Status markers as EncodeOutcome writes them. Inside a JSON string a quote
// is escaped, so the first marker found in a record EncodeOutcome wrote is
// its status field.
var (
	markDone   = []byte(`"status":"done"`)
	markFailed = []byte(`"status":"failed"`)
	markStatus = []byte(`"status":"`)
)

// RecordStatus reads only the status of a stored result record: a scan for
// the marker of the status field in a record EncodeOutcome wrote, and a
// lenient decode of the status alone for any other layout. A status other
// than done or failed is an error.
func RecordStatus(data []byte) (Status, error) {
	if i := bytes.Index(data, markStatus); i >= 0 && len(data) > 0 && data[0] == '{' && data[len(data)-1] == '}' {
		switch {
		case bytes.HasPrefix(data[i:], markDone):
			return StatusDone, nil
		case bytes.HasPrefix(data[i:], markFailed):
			return StatusFailed, nil
		}
	}
	var s struct {
		Status Status `json:"status"`
	}
	if err := json.Unmarshal(data, &s); err != nil {
		return "", fmt.Errorf("result record: %w", err)
	}
	if !s.Status.Valid() {
		return "", fmt.Errorf("result record: unknown status %q", s.Status)
	}
	return s.Status, nil
}
