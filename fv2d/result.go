package fv2d

import "fmt"

// Norms are error norms of one variable over the domain, each normalised by
// the domain area: L1 = sum |e| dA / A, L2 = sqrt(sum e^2 dA / A), Linf = max |e|.
type Norms struct {
	L1   float64 `json:"l1"`
	L2   float64 `json:"l2"`
	Linf float64 `json:"linf"`
}

// Total is the domain integral of one conserved variable at the start and at
// the end of a run.
type Total struct {
	Initial float64 `json:"initial"`
	Final   float64 `json:"final"`
}

// Result is the outcome of one successful run.
type Result struct {
	Case   string            `json:"case"`
	Params map[string]string `json:"params"`
	NX     int               `json:"nx"`
	NY     int               `json:"ny"`
	Steps  int               `json:"steps"`
	TFinal float64           `json:"t_final"`
	WallS  float64           `json:"wall_s"`
	// CPUS is the CPU time of the solving threads while time stepping (the
	// sum of their per-thread CPU clocks, Linux only; 0 where not measured):
	// the run's own work, whatever else the machine runs at the time.
	CPUS            float64            `json:"cpu_s,omitempty"`
	CellUpdatesPerS float64            `json:"cell_updates_per_s"`
	Totals          map[string]Total   `json:"totals"`
	Errors          map[string]Norms   `json:"errors,omitempty"`
	Functionals     map[string]float64 `json:"functionals,omitempty"`
	Kernel          string             `json:"kernel"` // the kernel path that ran the sweeps: "portable", "avx2" or "avx512"
	Final           *State             `json:"-"`
}

// Failure is the error a run returns when it breaks down: negative density
// or pressure, a NaN, or the step guard exceeded. It names the time, the cell
// and the values found there.
type Failure struct {
	T      float64   // time reached
	Step   int       // step during which it happened
	I, J   int       // cell indices (0-based, interior), -1 when not a cell
	Reason string    // "negative pressure", "NaN", "step guard exceeded", ...
	Values []float64 // conserved state in the cell
	Vars   []string
}

func (f *Failure) Error() string {
	if f.I < 0 {
		return fmt.Sprintf("diverged at t=%.6g (step %d): %s", f.T, f.Step, f.Reason)
	}
	s := fmt.Sprintf("diverged at t=%.6g (step %d), cell (%d,%d): %s", f.T, f.Step, f.I, f.J, f.Reason)
	for k, v := range f.Values {
		name := fmt.Sprint(k)
		if k < len(f.Vars) {
			name = f.Vars[k]
		}
		s += fmt.Sprintf(" %s=%g", name, v)
	}
	return s
}
