package job

import (
	"bytes"
	"encoding/json"
	"math"
	"reflect"
	"strconv"
	"testing"
)

// sampleJobs makes n distinct jobs of sweep name with a parameter set the
// size of an Euler case's, every third one of an outside solver.
func sampleJobs(name string, n int) []Job {
	limiters := []string{"minmod", "vanleer", "mc", "superbee"}
	jobs := make([]Job, n)
	for i := range jobs {
		nx := strconv.Itoa(16 << (i % 5))
		p := map[string]string{
			"nx": nx, "ny": nx, "limiter": limiters[i/5%4], "split": "strang", "cfl": "0.8",
			"t_end": "2", "flux": "hllc", "gamma": "1.4", "mach": strconv.Itoa(i / 20),
		}
		jobs[i] = Job{
			ID: NewID("vortex " + strconv.Itoa(i)), Sweep: name, Study: i / 20, Case: "vortex",
			Params: p, Refine: "nx", Group: "limiter=" + p["limiter"], Cost: float64(i) * 4096,
		}
		if i%3 == 2 {
			jobs[i].Solver, jobs[i].Version = "heron", "0.4."+strconv.Itoa(i%2)
		}
	}
	return jobs
}

// TestEncoderMatchesMarshal checks the hand encoder of jobs against
// encoding/json (the reference: the documented record format is its output),
// on strings that need every escape and numbers on both sides of the
// exponent thresholds.
func TestEncoderMatchesMarshal(t *testing.T) {
	strs := []string{"", "plain", `q"uote`, `back\slash`, "tab\tnl\ncr\r", "\b\f\x00\x1f\x7f", "<a&b>", "caf\u00e9 \u2028\u2029 \U0001F600", "bad\xffutf8\xc3", "\xed\xa0\x80"}
	floats := []float64{0, 1, -1, 0.5, 1e-6, 9.99e-7, 1e-7, 123456789, 1e20, 1e21, 1.5e300, 5e-324, 2097152, 1.0 / 3}
	var e Encoder
	for i, s := range strs {
		j := sampleJobs("sw", 3)[i%3]
		j.Sweep, j.Case, j.Group, j.Solver, j.Version = s, s+"c", "g"+s, s, "v"+s
		j.Params[s] = s
		j.Study = i * 1000
		j.Snapshot = i%2 == 0
		if i == 3 {
			j.Params = nil
		}
		if i == 4 {
			j.Params = map[string]string{}
		}
		for _, f := range floats {
			j.Cost = f
			want, err := json.Marshal(j)
			if err != nil {
				t.Fatal(err)
			}
			if got := e.Encode(&j); !bytes.Equal(got, want) {
				t.Fatalf("Encoder\n got %s\nwant %s", got, want)
			}
			if got, err := Encode(j); err != nil || !bytes.Equal(got, want) {
				t.Fatalf("Encode\n got %s, %v\nwant %s", got, err, want)
			}
		}
	}
	if _, err := Encode(Job{ID: "a", Case: "c", Cost: math.NaN()}); err == nil {
		t.Error("Encode of a NaN cost succeeded")
	}
}

// TestBuiltinSolverKeepsRecords: a job of the built-in solver, named or not,
// has the record an fv2d job had before jobs named their solver.
func TestBuiltinSolverKeepsRecords(t *testing.T) {
	j := Job{ID: NewID("vortex nx=8"), Sweep: "s", Case: "vortex", Params: map[string]string{"nx": "8"}, Refine: "nx", Cost: 512}
	data, err := Encode(j)
	if err != nil || string(data) != `{"job_id":"`+j.ID+`","sweep":"s","study":0,"case":"vortex","params":{"nx":"8"},"refine":"nx","group":"","cost":512,"snapshot":false}` {
		t.Fatalf("record %s, %v", data, err)
	}
	if j.SolverName() != BuiltinSolver {
		t.Errorf("SolverName of an unnamed solver = %q", j.SolverName())
	}
	j.Solver = "heron"
	if data, _ := Encode(j); !bytes.Contains(data, []byte(`"case":"vortex","solver":"heron","params"`)) || j.SolverName() != "heron" {
		t.Errorf("record of an outside solver's job: %s", data)
	}
}

func TestRecordDecoder(t *testing.T) {
	var d RecordDecoder
	var e Encoder
	jobs := append(sampleJobs("sw", 20), Job{ID: "a", Case: "c", Params: nil, Cost: 1e-9}, Job{ID: "b", Case: "c", Params: map[string]string{}})
	for _, j := range jobs {
		data := e.Encode(&j)
		got, ok := d.fast(data)
		if !ok || !reflect.DeepEqual(got, j) {
			t.Fatalf("fast(%s) = %+v, %v", data, got, ok)
		}
	}
	// Not the fast layout: left to DecodeRecord.
	for _, s := range []string{
		`{"job_id":"a\u0041","sweep":"","study":0,"case":"c","params":null,"refine":"","group":"","cost":0,"snapshot":false}`,
		`{"job_id":"a","sweep":"","study":0,"case":"c","params":null,"refine":"","group":"","cost":0.0,"snapshot":false}`,
		`{"job_id":"a","sweep":"","study":01,"case":"c","params":null,"refine":"","group":"","cost":0,"snapshot":false}`,
		`{"job_id":"a","sweep":"","study":0,"case":"c","params":{"k":"1","k":"2"},"refine":"","group":"","cost":0,"snapshot":false}`,
		`{"job_id":"a","sweep":"","study":0,"case":"c","params":null,"refine":"","group":"","cost":0,"snapshot":false} `,
		`{"sweep":"","job_id":"a","study":0,"case":"c","params":null,"refine":"","group":"","cost":0,"snapshot":false}`,
		`{"job_id":"a","sweep":"","study":0,"case":"c","solver":"","params":null,"refine":"","group":"","cost":0,"snapshot":false}`,
	} {
		if j, ok := d.fast([]byte(s)); ok {
			t.Errorf("fast accepted %s as %+v", s, j)
		}
		if j, err := d.Decode([]byte(s)); json.Valid([]byte(s)) && (err != nil || j.ID == "") {
			t.Errorf("Decode(%s) = %+v, %v", s, j, err)
		}
	}
	// Unknown fields of a newer version are ignored in records, refused in
	// messages.
	newer := `{"job_id":"` + jobs[0].ID + `","sweep":"sw","case":"vortex","params":{"nx":"8"},"cost":1,"priority":3}`
	if _, err := d.Decode([]byte(newer)); err != nil {
		t.Errorf("record with an unknown field: %v", err)
	}
	if _, err := DecodeMessage([]byte(newer)); err == nil {
		t.Error("message with an unknown field accepted")
	}
}

func TestRecordStatus(t *testing.T) {
	cases := []struct {
		data string
		want Status
		ok   bool
	}{
		{`{"job_id":"a","sweep":"s","status":"done","worker":"w"}`, StatusDone, true},
		{`{"job_id":"a","sweep":"s","status":"failed","error":"\"status\":\"done\""}`, StatusFailed, true},
		{`{"status": "failed"}`, StatusFailed, true}, // not EncodeOutcome's layout: full decode
		{`{"job_id":"a","status":"queued"}`, "", false},
		{`{"job_id":"a","status":"do`, "", false},
		{`{}`, "", false},
	}
	for _, c := range cases {
		got, err := RecordStatus([]byte(c.data))
		if got != c.want || (err == nil) != c.ok {
			t.Errorf("RecordStatus(%s) = %q, %v; want %q, ok=%v", c.data, got, err, c.want, c.ok)
		}
	}
}

// FuzzJobCodec feeds arbitrary bytes to the decoders of both records. They
// must return an error or a record, never panic. A record they accept
// survives an encode/decode round trip unchanged; a job encodes to the same
// bytes by Encoder as by encoding/json; what the fast path accepts,
// DecodeRecord decodes to the same job; what a message decoder accepts, the
// record decoder accepts as the same value; on an outcome as EncodeOutcome
// writes it, RecordStatus agrees with the decoder.
//
//	go test ./sweep/job -run '^$' -fuzz '^FuzzJobCodec$' -fuzztime 20s
func FuzzJobCodec(f *testing.F) {
	jobs := sampleJobs("fz", 3)
	done := Outcome{JobID: jobs[0].ID, Sweep: "fz", Status: StatusDone, Worker: "w", Attempts: 1, WallS: 0.25, Steps: 12,
		Errors: map[string]Norms{"rho": {L1: 1e-3, L2: 2e-3, Linf: 5e-3}}, Functionals: map[string]float64{"peak_p": 1.5}}
	failed := Outcome{JobID: jobs[1].ID, Sweep: "fz", Status: StatusFailed, Error: "diverged", Attempts: 3}
	for _, v := range []any{jobs[0], jobs[2], done, failed} {
		data, err := json.Marshal(v)
		if err != nil {
			f.Fatal(err)
		}
		f.Add(data)
		f.Add(data[:len(data)/2])
	}
	for _, s := range []string{
		"", "null", "{}", "[]", `"x"`, `{"job_id":""}`, `{"job_id":"a","status":"done","wall_s":1e999}`,
		`{"job_id":"a","case":"c","cost":-1}`, `{"job_id":"a","status":"done","errors":{"rho":7}}`,
		`{"job_id":"a","case":"c","solver":"x\u00e9","params":null,"cost":0}`,
	} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		if o, err := DecodeOutcomeRecord(data); err == nil {
			roundTrip(t, o, EncodeOutcome, DecodeOutcomeRecord)
			if enc, _ := EncodeOutcome(o); bytes.Equal(enc, data) {
				if st, err := RecordStatus(data); err != nil || st != o.Status {
					t.Fatalf("RecordStatus = %q, %v; decoded status %q", st, err, o.Status)
				}
			}
		}
		if o, err := DecodeOutcomeMessage(data); err == nil {
			if r, err := DecodeOutcomeRecord(data); err != nil || !reflect.DeepEqual(o, r) {
				t.Fatalf("message %q decodes to %+v; as a record to %+v, %v", data, o, r, err)
			}
		}
		if j, err := DecodeRecord(data); err == nil {
			roundTrip(t, j, Encode, DecodeRecord)
			want, _ := json.Marshal(j)
			var e Encoder
			if got := e.Encode(&j); !bytes.Equal(got, want) {
				t.Fatalf("Encoder\n got %s\nwant %s", got, want)
			}
		}
		if j, err := DecodeMessage(data); err == nil {
			if r, err := DecodeRecord(data); err != nil || !reflect.DeepEqual(j, r) {
				t.Fatalf("message %q decodes to %+v; as a record to %+v, %v", data, j, r, err)
			}
		}
		var d RecordDecoder
		if fast, ok := d.fast(data); ok {
			slow, err := DecodeRecord(data)
			if err != nil || !reflect.DeepEqual(fast, slow) {
				t.Fatalf("fast path accepted %q as %+v; DecodeRecord: %+v, %v", data, fast, slow, err)
			}
		}
		RecordStatus(data)
	})
}

// roundTrip checks that v, encoded, decodes to a value with the same encoding.
func roundTrip[T any](t *testing.T, v T, encode func(T) ([]byte, error), decode func([]byte) (T, error)) {
	t.Helper()
	first, err := encode(v)
	if err != nil {
		t.Fatalf("decoded record %#v does not encode: %v", v, err)
	}
	w, err := decode(first)
	if err != nil {
		t.Fatalf("encoded record %s does not decode: %v", first, err)
	}
	second, err := encode(w)
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(first, second) {
		t.Fatalf("round trip changed the record:\n%s\n%s", first, second)
	}
}

func BenchmarkEncoder(b *testing.B) {
	jobs := sampleJobs("bench", 1000)
	var e Encoder
	b.ReportAllocs()
	for i := 0; b.Loop(); i++ {
		e.Encode(&jobs[i%len(jobs)])
	}
}

func BenchmarkRecordDecoder(b *testing.B) {
	jobs := sampleJobs("bench", 1000)
	data := make([][]byte, len(jobs))
	for i := range jobs {
		data[i], _ = Encode(jobs[i])
	}
	var d RecordDecoder
	b.ReportAllocs()
	for i := 0; b.Loop(); i++ {
		if _, err := d.Decode(data[i%len(data)]); err != nil {
			b.Fatal(err)
		}
	}
}
