package web

import (
	"maps"
	"slices"
	"sort"
	"strconv"
	"strings"
	"sync"
	"time"

	"fvsweep/store"
	"fvsweep/sweep/job"
	"fvsweep/sweep/table"
	"fvsweep/sweep/wire"
)

// What the page shows beyond the coordinator's counts, from what the page
// server sees over time: each worker's busy fraction over the last minute
// (from its reports), the jobs running now with their case, group and grid,
// and a sweep's elapsed time, throughput and ETA (from its stored outcomes
// as they arrive and the cost estimate of its jobs, job.Job.Cost).

// window is how far back the busy fraction and the rates look.
const window = time.Minute

// RunningView is a job running now: its worker, case, group (the
// parameters that set its group apart within its study) and grid, and how
// long it has run, by the coordinator's clock.
type RunningView struct {
	JobID    string    `json:"job_id"`
	Sweep    string    `json:"sweep"`
	Worker   string    `json:"worker"`
	Case     string    `json:"case,omitempty"`
	Group    string    `json:"group,omitempty"`
	NX       int       `json:"nx,omitempty"`
	NY       int       `json:"ny,omitempty"`
	Since    time.Time `json:"since"`
	ElapsedS float64   `json:"elapsed_s"`
	// Progress is the fraction done the worker reports (t/t_end for
	// fv2d), absent for a job of an outside program.
	Progress *float64 `json:"progress,omitempty"`
}

// Progress is GET /api/sweeps/{name}/progress: a sweep's pace. Cost is
// job.Job.Cost, the estimate of the cells updated (cells x steps); the
// rates are over the last minute of outcomes this server saw arrive, and
// absent until it has seen some. ETA is the cost still to run over the
// cost rate.
type Progress struct {
	Sweep string    `json:"sweep"`
	Now   time.Time `json:"now"`
	// LastChange is the latest of: the submission or cancel, an outcome
	// stored (as this server saw it), a report of a worker running one of
	// its jobs.
	LastChange time.Time `json:"last_change"`
	// ElapsedS runs from the submission to now, or to LastChange once
	// every job has an outcome.
	ElapsedS  float64  `json:"elapsed_s"`
	JobsPerS  *float64 `json:"jobs_per_s,omitempty"`
	CostPerS  *float64 `json:"cost_per_s,omitempty"`
	CostTotal float64  `json:"cost_total"`
	CostDone  float64  `json:"cost_done"`
	ETAS      *float64 `json:"eta_s,omitempty"`
	// Canceled counts the jobs a cancel dropped: no outcome, not running.
	Canceled int           `json:"canceled"`
	Running  []RunningView `json:"running"`
	// FailureParams gives each failed job the parameters that differ among
	// its study's jobs ("limiter=mc nx=64"), for a short failure list.
	FailureParams map[string]string `json:"failure_params"`
}

// tracker remembers what the page server has seen: worker reports and the
// arrival of outcomes.
type tracker struct {
	mu      sync.Mutex
	workers map[string][]busySample
	sweeps  map[string]*sweepTrack
}

func newTracker() *tracker {
	return &tracker{workers: map[string][]busySample{}, sweeps: map[string]*sweepTrack{}}
}

// busySample is a worker's busy slot-seconds since it started, at the
// time of a report.
type busySample struct {
	at   time.Time
	busy float64
}

// doneSample is a sweep's finished jobs and their cost at a time.
type doneSample struct {
	at   time.Time
	jobs int
	cost float64
}

// sweepTrack is what the tracker knows of one sweep.
type sweepTrack struct {
	idx      *jobIndex
	finished int       // done + failed when the outcomes were last read
	changed  time.Time // when finished was last seen to change; zero: not seen
	read     time.Time // when the outcomes were last read
	costDone float64
	failed   map[string]string // failed job -> its differing parameters
	samples  []doneSample
}

// jobIndex is what the page needs of a sweep's jobs, read once per
// submission (the record's job count).
type jobIndex struct {
	n         int
	costTotal float64
	jobs      map[string]jobInfo
}

type jobInfo struct {
	kase, group, params string
	nx, ny              int
	cost                float64
}

// slotSeconds is the busy slot-time of a worker since it started, at the
// time of its report r: the finished jobs' run time (Busy is their
// fraction of all slot-time) plus the running jobs' time so far.
func slotSeconds(r wire.WorkerReport) float64 {
	b := r.Busy * float64(r.Concurrency) * r.Sent.Sub(r.Started).Seconds()
	for _, c := range r.Current {
		b += max(0, r.Sent.Sub(c.Since).Seconds())
	}
	return b
}

// busyRecent is the fraction of r's slot-time busy over the last minute
// of its reports; with a single report, its slots in use at the time.
func (t *tracker) busyRecent(r wire.WorkerReport) float64 {
	t.mu.Lock()
	defer t.mu.Unlock()
	s := t.workers[r.ID]
	if n := len(s); n == 0 || r.Sent.After(s[n-1].at) {
		s = append(s, busySample{at: r.Sent, busy: slotSeconds(r)})
	}
	// Keep the newest sample older than the window, so the span covers it.
	for len(s) > 2 && r.Sent.Sub(s[1].at) >= window {
		s = s[1:]
	}
	t.workers[r.ID] = s
	conc := float64(max(1, r.Concurrency))
	first, last := s[0], s[len(s)-1]
	if span := last.at.Sub(first.at).Seconds(); len(s) >= 2 && span > 0 {
		return min(1, max(0, (last.busy-first.busy)/(conc*span)))
	}
	return min(1, float64(len(r.Current))/conc)
}

// index returns the job index of sweep name, read from db when the sweep
// has a number of jobs other than the one indexed; nil if it cannot.
func (t *tracker) index(db *store.DB, name string, total int) *jobIndex {
	tr := t.track(name)
	if tr.idx != nil && tr.idx.n == total {
		return tr.idx
	}
	jobs, err := db.Jobs(name)
	if err != nil {
		return tr.idx
	}
	tr.idx = newJobIndex(jobs)
	return tr.idx
}

func (t *tracker) track(name string) *sweepTrack {
	tr := t.sweeps[name]
	if tr == nil {
		tr = &sweepTrack{}
		t.sweeps[name] = tr
	}
	return tr
}

// newJobIndex indexes jobs: each with its case, grid, cost, the parameters
// that differ among its study's jobs and, of those, the ones that set its
// group apart (all but the grid).
func newJobIndex(jobs []job.Job) *jobIndex {
	ix := &jobIndex{n: len(jobs), jobs: make(map[string]jobInfo, len(jobs))}
	byStudy := map[int][]job.Job{}
	for _, j := range jobs {
		byStudy[j.Study] = append(byStudy[j.Study], j)
	}
	for _, sj := range byStudy {
		keys := differing(sj)
		for _, j := range sj {
			var all, group []string
			for _, k := range keys {
				kv := k + "=" + j.Params[k]
				all = append(all, kv)
				if k != "nx" && k != "ny" && k != j.Refine {
					group = append(group, kv)
				}
			}
			nx, _ := strconv.Atoi(j.Params["nx"])
			ny, _ := strconv.Atoi(j.Params["ny"])
			ix.jobs[j.ID] = jobInfo{kase: j.Case, group: strings.Join(group, " "), params: strings.Join(all, " "),
				nx: nx, ny: ny, cost: j.Cost}
			ix.costTotal += j.Cost
		}
	}
	return ix
}

// differing is the sorted parameter names whose values are not the same
// in all of jobs.
func differing(jobs []job.Job) []string {
	var keys []string
	if len(jobs) == 0 {
		return keys
	}
	names := map[string]bool{}
	for _, j := range jobs {
		for k := range j.Params {
			names[k] = true
		}
	}
	for _, k := range slices.Sorted(maps.Keys(names)) {
		v, has := jobs[0].Params[k]
		for _, j := range jobs[1:] {
			if w, ok := j.Params[k]; ok != has || w != v {
				keys = append(keys, k)
				break
			}
		}
	}
	return keys
}

// running lists the jobs running now on the live workers, of sweep name
// ("" for all), with what the index of their sweep says of them.
func (t *tracker) running(db *store.DB, workers []wire.WorkerReport, totals map[string]int, name string, now time.Time) []RunningView {
	var out []RunningView
	for _, w := range workers {
		for _, c := range w.Current {
			if name != "" && c.Sweep != name {
				continue
			}
			v := RunningView{JobID: c.JobID, Sweep: c.Sweep, Worker: w.ID, Since: c.Since, ElapsedS: max(0, now.Sub(c.Since).Seconds()), Progress: c.Progress}
			if total, ok := totals[c.Sweep]; ok {
				if ix := t.index(db, c.Sweep, total); ix != nil {
					if info, ok := ix.jobs[c.JobID]; ok {
						v.Case, v.Group, v.NX, v.NY = info.kase, info.group, info.nx, info.ny
					}
				}
			}
			out = append(out, v)
		}
	}
	sort.Slice(out, func(i, j int) bool { return out[i].Since.Before(out[j].Since) })
	return out
}

// progress works out the pace of sweep st; seen is when each live worker
// last reported.
func (t *tracker) progress(db *store.DB, st wire.SweepStatus, workers []wire.WorkerReport, seen map[string]time.Time, now time.Time) Progress {
	t.mu.Lock()
	defer t.mu.Unlock()
	p := Progress{Sweep: st.Sweep, Now: now, LastChange: st.Updated, FailureParams: map[string]string{}}
	ix := t.index(db, st.Sweep, st.JobsTotal)
	tr := t.track(st.Sweep)
	finished := st.Done + st.Failed
	if ix != nil && (finished != tr.finished || tr.read.IsZero()) && now.Sub(tr.read) >= time.Second {
		if outs, err := db.Outcomes(st.Sweep); err == nil {
			if !tr.read.IsZero() && len(outs) != tr.finished {
				tr.changed = now
			}
			tr.read, tr.finished, tr.costDone = now, len(outs), 0
			tr.failed = map[string]string{}
			for id, o := range outs {
				info := ix.jobs[id]
				tr.costDone += info.cost
				if o.Status == job.StatusFailed {
					tr.failed[id] = info.params
				}
			}
		}
	}
	if n := len(tr.samples); n == 0 || now.Sub(tr.samples[n-1].at) >= time.Second {
		tr.samples = append(tr.samples, doneSample{at: now, jobs: tr.finished, cost: tr.costDone})
	}
	for len(tr.samples) > 2 && now.Sub(tr.samples[1].at) >= window {
		tr.samples = tr.samples[1:]
	}
	maps.Copy(p.FailureParams, tr.failed)
	if tr.changed.After(p.LastChange) {
		p.LastChange = tr.changed
	}
	p.Running = t.running(db, workers, map[string]int{st.Sweep: st.JobsTotal}, st.Sweep, now)
	for _, r := range p.Running {
		if at := seen[r.Worker]; at.After(p.LastChange) {
			p.LastChange = at
		}
	}
	complete := finished >= st.JobsTotal
	end := now
	if complete {
		end = p.LastChange
	}
	p.ElapsedS = max(0, end.Sub(st.Created).Seconds())
	if ix != nil {
		p.CostTotal, p.CostDone = ix.costTotal, tr.costDone
	}
	if st.Canceled {
		p.Canceled = max(0, st.JobsTotal-finished-st.Running)
	}
	first, last := tr.samples[0], tr.samples[len(tr.samples)-1]
	if span := last.at.Sub(first.at).Seconds(); span >= 2 && last.jobs > first.jobs {
		jr, cr := float64(last.jobs-first.jobs)/span, (last.cost-first.cost)/span
		p.JobsPerS, p.CostPerS = &jr, &cr
		if left := p.CostTotal - p.CostDone; !complete && !st.Canceled && cr > 0 && left > 0 {
			eta := left / cr
			p.ETAS = &eta
		}
	}
	return p
}

// refined is set with the status of each grid still to come made precise:
// running (a worker reports it), canceled (the sweep was canceled) or
// queued. It copies what it changes; set stays as it was.
func refined(set table.Set, running map[string]bool, canceled bool) table.Set {
	out := set
	out.Studies = slices.Clone(set.Studies)
	for i := range out.Studies {
		st := &out.Studies[i]
		st.Groups = slices.Clone(st.Groups)
		for k := range st.Groups {
			g := &st.Groups[k]
			g.Rows = slices.Clone(g.Rows)
			for r := range g.Rows {
				row := &g.Rows[r]
				if row.Status == string(job.StatusDone) || row.Status == string(job.StatusFailed) {
					continue
				}
				switch {
				case running[row.JobID]:
					row.Status = "running"
				case canceled:
					row.Status = "canceled"
				default:
					row.Status = "queued"
				}
			}
		}
	}
	return out
}
