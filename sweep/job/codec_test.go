package job

import (
	"strings"
	"testing"
)

const goodID = "0123456789abcdef0123456789abcdef"

func TestDecodeMessage(t *testing.T) {
	good := `{"job_id":"` + goodID + `","sweep":"s","study":1,"case":"vortex","params":{"nx":"8"},"refine":"nx","group":"g","cost":10,"snapshot":false}`
	if j, err := DecodeMessage([]byte(good)); err != nil || j.Params["nx"] != "8" {
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
		if _, err := DecodeMessage([]byte(bad)); err == nil {
			t.Errorf("%s: accepted", name)
		}
	}
}

func TestDecodeOutcomeMessage(t *testing.T) {
	o := Outcome{JobID: goodID, Sweep: "s", Status: StatusFailed, Error: "diverged", Attempts: 2}
	data, _ := EncodeOutcome(o)
	if got, err := DecodeOutcomeMessage(data); err != nil || got.Error != "diverged" {
		t.Fatalf("round trip: %+v %v", got, err)
	}
	for name, bad := range map[string]Outcome{
		"status":           {JobID: goodID, Sweep: "s", Status: "ok"},
		"failed no reason": {JobID: goodID, Sweep: "s", Status: StatusFailed},
		"no sweep":         {JobID: goodID, Status: StatusDone},
		"negative":         {JobID: goodID, Sweep: "s", Status: StatusDone, Attempts: -1},
	} {
		data, _ := EncodeOutcome(bad)
		if _, err := DecodeOutcomeMessage(data); err == nil {
			t.Errorf("%s: accepted", name)
		}
	}
}
