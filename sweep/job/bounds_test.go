package job

import (
	"math"
	"strconv"
	"strings"
	"testing"
)

// The outcome bounds refuse each finding of issue 11 (negative norms,
// wall_s = -5, steps = 2^62, a done outcome with an error text, 74,844
// functionals) and take a real outcome.
func TestOutcomeBounds(t *testing.T) {
	b := DefaultBounds()
	good := Outcome{JobID: strings.Repeat("a", 32), Sweep: "s", Status: StatusDone, Worker: "w", Attempts: 1,
		WallS: 0.5, Steps: 40, TFinal: 0.1, CellUpdatesPerS: 1e7,
		Errors: map[string]Norms{"u": {L1: 1e-3, L2: 2e-3, Linf: 5e-3}}, Functionals: map[string]float64{"mass": -1}}
	if err := good.CheckBounds(b); err != nil {
		t.Fatalf("real outcome refused: %v", err)
	}
	huge := map[string]float64{}
	for i := 0; i <= b.MaxFunctionals; i++ {
		huge["f"+strconv.Itoa(i)] = 1
	}
	for name, bad := range map[string]func(*Outcome){
		"negative l1":        func(o *Outcome) { o.Errors = map[string]Norms{"u": {L1: -1e-12}} },
		"negative wall":      func(o *Outcome) { o.WallS = -5 },
		"steps 2^62":         func(o *Outcome) { o.Steps = 1 << 62 },
		"done with error":    func(o *Outcome) { o.Error = "oops" },
		"failed no reason":   func(o *Outcome) { o.Status = StatusFailed },
		"many functionals":   func(o *Outcome) { o.Functionals = huge },
		"attempt 0":          func(o *Outcome) { o.Attempts = 0 },
		"attempts 2^40":      func(o *Outcome) { o.Attempts = 1 << 40 },
		"long error":         func(o *Outcome) { o.Status, o.Error = StatusFailed, strings.Repeat("x", b.MaxText+1) },
		"long key":           func(o *Outcome) { o.Functionals = map[string]float64{strings.Repeat("k", b.MaxKey+1): 1} },
		"empty key":          func(o *Outcome) { o.Functionals = map[string]float64{"": 1} },
		"long worker":        func(o *Outcome) { o.Worker = strings.Repeat("w", b.MaxName+1) },
		"rate":               func(o *Outcome) { o.CellUpdatesPerS = math.MaxFloat64 },
		"negative rate":      func(o *Outcome) { o.CellUpdatesPerS = -1 },
		"negative t_final":   func(o *Outcome) { o.TFinal = -1 },
		"wall over a month":  func(o *Outcome) { o.WallS = 31 * 24 * 3600 },
		"negative linf only": func(o *Outcome) { o.Errors = map[string]Norms{"u": {L1: 1, L2: 1, Linf: -1}} },
	} {
		o := good
		bad(&o)
		if err := o.CheckBounds(b); err == nil {
			t.Errorf("%s: accepted %+v", name, o)
		}
	}
	if err := DefaultBounds().Valid(); err != nil {
		t.Error(err)
	}
	if err := (Bounds{}).Valid(); err == nil {
		t.Error("zero bounds accepted")
	}
}
