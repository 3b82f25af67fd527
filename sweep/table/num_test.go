package table

import (
	"math"
	"testing"
)

// Every writer formats an optional number through Num: none (nil, NaN,
// ±Inf) is "–", a number is strconv.FormatFloat's text (common practice),
// and Percent is the fraction times 100 to 3 significant digits.
func TestNumFormat(t *testing.T) {
	half, huge := 0.0217, 2e306
	for _, c := range []struct {
		x             Num
		e3, g7, pct   string
		csv, jsonText string
	}{
		{Ptr(nil), "–", "–", "–", "", "null"},
		{Num(math.NaN()), "–", "–", "–", "", "null"},
		{Num(math.Inf(1)), "–", "–", "–", "", "null"},
		{Num(math.Inf(-1)), "–", "–", "–", "", "null"},
		{Ptr(&half), "2.170e-02", "0.0217", "2.17 %", "0.0217", "0.0217"},
		{Num(-6.0631234567), "-6.063e+00", "-6.063123", "-606 %", "-6.0631234567", "-6.0631234567"},
		{Num(0), "0.000e+00", "0", "0 %", "0", "0"},
		// A finite fraction whose percentage overflows float64.
		{Ptr(&huge), "2.000e+306", "2e+306", "+Inf %", "2e+306", "2e+306"},
	} {
		j, err := c.x.MarshalJSON()
		got := [...]string{c.x.Format('e', 3), c.x.Format('g', 7), c.x.Percent(), c.x.csv(), string(j)}
		if want := [...]string{c.e3, c.g7, c.pct, c.csv, c.jsonText}; got != want || err != nil {
			t.Errorf("%v: got %q, %v; want %q", float64(c.x), got, err, want)
		}
	}
	if FormatPhi(6.063) != "6.063" || FormatPhi(math.NaN()) != "–" {
		t.Errorf("FormatPhi: %q %q", FormatPhi(6.063), FormatPhi(math.NaN()))
	}
}
