package wire

import (
	"bytes"
	"encoding/json"
	"fvsweep/sweep/field"
	"fvsweep/sweep/job"
	"math"
	"reflect"
	"strings"
	"testing"
)

func TestSweepToken(t *testing.T) {
	for name, want := range map[string]string{
		"blast-limiters": "blast-limiters",
		"a_b-9":          "a_b-9",
	} {
		if got := SweepToken(name); got != want {
			t.Errorf("SweepToken(%q) = %q, want %q", name, got, want)
		}
	}
	for _, name := range []string{"with space", "dot.ted", "star*", strings.Repeat("x", 65), ""} {
		got := SweepToken(name)
		if !isToken(got) || got == name || len(got) != 17 {
			t.Errorf("SweepToken(%q) = %q: want a hashed token", name, got)
		}
	}
	n := Names{}
	if got := n.JobSubject("s", "id"); got != "fvsweep.job.s.id" {
		t.Errorf("JobSubject = %q", got)
	}
	if n.JobStream() != "FVSWEEP_JOBS" || n.JobFilter("s") != "fvsweep.job.s.>" {
		t.Errorf("names %q %q", n.JobStream(), n.JobFilter("s"))
	}
	// Routes: fv2d keeps its subjects and consumer; a program's route is one
	// token that differs with the version; the filters are disjoint (a
	// four-token and a five-token pattern, or five-token ones differing in
	// the route token).
	if Route("", "") != "" || Route("fv2d", "") != "" || n.RouteSubject("s", "", "id") != n.JobSubject("s", "id") ||
		n.RouteConsumer("") != "workers" || n.RouteFilter("") != "fvsweep.job.*.*" {
		t.Error("the built-in solver's route changed")
	}
	r1, r2 := Route("heron", "0.4.1"), Route("heron", "0.4.2")
	if r1 == r2 || !isToken(r1) || !strings.HasPrefix(r1, "heron-") || len(r1) != len("heron-")+12 {
		t.Errorf("routes %q %q", r1, r2)
	}
	j := job.Job{ID: "id", Sweep: "s", Solver: "heron", Version: "0.4.1"}
	if got := n.SubjectOf(j); got != "fvsweep.job.s."+r1+".id" || n.RouteFilter(r1) != "fvsweep.job.*."+r1+".*" ||
		n.RouteConsumer(r1) != "solver-"+r1 {
		t.Errorf("program subject %q filter %q consumer %q", got, n.RouteFilter(r1), n.RouteConsumer(r1))
	}
	if _, err := NewNames("bad.prefix"); err == nil {
		t.Error("NewNames accepted a dotted prefix")
	}
}

// Fuzz targets for the decoders of the messages on the NATS subjects. Each
// must never panic, must refuse what is over MaxMessage, and whatever it
// accepts must survive a round trip through its encoder unchanged and
// still satisfy the checks the decoder promises. Run in CI for a bounded
// time each, e.g.
//
//	go test ./sweep/wire -run '^$' -fuzz '^FuzzDecodeJob$' -fuzztime 20s

var wireJob = job.Job{
	ID: "0123456789abcdef0123456789abcdef", Sweep: "s", Study: 1, Case: "burgers-sine",
	Params: map[string]string{"nx": "32", "t_end": "0.1"}, Refine: "nx", Group: "g", Cost: 1234.5,
}

var wireOutcome = job.Outcome{
	JobID: wireJob.ID, Sweep: "s", Status: job.StatusDone, Worker: "w1", Attempts: 2, WallS: 0.25,
	Steps: 10, TFinal: 0.1, Functionals: map[string]float64{"mass": 1},
}

func mustJSON(v any) []byte {
	b, err := json.Marshal(v)
	if err != nil {
		panic(err)
	}
	return b
}

// hostile are messages that arrive on the subjects from a buggy or hostile
// publisher; every decoder gets them all as seeds.
func hostile() [][]byte {
	return [][]byte{
		nil,
		[]byte("not json"),
		[]byte("{"),
		[]byte(`[]`),
		[]byte(`null`),
		[]byte(`{"job_id": 7}`),
		[]byte(`{"job_id":"0123456789abcdef0123456789abcdef","extra":1}`),
		[]byte(`{"job_id":"0123456789ABCDEF0123456789ABCDEF","sweep":"s","case":"c","params":{"a":"1"}}`),
		[]byte(`{"job_id":"0123456789abcdef0123456789abcdef","sweep":"s","case":"c","params":{"a":"1"},"cost":1e999}`),
		[]byte(`{"job_id":"0123456789abcdef0123456789abcdef","sweep":"s","case":"c","params":{"a":"1"},"cost":-1}`),
		[]byte(`{"job_id":"0123456789abcdef0123456789abcdef","sweep":"s","status":"failed"}`),
		[]byte(`{"job_id":"0123456789abcdef0123456789abcdef","sweep":"s","status":"maybe"}`),
		append(mustJSON(wireJob), []byte(` {"again":1}`)...),
		[]byte(`{"id":"a b","every":1}`),
		[]byte(`{"id":"w","every":-5}`),
		[]byte("\x00\xff\xfe"),
		[]byte(`{"job_id":"` + strings.Repeat("a", 1000) + `"}`),
	}
}

func FuzzDecodeJob(f *testing.F) {
	f.Add(mustJSON(wireJob))
	for _, b := range hostile() {
		f.Add(b)
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		j, err := job.DecodeMessage(data)
		if err != nil {
			if j.ID != "" || j.Params != nil {
				t.Fatalf("refused job %q returned a partial value %+v", data, j)
			}
			return
		}
		if len(data) > MaxMessage || !job.ValidID(j.ID) || j.Sweep == "" || j.Case == "" || len(j.Params) == 0 ||
			math.IsNaN(j.Cost) || math.IsInf(j.Cost, 0) || j.Cost < 0 {
			t.Fatalf("accepted a job that breaks the contract: %+v", j)
		}
		again, err := job.DecodeMessage(mustJSON(j))
		if err != nil || !reflect.DeepEqual(again, j) {
			t.Fatalf("round trip of %+v: %+v, %v", j, again, err)
		}
	})
}

func FuzzDecodeOutcome(f *testing.F) {
	f.Add(mustJSON(wireOutcome))
	failed := wireOutcome
	failed.Status, failed.Error = job.StatusFailed, "diverged: negative density at step 4"
	f.Add(mustJSON(failed))
	for _, b := range hostile() {
		f.Add(b)
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		o, err := job.DecodeOutcomeMessage(data)
		if err != nil {
			return
		}
		if len(data) > MaxMessage || !job.ValidID(o.JobID) || o.Sweep == "" || o.Attempts < 0 ||
			(o.Status != job.StatusDone && o.Status != job.StatusFailed) || (o.Status == job.StatusFailed && o.Error == "") {
			t.Fatalf("accepted an outcome that breaks the contract: %+v", o)
		}
		again, err := job.DecodeOutcomeMessage(mustJSON(o))
		if err != nil || !reflect.DeepEqual(again, o) {
			t.Fatalf("round trip of %+v: %+v, %v", o, again, err)
		}
	})
}

func FuzzDecodeWorkerReport(f *testing.F) {
	f.Add(mustJSON(WorkerReport{ID: "host-1-abc", Host: "host", Cores: 8, Concurrency: 8, Every: 2e9, Done: 3,
		Current: []RunningJob{{JobID: wireJob.ID, Sweep: "s"}}}))
	for _, b := range hostile() {
		f.Add(b)
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		b := DefaultReportBounds()
		r, err := DecodeWorkerReport(data, b)
		if err != nil {
			return
		}
		if !isToken(r.ID) || r.Every < b.MinEvery || r.Every > b.MaxEvery || len(r.Current) > b.MaxCurrent || len(data) > b.MaxBytes {
			t.Fatalf("accepted a report that breaks the contract: %+v", r)
		}
		again, err := DecodeWorkerReport(mustJSON(r), b)
		if err != nil || !reflect.DeepEqual(again, r) {
			t.Fatalf("round trip of %+v: %+v, %v", r, again, err)
		}
	})
}

// FuzzDecodeAPI covers the request and reply decoders of the API verbs.
func FuzzDecodeAPI(f *testing.F) {
	f.Add(mustJSON(SubmitRequest{File: "a.toml", Source: "name = \"x\"\n"}))
	f.Add(mustJSON(RowsReply{Rows: []Row{{Job: wireJob, Status: "done", Outcome: &wireOutcome}}, Total: 1, Last: true}))
	f.Add(mustJSON(StatusReply{Sweeps: []SweepStatus{{Sweep: "s", JobsTotal: 3, Done: 1}}}))
	for _, b := range hostile() {
		f.Add(b)
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		for _, v := range []any{&SubmitRequest{}, &SubmitReply{}, &SweepRequest{}, &StatusReply{}, &RowsReply{}, &CancelReply{}, &ForgetRequest{}, &ForgetReply{}} {
			if err := Decode("api", data, v); err != nil {
				continue
			}
			if len(data) > MaxMessage {
				t.Fatalf("accepted %d bytes", len(data))
			}
			w := reflect.New(reflect.TypeOf(v).Elem()).Interface()
			if err := Decode("api", mustJSON(v), w); err != nil || !reflect.DeepEqual(v, w) {
				t.Fatalf("round trip of %T %+v: %+v, %v", v, v, w, err)
			}
		}
	})
}

func FuzzDecodeField(f *testing.F) {
	good, err := field.Encode(field.Header{JobID: wireJob.ID, Vars: []string{"rho", "E"}, NX: 2, NY: 1, DX: 0.5, DY: 1},
		[][]float32{{1, 2}, {3, float32(math.Inf(1))}})
	if err != nil {
		f.Fatal(err)
	}
	f.Add(good)
	f.Add(good[:len(good)-1])
	f.Add([]byte("FVF1\xff\xff\xff\xff"))
	f.Add([]byte("FVF1\x02\x00\x00\x00{}"))
	for _, b := range hostile() {
		f.Add(b)
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		h, vals, err := field.Decode(data)
		if err != nil {
			return
		}
		if h.NX <= 0 || h.NY <= 0 || len(vals) != len(h.Vars) {
			t.Fatalf("accepted a field that breaks the contract: %+v, %d variables", h, len(vals))
		}
		enc, err := field.Encode(h, vals)
		if err != nil {
			t.Fatalf("re-encoding an accepted field: %v", err)
		}
		h2, vals2, err := field.Decode(enc)
		if err != nil || !reflect.DeepEqual(h2, h) || len(vals2) != len(vals) {
			t.Fatalf("round trip: %+v, %v", h2, err)
		}
		for k := range vals {
			for i := range vals[k] {
				if math.Float32bits(vals[k][i]) != math.Float32bits(vals2[k][i]) {
					t.Fatalf("round trip changed value %d of %s", i, h.Vars[k])
				}
			}
		}
	})
}

// TestDecodersRefuseOversize: a message over MaxMessage is refused before
// it is parsed, whatever it holds.
func TestDecodersRefuseOversize(t *testing.T) {
	big := mustJSON(job.Job{ID: wireJob.ID, Sweep: "s", Case: "c", Params: map[string]string{"pad": strings.Repeat("x", MaxMessage)}})
	if _, err := job.DecodeMessage(big); err == nil || !strings.Contains(err.Error(), "exceeds") {
		t.Errorf("job of %d bytes: %v", len(big), err)
	}
	if _, err := job.DecodeOutcomeMessage(big); err == nil || !strings.Contains(err.Error(), "exceeds") {
		t.Errorf("result of %d bytes: %v", len(big), err)
	}
	if _, err := job.DecodeMessage(bytes.TrimSpace(mustJSON(wireJob))); err != nil {
		t.Errorf("the good job is refused: %v", err)
	}
}

// The report bounds refuse what issue 11 found a worker credential could
// send: an interval that never expires, negative slots, more running jobs
// than slots, a huge report.
func TestWorkerReportBounds(t *testing.T) {
	b := DefaultReportBounds()
	good := WorkerReport{ID: "w1", Host: "h", Cores: 2, Concurrency: 2, Every: 2e9,
		Current: []RunningJob{{JobID: wireJob.ID, Sweep: "s"}}}
	if _, err := DecodeWorkerReport(mustJSON(good), b); err != nil {
		t.Fatalf("good report refused: %v", err)
	}
	half := good
	half.Current = []RunningJob{{JobID: wireJob.ID, Sweep: "s", Progress: &[]float64{0.5}[0]}}
	if r, err := DecodeWorkerReport(mustJSON(half), b); err != nil || *r.Current[0].Progress != 0.5 {
		t.Fatalf("report with progress 0.5: %v", err)
	}
	many := make([]RunningJob, 3)
	for i := range many {
		many[i] = RunningJob{JobID: wireJob.ID, Sweep: "s"}
	}
	for name, bad := range map[string]func(*WorkerReport){
		"every 9e18":       func(r *WorkerReport) { r.Every = 9e18 },
		"every 1ns":        func(r *WorkerReport) { r.Every = 1 },
		"negative slots":   func(r *WorkerReport) { r.Concurrency = -4 },
		"more than slots":  func(r *WorkerReport) { r.Current = many },
		"busy 50":          func(r *WorkerReport) { r.Busy = 50 },
		"long host":        func(r *WorkerReport) { r.Host = strings.Repeat("h", b.MaxText+1) },
		"bad running job":  func(r *WorkerReport) { r.Current = []RunningJob{{JobID: "x"}} },
		"negative done":    func(r *WorkerReport) { r.Done = -1 },
		"too many current": func(r *WorkerReport) { r.Concurrency = b.MaxCores + 1 },
		"progress 1.5": func(r *WorkerReport) {
			r.Current = []RunningJob{{JobID: wireJob.ID, Sweep: "s", Progress: &[]float64{1.5}[0]}}
		},
		"progress -0.1": func(r *WorkerReport) {
			r.Current = []RunningJob{{JobID: wireJob.ID, Sweep: "s", Progress: &[]float64{-0.1}[0]}}
		},
	} {
		r := good
		bad(&r)
		if _, err := DecodeWorkerReport(mustJSON(r), b); err == nil {
			t.Errorf("%s: accepted", name)
		}
	}
	big := good
	big.Host = strings.Repeat("h", b.MaxBytes)
	if _, err := DecodeWorkerReport(mustJSON(big), b); err == nil || !strings.Contains(err.Error(), "exceeds") {
		t.Errorf("oversized report: %v", err)
	}
}
