// Package wire is the protocol between coordinator, workers and client
// commands: the names of the NATS subjects, streams, consumers and buckets, and the
// messages sent on them, each with a strict decoder. This file is pure: it
// imports nothing of NATS, so every side shares one definition.
//
// Subjects, with P the prefix (default "fvsweep") and S the sweep token:
//
//	P.job.S.ID      a Job of the built-in solver fv2d, on the work-queue
//	                stream P_JOBS (one message per subject)
//	P.job.S.R.ID    a Job of an outside program, R its route (Route): the
//	                program's name and a hash of its version
//	P.result.S.ID   an Outcome, on the work-queue stream P_RESULTS
//	P.worker.ID     a WorkerReport, core NATS, every few seconds
//	P.api.VERB      request/reply to the coordinator (ping, status, rows, submit, cancel, forget)
//
// A job message carries a ticket in its TicketHeader, a secret the
// coordinator drew for that publish; the worker echoes it in the header of
// the result message, and the coordinator stores only results whose ticket
// is one it recorded for the job.
//
// The cancel marks live in the key-value bucket P_canceled (key S), field
// snapshots in the object store P_fields (object ID).
package wire

import (
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"fvsweep/sweep/job"
	"strings"
	"time"
)

// DefaultPrefix is the first token of every fvsweep subject and the stem of
// every stream and bucket name.
const DefaultPrefix = "fvsweep"

// MaxMessage is the largest message the decoders accept (NATS's default
// max_payload is 1 MiB).
const MaxMessage = job.MaxMessage

// Names derives every subject, stream, consumer and bucket name from one
// prefix, so two deployments can share a NATS server.
type Names struct {
	Prefix string
}

// NewNames returns the names for prefix; "" means DefaultPrefix. The prefix
// must be one subject token of letters, digits, '-' or '_'.
func NewNames(prefix string) (Names, error) {
	if prefix == "" {
		prefix = DefaultPrefix
	}
	if !isToken(prefix) {
		return Names{}, fmt.Errorf("prefix %q: want letters, digits, '-' or '_'", prefix)
	}
	return Names{Prefix: prefix}, nil
}

func (n Names) p() string {
	if n.Prefix == "" {
		return DefaultPrefix
	}
	return n.Prefix
}

func (n Names) upper() string { return strings.ToUpper(strings.ReplaceAll(n.p(), "-", "_")) }

// JobStream is the work-queue stream of jobs.
func (n Names) JobStream() string { return n.upper() + "_JOBS" }

// ResultStream is the work-queue stream of outcomes.
func (n Names) ResultStream() string { return n.upper() + "_RESULTS" }

// WorkerConsumer is the durable pull consumer of fv2d's jobs, which all
// workers share.
func (n Names) WorkerConsumer() string { return "workers" }

// RouteConsumer is the durable pull consumer of the jobs of route (Route):
// WorkerConsumer for fv2d (""), else "solver-" and the route. The workers
// that offer the program at that version share it.
func (n Names) RouteConsumer(route string) string {
	if route == "" {
		return n.WorkerConsumer()
	}
	return "solver-" + route
}

// RouteFilter matches the jobs of route of every sweep: P.job.*.* for fv2d
// (""), P.job.*.R.* for a program. The filters of two routes never
// overlap, as the consumers of one work-queue stream must not.
func (n Names) RouteFilter(route string) string {
	if route == "" {
		return n.p() + ".job.*.*"
	}
	return n.p() + ".job.*." + route + ".*"
}

// Route is the subject token of the jobs of solver at version, and so of
// their consumer: "" for the built-in fv2d (solver "" or job.BuiltinSolver),
// whose job subjects keep their form from before programs; for a program
// its name, '-' and 12 hex digits of the SHA-256 of "NAME@VERSION" (a
// version may hold '.' and '+', which a subject token may not).
func Route(solver, version string) string {
	if solver == "" || solver == job.BuiltinSolver {
		return ""
	}
	sum := sha256.Sum256([]byte(solver + "@" + version))
	return solver + "-" + hex.EncodeToString(sum[:6])
}

// JobRoute is the route of the jobs of j's solver.
func JobRoute(j job.Job) string { return Route(j.Solver, j.Version) }

// CoordinatorConsumer is the durable pull consumer of the results stream.
func (n Names) CoordinatorConsumer() string { return "coordinator" }

// CancelBucket is the key-value bucket of canceled sweeps (key: sweep token).
func (n Names) CancelBucket() string { return n.p() + "_canceled" }

// FieldBucket is the object store of field snapshots (object: job ID).
func (n Names) FieldBucket() string { return n.p() + "_fields" }

// SnapshotRef is how a done outcome names its job's field snapshot in the
// field store: "BUCKET/OBJECT", the object being the job ID.
func (n Names) SnapshotRef(jobID string) string { return n.FieldBucket() + "/" + jobID }

// CancelStream is the stream behind CancelBucket (nats.go names a key-value
// bucket's stream "KV_" and the bucket).
func (n Names) CancelStream() string { return "KV_" + n.CancelBucket() }

// FieldStream is the stream behind FieldBucket (nats.go names an object
// store's stream "OBJ_" and the store).
func (n Names) FieldStream() string { return "OBJ_" + n.FieldBucket() }

// AllFilter matches every subject of the prefix.
func (n Names) AllFilter() string { return n.p() + ".>" }

// JobSubject is the subject of fv2d's job id of sweep.
func (n Names) JobSubject(sweep, id string) string {
	return n.p() + ".job." + SweepToken(sweep) + "." + id
}

// RouteSubject is the subject of job id of sweep on route ("" for fv2d:
// JobSubject).
func (n Names) RouteSubject(sweep, route, id string) string {
	if route == "" {
		return n.JobSubject(sweep, id)
	}
	return n.p() + ".job." + SweepToken(sweep) + "." + route + "." + id
}

// SubjectOf is the subject of job j: on its solver's route.
func (n Names) SubjectOf(j job.Job) string { return n.RouteSubject(j.Sweep, JobRoute(j), j.ID) }

// JobFilter matches every job of sweep, of every solver ("" for every
// sweep).
func (n Names) JobFilter(sweep string) string {
	if sweep == "" {
		return n.p() + ".job.>"
	}
	return n.p() + ".job." + SweepToken(sweep) + ".>"
}

// ResultSubject is the subject of the outcome of job id of sweep.
func (n Names) ResultSubject(sweep, id string) string {
	return n.p() + ".result." + SweepToken(sweep) + "." + id
}

// ResultFilter matches every outcome.
func (n Names) ResultFilter() string { return n.p() + ".result.>" }

// WorkerSubject is where worker id reports itself.
func (n Names) WorkerSubject(id string) string { return n.p() + ".worker." + id }

// WorkerFilter matches every worker report.
func (n Names) WorkerFilter() string { return n.p() + ".worker.*" }

// API verbs of the coordinator.
const (
	VerbPing   = "ping" // empty request; the reply is the store path
	VerbStatus = "status"
	VerbRows   = "rows"
	VerbSubmit = "submit"
	VerbCancel = "cancel"
	VerbForget = "forget" // discard stored outcomes so that they run again
)

// TicketHeader is the NATS header of a job message that holds its ticket
// (32 hex digits), and of a result message that echoes it.
const TicketHeader = "Fvsweep-Ticket"

// API is the request subject of verb.
func (n Names) API(verb string) string { return n.p() + ".api." + verb }

// Role is whom a NATS connection acts for. Each role has a secret of its
// own and only the rights it needs (coordinator/server/access.go).
type Role string

const (
	// RoleOperator runs the coordinator: it owns the streams, consumers and
	// buckets and may do what every other role may.
	RoleOperator Role = "operator"
	// RoleSubmitter submits, cancels and forgets sweeps and reads them.
	RoleSubmitter Role = "submitter"
	// RoleReader reads: status, rows (table, export, report) and snapshots.
	RoleReader Role = "reader"
	// RoleWorker pulls jobs and sends their outcomes, snapshots and reports.
	RoleWorker Role = "worker"
)

// Roles lists every role, the most trusted first.
var Roles = []Role{RoleOperator, RoleSubmitter, RoleReader, RoleWorker}

// Inbox is the inbox prefix of the connections of role r: replies to
// their requests arrive on Inbox(r)+".>", which only r (and the operator)
// may subscribe to.
func (n Names) Inbox(r Role) string { return "_INBOX_" + n.p() + "_" + string(r) }

// IsInbox reports whether subject is an inbox (of a role, or nats.go's
// default "_INBOX."): the only subjects the coordinator answers requests on,
// so that a request cannot make it publish elsewhere.
func IsInbox(subject string) bool {
	return strings.HasPrefix(subject, "_INBOX.") || strings.HasPrefix(subject, "_INBOX_")
}

// SweepToken maps a sweep name to one subject token and key-value key: the
// name itself when it is made of letters, digits, '-' and '_' (at most 64),
// otherwise "h" and 16 hex digits of its SHA-256.
func SweepToken(name string) string {
	if len(name) <= 64 && isToken(name) {
		return name
	}
	sum := sha256.Sum256([]byte(name))
	return "h" + hex.EncodeToString(sum[:8])
}

func isToken(s string) bool {
	if s == "" {
		return false
	}
	for i := 0; i < len(s); i++ {
		c := s[i]
		if !(c >= 'a' && c <= 'z' || c >= 'A' && c <= 'Z' || c >= '0' && c <= '9' || c == '-' || c == '_') {
			return false
		}
	}
	return true
}

// RunningJob is a job a worker is running.
type RunningJob struct {
	JobID string    `json:"job_id"`
	Sweep string    `json:"sweep"`
	Since time.Time `json:"since"`
	// Progress is the fraction of the job done, 0 to 1 (t/t_end for
	// fv2d); absent when the runner tells none (outside programs).
	Progress *float64 `json:"progress,omitempty"`
}

// WorkerReport is what a worker publishes about itself every Every.
type WorkerReport struct {
	ID          string        `json:"id"`
	Host        string        `json:"host"`
	Cores       int           `json:"cores"`
	Concurrency int           `json:"concurrency"`
	Started     time.Time     `json:"started"`
	Sent        time.Time     `json:"sent"`
	Every       time.Duration `json:"every"` // the report interval
	Done        int           `json:"done"`
	Failed      int           `json:"failed"`
	Busy        float64       `json:"busy"` // fraction of slot time spent running jobs
	Current     []RunningJob  `json:"current"`
	Leaving     bool          `json:"leaving,omitempty"` // draining: the last report
	// Solvers are the outside programs the worker offers, "NAME@VERSION"
	// each (every worker offers fv2d); absent when none.
	Solvers []string `json:"solvers,omitempty"`
	// CurrentMore counts the running jobs a status reply leaves out of
	// Current (it lists at most StatusCurrentMax per worker); 0 in reports.
	CurrentMore int `json:"current_more,omitempty"`
}

// StatusCurrentMax is the number of a worker's running jobs a status reply
// lists; the rest are counted in CurrentMore, so that the reply of a
// thousand busy workers stays a few megabytes.
const StatusCurrentMax = 16

// ReportBounds bound what a coordinator takes from worker reports.
type ReportBounds struct {
	// MaxBytes bounds a report message, MaxCurrent its running jobs,
	// MaxText its ID and host name (bytes).
	MaxBytes   int
	MaxCurrent int
	MaxText    int
	// MinEvery and MaxEvery bound the report interval a worker states;
	// a report that comes sooner than MinEvery after the last one taken
	// from the same worker is dropped.
	MinEvery time.Duration
	MaxEvery time.Duration
	// MaxWorkers bounds the workers known at once; a new worker's reports
	// are dropped while that many others are live.
	MaxWorkers int
	// MaxCores bounds the cores and the concurrency a worker states.
	MaxCores int
}

// DefaultReportBounds are the report bounds a coordinator applies unless
// told otherwise. fvsweep's workers report every 2 s (tests: 100 ms).
func DefaultReportBounds() ReportBounds {
	return ReportBounds{
		MaxBytes: 32 << 10, MaxCurrent: 256, MaxText: 128,
		MinEvery: 50 * time.Millisecond, MaxEvery: time.Minute,
		MaxWorkers: 2048, MaxCores: 4096,
	}
}

// DecodeWorkerReport parses a worker report and checks it against b.
func DecodeWorkerReport(data []byte, b ReportBounds) (WorkerReport, error) {
	if len(data) > b.MaxBytes {
		return WorkerReport{}, fmt.Errorf("worker report of %d bytes exceeds %d", len(data), b.MaxBytes)
	}
	var r WorkerReport
	if err := job.DecodeStrict("worker report", data, &r); err != nil {
		return WorkerReport{}, err
	}
	if !isToken(r.ID) || len(r.ID) > b.MaxText {
		return WorkerReport{}, fmt.Errorf("worker report: id %.40q is not a subject token of at most %d bytes", r.ID, b.MaxText)
	}
	bad := func(format string, args ...any) (WorkerReport, error) {
		return WorkerReport{}, fmt.Errorf("worker report %s: %s", r.ID, fmt.Sprintf(format, args...))
	}
	switch {
	case r.Every < b.MinEvery || r.Every > b.MaxEvery:
		return bad("interval %v outside %v..%v", r.Every, b.MinEvery, b.MaxEvery)
	case len(r.Host) > b.MaxText:
		return bad("host name of %d bytes", len(r.Host))
	case r.Cores < 0 || r.Cores > b.MaxCores || r.Concurrency < 0 || r.Concurrency > b.MaxCores:
		return bad("cores %d, concurrency %d outside 0..%d", r.Cores, r.Concurrency, b.MaxCores)
	case r.CurrentMore != 0:
		return bad("current_more %d: a report lists all its running jobs", r.CurrentMore)
	case r.Done < 0 || r.Failed < 0:
		return bad("negative counts")
	case !(r.Busy >= 0 && r.Busy <= 1.5): // a slot's run time may overlap its report period a little
		return bad("busy fraction %g", r.Busy)
	case len(r.Current) > b.MaxCurrent || len(r.Current) > max(r.Concurrency, 1):
		return bad("%d current jobs for %d slots (at most %d)", len(r.Current), r.Concurrency, b.MaxCurrent)
	}
	for _, j := range r.Current {
		if !job.ValidID(j.JobID) || len(j.Sweep) > b.MaxText*2 {
			return bad("current job %.40q of sweep %.40q", j.JobID, j.Sweep)
		}
		if p := j.Progress; p != nil && !(*p >= 0 && *p <= 1) {
			return bad("current job %s: progress %g outside 0..1", j.JobID, *p)
		}
	}
	return r, nil
}

// SubmitRequest asks the coordinator to expand and run a spec it is sent in
// full (the coordinator may not see the submitter's files).
type SubmitRequest struct {
	File        string `json:"file"`   // for messages only
	Source      string `json:"source"` // the TOML text
	RetryFailed bool   `json:"retry_failed,omitempty"`
	// Solvers are the manifests of the outside programs the spec may
	// name, sent in full like the spec.
	Solvers []ManifestText `json:"solvers,omitempty"`
}

// ManifestText is a solver manifest as its file holds it.
type ManifestText struct {
	File   string `json:"file"`   // for messages only
	Source string `json:"source"` // the TOML text
}

// SubmitReply says what a submission did.
type SubmitReply struct {
	Sweep   string `json:"sweep"`
	Jobs    int    `json:"jobs"`    // expanded
	Stored  int    `json:"stored"`  // already had an outcome
	Retried int    `json:"retried"` // failed outcomes deleted to run again
	Queued  int    `json:"queued"`  // published now (or already queued)
	Error   string `json:"error,omitempty"`
}

// SweepRequest names a sweep ("" for all, where a verb allows it).
type SweepRequest struct {
	Sweep string `json:"sweep"`
}

// SweepStatus counts a sweep's jobs. Queued = JobsTotal - Done - Failed - Running.
type SweepStatus struct {
	Sweep     string `json:"sweep"`
	SpecFile  string `json:"spec_file"`
	JobsTotal int    `json:"jobs_total"`
	Done      int    `json:"done"`
	Failed    int    `json:"failed"`
	Running   int    `json:"running"`
	Queued    int    `json:"queued"`
	// Waiting are the queued jobs no live worker can take, by the solver
	// they wait for ("NAME@VERSION"); absent when none.
	Waiting  map[string]int `json:"waiting,omitempty"`
	Canceled bool           `json:"canceled"`
	Created  time.Time      `json:"created"`
	Updated  time.Time      `json:"updated"`
}

// StatusReply is the coordinator's answer to status. Over NATS it comes
// as a series of messages to the request's reply subject, numbered by Seq,
// the last one marked Last, each with a part of Sweeps and Workers (each
// message stays under the maximum payload); a client joins them.
// RefusedResults counts the result messages the coordinator refused since
// it started (forged, malformed or out of bounds); it is in the first part.
type StatusReply struct {
	Sweeps         []SweepStatus  `json:"sweeps"`
	Workers        []WorkerReport `json:"workers"`
	RefusedResults int64          `json:"refused_results,omitempty"`
	Seq            int            `json:"seq,omitempty"`
	Last           bool           `json:"last,omitempty"`
	Error          string         `json:"error,omitempty"`
}

// RowsRequest asks for every job of a sweep with its state. The answer
// comes as a series of RowsReply messages to the request's reply subject,
// numbered by Seq, the last one marked Last.
type RowsRequest struct {
	Sweep string `json:"sweep"`
}

// Row is one job with its state: Status is done, failed, running or queued;
// Outcome is nil unless done or failed.
type Row struct {
	Job     job.Job      `json:"job"`
	Status  job.Status   `json:"status"`
	Worker  string       `json:"worker,omitempty"`
	Outcome *job.Outcome `json:"outcome,omitempty"`
}

// RowsReply is one chunk of rows; Total is the sweep's job count. The
// first chunk also carries the sweep's spec as last submitted.
type RowsReply struct {
	Rows     []Row  `json:"rows"`
	Total    int    `json:"total"`
	SpecFile string `json:"spec_file,omitempty"`
	Spec     string `json:"spec,omitempty"`
	// Studies are the study settings the store keeps (first chunk only),
	// so that a reader need not parse the spec (which may name programs
	// whose manifests it does not have).
	Studies []job.StudySettings `json:"studies,omitempty"`
	Seq     int                 `json:"seq"`
	Last    bool                `json:"last"`
	Error   string              `json:"error,omitempty"`
}

// Part says where a part stands in a reply sent in parts: its number,
// whether it is the last, and the reply's error text.
func (r StatusReply) Part() (seq int, last bool, errText string) { return r.Seq, r.Last, r.Error }

// Part says where a part stands in a reply sent in parts (see StatusReply.Part).
func (r RowsReply) Part() (seq int, last bool, errText string) { return r.Seq, r.Last, r.Error }

// CancelReply says what a cancel did.
type CancelReply struct {
	Purged uint64 `json:"purged"` // queued jobs removed
	Error  string `json:"error,omitempty"`
}

// ForgetRequest asks the coordinator to discard stored outcomes of a
// sweep so that the next submission runs those jobs again: one job (Job),
// the jobs of one study (Study, the 1-based index of job.Job.Study, when
// HasStudy), the failed ones (Failed),
// or, with none of these, every outcome of the sweep. By names who asks
// (the client's user and host); the coordinator adds what the connection
// tells it.
type ForgetRequest struct {
	Sweep    string `json:"sweep"`
	Job      string `json:"job,omitempty"`
	Study    int    `json:"study,omitempty"`
	HasStudy bool   `json:"has_study,omitempty"`
	Failed   bool   `json:"failed,omitempty"`
	By       string `json:"by,omitempty"`
}

// ForgetReply says how many stored outcomes a forget discarded.
type ForgetReply struct {
	Forgotten int    `json:"forgotten"`
	Error     string `json:"error,omitempty"`
}

// Decode parses a request or reply of the API into v, strictly.
func Decode(what string, data []byte, v any) error { return job.DecodeStrict(what, data, v) }
