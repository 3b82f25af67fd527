package sweep

import (
	"math"
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
	if n.JobStream() != "FVSWEEP_JOBS" || n.JobFilter("s") != "fvsweep.job.s.*" {
		t.Errorf("names %q %q", n.JobStream(), n.JobFilter("s"))
	}
	if _, err := NewNames("bad.prefix"); err == nil {
		t.Error("NewNames accepted a dotted prefix")
	}
}

const goodID = "0123456789abcdef0123456789abcdef"

func TestDecodeJob(t *testing.T) {
	good := `{"job_id":"` + goodID + `","sweep":"s","study":1,"case":"vortex","params":{"nx":"8"},"refine":"nx","group":"g","cost":10,"snapshot":false}`
	if j, err := DecodeJob([]byte(good)); err != nil || j.Params["nx"] != "8" {
		t.Fatalf("good job: %+v %v", j, err)
	}
	for name, bad := range map[string]string{
		"not json":    `{job`,
		"unknown key": strings.Replace(good, `"group"`, `"grupo"`, 1),
		"short id":    strings.Replace(good, goodID, "abc", 1),
		"upper id":    strings.Replace(good, goodID, strings.ToUpper(goodID), 1),
		"no sweep":    strings.Replace(good, `"sweep":"s"`, `"sweep":""`, 1),
		"no params":   strings.Replace(good, `{"nx":"8"}`, `{}`, 1),
		"neg cost":    strings.Replace(good, `"cost":10`, `"cost":-1`, 1),
		"trailing":    good + `{}`,
		"huge":        `{"job_id":"` + strings.Repeat("a", MaxMessage) + `"}`,
	} {
		if _, err := DecodeJob([]byte(bad)); err == nil {
			t.Errorf("%s: accepted", name)
		}
	}
}

func TestDecodeOutcome(t *testing.T) {
	o := Outcome{JobID: goodID, Sweep: "s", Status: StatusFailed, Error: "diverged", Attempts: 2}
	data, _ := EncodeOutcome(o)
	if got, err := DecodeOutcome(data); err != nil || got.Error != "diverged" {
		t.Fatalf("round trip: %+v %v", got, err)
	}
	for name, bad := range map[string]Outcome{
		"status":           {JobID: goodID, Sweep: "s", Status: "ok"},
		"failed no reason": {JobID: goodID, Sweep: "s", Status: StatusFailed},
		"no sweep":         {JobID: goodID, Status: StatusDone},
		"negative":         {JobID: goodID, Sweep: "s", Status: StatusDone, Attempts: -1},
	} {
		data, _ := EncodeOutcome(bad)
		if _, err := DecodeOutcome(data); err == nil {
			t.Errorf("%s: accepted", name)
		}
	}
}

// A snapshot keeps float32 values exactly (IEEE 754 binary32 round trip).
func TestFieldRoundTrip(t *testing.T) {
	h := FieldHeader{JobID: goodID, Vars: []string{"rho", "E"}, NX: 3, NY: 2, DX: 0.5, DY: 0.5, T: 1}
	data := [][]float32{{1, 2, 3, 4, 5, 6}, {-1, 0.1, math.MaxFloat32, math.SmallestNonzeroFloat32, 0, 7}}
	b, err := EncodeField(h, data)
	if err != nil {
		t.Fatal(err)
	}
	if len(b) < 4*12 {
		t.Fatalf("encoded %d bytes", len(b))
	}
	h2, d2, err := DecodeField(b)
	if err != nil || h2.NX != 3 || h2.NY != 2 || len(d2) != 2 {
		t.Fatalf("decode: %+v %v", h2, err)
	}
	for k := range data {
		for i := range data[k] {
			if d2[k][i] != data[k][i] {
				t.Errorf("value %d,%d: %v != %v", k, i, d2[k][i], data[k][i])
			}
		}
	}
	if _, _, err := DecodeField(b[:len(b)-1]); err == nil {
		t.Error("truncated field accepted")
	}
	if _, err := EncodeField(h, data[:1]); err == nil {
		t.Error("missing variable accepted")
	}
}
