package table

import (
	"bytes"
	"encoding/json"
	"testing"
)

// In table JSON the values of numeric parameters are JSON numbers and of
// boolean ones JSON booleans (RFC 8259 §6, §3), as fv2d declares their
// kinds; choices stay strings.
func TestJSONParamsTyped(t *testing.T) {
	sp, jobs := parseExpand(t, "p.toml", `name = "p"
[[study]]
case = "burgers-sine"
fixed = { cfl = 0.45, alternate = true, limiter = "mc", max_steps = 5000 }
refine = { nx = [16, 32] }
`)
	studies, _, err := Build(sp.Settings(), jobs, nil, Options{})
	if err != nil {
		t.Fatal(err)
	}
	var b bytes.Buffer
	if err := Write(&b, "json", Set{Sweep: "p", Studies: studies}); err != nil {
		t.Fatal(err)
	}
	var got struct {
		Studies []struct {
			Groups []struct {
				Params map[string]any `json:"params"`
			} `json:"groups"`
		} `json:"studies"`
	}
	if err := json.Unmarshal(b.Bytes(), &got); err != nil {
		t.Fatal(err)
	}
	p := got.Studies[0].Groups[0].Params
	for k, want := range map[string]any{"cfl": 0.45, "alternate": true, "limiter": "mc", "max_steps": 5000.0} {
		if p[k] != want {
			t.Errorf("params[%s] = %#v, want %#v", k, p[k], want)
		}
	}
}
