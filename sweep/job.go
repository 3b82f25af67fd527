package sweep

import (
	"crypto/sha256"
	"encoding/hex"

	"fvsweep/fv2d"
)

// Job is one run of one case with fully resolved parameters.
type Job struct {
	ID       string            `json:"job_id"` // JobID(case, params)
	Sweep    string            `json:"sweep"`  // sweep name
	Study    int               `json:"study"`  // index of the [[study]] in the spec
	Case     string            `json:"case"`
	Params   map[string]string `json:"params"`   // every parameter, canonical values
	Refine   string            `json:"refine"`   // name of the refinement axis ("nx"), "" if none
	Group    string            `json:"group"`    // identity of all params except the refinement axis
	Cost     float64           `json:"cost"`     // estimated cells x steps
	Snapshot bool              `json:"snapshot"` // store the final field
}

// JobID is the deterministic identity of a run: the first 16 bytes of the
// SHA-256 of the canonical "case k=v ..." string of its resolved
// parameters, as 32 hex digits (what ValidJobID accepts).
func JobID(v fv2d.Values) string {
	sum := sha256.Sum256([]byte(v.String()))
	return hex.EncodeToString(sum[:16])
}

// Outcome is what a worker reports for a job.
type Outcome struct {
	JobID           string                `json:"job_id"`
	Sweep           string                `json:"sweep"`
	Status          string                `json:"status"` // "done" | "failed"
	Worker          string                `json:"worker"`
	Attempts        int                   `json:"attempts"`
	WallS           float64               `json:"wall_s"`
	Steps           int                   `json:"steps"`
	TFinal          float64               `json:"t_final"`
	CellUpdatesPerS float64               `json:"cell_updates_per_s"`
	Errors          map[string]fv2d.Norms `json:"errors,omitempty"`
	Functionals     map[string]float64    `json:"functionals,omitempty"`
	Totals          map[string]fv2d.Total `json:"totals,omitempty"`
	Error           string                `json:"error,omitempty"`    // failure reason
	Snapshot        string                `json:"snapshot,omitempty"` // object-store name of the field
}
