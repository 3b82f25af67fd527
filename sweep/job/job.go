// Package job defines the records that travel through a sweep: a Job (one
// run of one case with resolved parameters), its Outcome, their Status and
// identity, and the one codec of each. It imports only the standard library,
// so every other package can share these types.
package job

import (
	"crypto/sha256"
	"encoding/hex"
)

// BuiltinSolver is the solver of a job whose Solver is empty: fvsweep's own
// fv2d. Leaving it out of the record keeps the JSON and the IDs of fv2d jobs
// as they were before jobs named their solver.
const BuiltinSolver = "fv2d"

// Job is one run of one case with fully resolved parameters.
type Job struct {
	ID       string            `json:"job_id"` // NewID of the canonical parameter string
	Sweep    string            `json:"sweep"`  // sweep name
	Study    int               `json:"study"`  // index of the [[study]] in the spec
	Case     string            `json:"case"`
	Solver   string            `json:"solver,omitempty"`  // the solver that runs it; "" is BuiltinSolver
	Version  string            `json:"version,omitempty"` // the version of an outside solver; "" for fv2d
	Params   map[string]string `json:"params"`            // every parameter, canonical values
	Refine   string            `json:"refine"`            // name of the refinement axis ("nx"), "" if none
	Group    string            `json:"group"`             // identity of all params except the refinement axis
	Cost     float64           `json:"cost"`              // estimated cells x steps
	Snapshot bool              `json:"snapshot"`          // store the final field
}

// SolverName is the name of the solver that runs j: j.Solver, or
// BuiltinSolver when that is empty.
func (j Job) SolverName() string {
	if j.Solver == "" {
		return BuiltinSolver
	}
	return j.Solver
}

// SolverLabel is the solver of j as people read it: "fv2d", or an outside
// program's "NAME@VERSION".
func (j Job) SolverLabel() string {
	if j.Version == "" {
		return j.SolverName()
	}
	return j.Solver + "@" + j.Version
}

// NewID is the deterministic identity of a run: the first 16 bytes of the
// SHA-256 of its canonical "case k=v ..." parameter string, as 32 lower-case
// hex digits (what ValidID accepts).
func NewID(canonical string) string {
	sum := sha256.Sum256([]byte(canonical))
	return hex.EncodeToString(sum[:16])
}

// ValidID reports whether id looks like a NewID: 32 lower-case hex digits.
func ValidID(id string) bool {
	if len(id) != 32 {
		return false
	}
	for i := 0; i < len(id); i++ {
		c := id[i]
		if !(c >= '0' && c <= '9' || c >= 'a' && c <= 'f') {
			return false
		}
	}
	return true
}

// Status is the state of a job: queued or running until its outcome is
// stored, then done or failed.
type Status string

// The states of a job. An Outcome is always done or failed.
const (
	StatusQueued  Status = "queued"
	StatusRunning Status = "running"
	StatusDone    Status = "done"
	StatusFailed  Status = "failed"
)

// Valid reports whether s is an outcome's status: done or failed.
func (s Status) Valid() bool { return s == StatusDone || s == StatusFailed }

// Norms are the L1, L2 and L-infinity norms of the error of one variable
// against the exact cell averages, each divided by the domain area.
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

// Outcome is what a worker reports for a job.
type Outcome struct {
	JobID           string             `json:"job_id"`
	Sweep           string             `json:"sweep"`
	Status          Status             `json:"status"`
	Worker          string             `json:"worker"`
	Attempts        int                `json:"attempts"`
	WallS           float64            `json:"wall_s"`
	CPUS            float64            `json:"cpu_s,omitempty"` // CPU time of the solving threads (0: not measured)
	Steps           int                `json:"steps"`
	TFinal          float64            `json:"t_final"`
	CellUpdatesPerS float64            `json:"cell_updates_per_s"`
	Errors          map[string]Norms   `json:"errors,omitempty"`
	Functionals     map[string]float64 `json:"functionals,omitempty"`
	Totals          map[string]Total   `json:"totals,omitempty"`
	Error           string             `json:"error,omitempty"`    // failure reason
	Snapshot        string             `json:"snapshot,omitempty"` // object-store name of the field
	// SnapshotDigest is the object store's digest ("SHA-256=" and the
	// base64url SHA-256) of the snapshot when the coordinator stored the
	// outcome; readers check it, so a snapshot overwritten later is found.
	SnapshotDigest string `json:"snapshot_digest,omitempty"`
	Kernel         string `json:"kernel,omitempty"` // which solver code path ran it (fv2d: "portable", "avx2" or "avx512")
}
