package store

import (
	"bytes"
	"encoding/json"
	"testing"
)

// FuzzDecodeSweep feeds arbitrary bytes to the sweep record decoder. It must
// return an error or a record, never panic; a record it accepts survives an
// encode/decode round trip unchanged. (Job and outcome records have their
// codec, and its fuzz test, in package job.)
func FuzzDecodeSweep(f *testing.F) {
	for _, r := range []SweepRecord{{Name: "fz", Spec: "name = \"fz\"\n", Jobs: 3}, {Name: "c", Canceled: true}} {
		data, err := json.Marshal(r)
		if err != nil {
			f.Fatal(err)
		}
		f.Add(data)
		f.Add(data[:len(data)/2])
	}
	for _, s := range []string{"", "null", "{}", "[]", `"x"`, `{"name":""}`, `{"name":"s","jobs":-2}`, `{"name":"s","created":"yesterday"}`} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, data []byte) {
		r, err := DecodeSweep(data)
		if err != nil {
			return
		}
		first, err := json.Marshal(r)
		if err != nil {
			t.Fatalf("decoded record %#v does not encode: %v", r, err)
		}
		again, err := DecodeSweep(first)
		if err != nil {
			t.Fatalf("encoded record %s does not decode: %v", first, err)
		}
		if second, _ := json.Marshal(again); !bytes.Equal(first, second) {
			t.Fatalf("round trip changed the record:\n%s\n%s", first, second)
		}
	})
}
