package store

import (
	"bytes"
	"encoding/json"
	"fvsweep/sweep/job"
	"reflect"
	"testing"
)

// FuzzDecodeRecords feeds arbitrary bytes to the three record decoders. They
// must return an error or a record, never panic; a record they accept must
// survive an encode/decode round trip unchanged, and a job encodes to the
// same bytes by appendJob as by encoding/json; what the fast job decoder
// accepts, DecodeJob decodes to the same job.
func FuzzDecodeRecords(f *testing.F) {
	j := testJob("fz", 32, "minmod")
	for _, v := range []any{
		j, testOutcome(j, job.StatusDone), testOutcome(j, job.StatusFailed),
		SweepRecord{Name: "fz", Spec: "name = \"fz\"\n", Jobs: 3},
	} {
		data, err := json.Marshal(v)
		if err != nil {
			f.Fatal(err)
		}
		f.Add(data)
		f.Add(data[:len(data)/2])
	}
	for _, s := range []string{
		"", "null", "{}", "[]", `"x"`, `{"job_id":""}`, `{"job_id":"a","status":"done","wall_s":1e999}`,
		`{"job_id":"a","case":"c","cost":-1}`, `{"name":"s","jobs":-2}`, `{"job_id":"a","status":"done","errors":{"rho":7}}`,
	} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		if o, err := DecodeOutcome(data); err == nil {
			roundTrip(t, o, func(b []byte) (any, error) { return DecodeOutcome(b) })
			// On a record as PutOutcomes writes it, the fast status scan
			// agrees with the decoder.
			if enc, _ := json.Marshal(o); bytes.Equal(enc, data) {
				if st, err := statusOf(data); err != nil || st != o.Status {
					t.Fatalf("statusOf = %q, %v; decoded status %q", st, err, o.Status)
				}
			}
		}
		if j, err := DecodeJob(data); err == nil {
			roundTrip(t, j, func(b []byte) (any, error) { return DecodeJob(b) })
			want, _ := json.Marshal(j)
			if got, _ := appendJob(nil, &j, nil); !bytes.Equal(got, want) {
				t.Fatalf("appendJob\n got %s\nwant %s", got, want)
			}
		}
		if fast, ok := decodeJobFast(data, newInterner()); ok {
			slow, err := DecodeJob(data)
			if err != nil || !reflect.DeepEqual(fast, slow) {
				t.Fatalf("decodeJobFast accepted %q as %+v; DecodeJob: %+v, %v", data, fast, slow, err)
			}
		}
		if r, err := DecodeSweep(data); err == nil {
			roundTrip(t, r, func(b []byte) (any, error) { return DecodeSweep(b) })
		}
		statusOf(data)
	})
}

// roundTrip checks that v, encoded, decodes to a value with the same encoding.
func roundTrip(t *testing.T, v any, decode func([]byte) (any, error)) {
	t.Helper()
	first, err := json.Marshal(v)
	if err != nil {
		t.Fatalf("decoded record %#v does not encode: %v", v, err)
	}
	w, err := decode(first)
	if err != nil {
		t.Fatalf("encoded record %s does not decode: %v", first, err)
	}
	second, err := json.Marshal(w)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(first, second) {
		t.Fatalf("round trip changed the record:\n%s\n%s", first, second)
	}
}
