package table

import (
	"encoding/json"
	"math"
	"strconv"
)

// Num is a number that a table may not have: NaN or ±Inf stand for none,
// written as JSON null, as "–" in text and as an empty CSV field. It is the
// one place where the results turn non-finite numbers into "none".
type Num float64

// Ptr is *p as a Num, none for nil (the optional numbers of verify).
func Ptr(p *float64) Num {
	if p == nil {
		return Num(math.NaN())
	}
	return Num(*p)
}

// OK reports whether x is a number (finite).
func (x Num) OK() bool { return !math.IsNaN(float64(x)) && !math.IsInf(float64(x), 0) }

// MarshalJSON writes x as a JSON number, or null when it is none.
func (x Num) MarshalJSON() ([]byte, error) {
	if !x.OK() {
		return []byte("null"), nil
	}
	return json.Marshal(float64(x))
}

// Format is strconv.FormatFloat of x, "–" when none.
func (x Num) Format(f byte, prec int) string {
	if !x.OK() {
		return "–"
	}
	return strconv.FormatFloat(float64(x), f, prec, 64)
}

// Percent formats x, a fraction, in percent to 3 significant digits with a
// " %" after it ("2.17 %"), "–" when none; a fraction that overflows
// float64 once multiplied by 100 shows as "+Inf %".
func (x Num) Percent() string {
	if !x.OK() {
		return "–"
	}
	return strconv.FormatFloat(float64(x)*100, 'g', 3, 64) + " %"
}

// csv is the shortest exact decimal of x, "" when none.
func (x Num) csv() string {
	if !x.OK() {
		return ""
	}
	return strconv.FormatFloat(float64(x), 'g', -1, 64)
}

var none = Num(math.NaN())
