package field

import (
	"math"
	"testing"
)

// A snapshot keeps float32 values exactly (IEEE 754 binary32 round trip).
func TestFieldRoundTrip(t *testing.T) {
	h := Header{JobID: "0123456789abcdef0123456789abcdef", Vars: []string{"rho", "E"}, NX: 3, NY: 2, DX: 0.5, DY: 0.5, T: 1}
	data := [][]float32{{1, 2, 3, 4, 5, 6}, {-1, 0.1, math.MaxFloat32, math.SmallestNonzeroFloat32, 0, 7}}
	b, err := Encode(h, data)
	if err != nil {
		t.Fatal(err)
	}
	if len(b) < 4*12 {
		t.Fatalf("encoded %d bytes", len(b))
	}
	h2, d2, err := Decode(b)
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
	if _, _, err := Decode(b[:len(b)-1]); err == nil {
		t.Error("truncated field accepted")
	}
	if _, err := Encode(h, data[:1]); err == nil {
		t.Error("missing variable accepted")
	}
}
