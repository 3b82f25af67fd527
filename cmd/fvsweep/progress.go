package main

import (
	"fmt"
	"math"
	"strings"
	"sync"
	"time"

	"fvsweep/sweep/job"
	"fvsweep/sweep/wire"
)

// jobState is where a job of a running sweep stands, for the progress
// display.
type jobState uint8

const (
	jobWaiting jobState = iota // queued, or fetched by a worker and not yet started
	jobRunning
	jobDone
	jobFailed
)

// jobTiming is one job as the time estimate sees it.
type jobTiming struct {
	Study int // index into the sweep's studies
	Cost  float64
	State jobState
	// Wall is the run time in seconds of a done or failed job, the time it
	// has run so far of a running one.
	Wall float64
}

// timeLeft estimates the wall time until every job of jobs has an outcome
// on slots slots running at once.
//
// The cost model (job Cost, estimated cells x steps) is calibrated by the
// done jobs: the speed of a study is the sum of its done jobs' costs over
// the sum of their run times (cost per slot-second), or, while a study has
// none, that of all done jobs. A job left needs cost/speed seconds of a
// slot, a running one that less the time it has run (at least 0). The
// estimate is the larger of the work left spread over the slots and the
// longest single job left: a list schedule of the jobs ends within that
// bound plus the longest job, and the jobs go out largest first, so that
// the longest ones are not left for the end. A job without a cost counts
// as the mean run time of its study's done jobs (or of all). Failed jobs
// calibrate nothing: a run that breaks down stops early.
//
// ok is false before the first done job: nothing calibrates the model yet.
func timeLeft(jobs []jobTiming, slots int) (left time.Duration, ok bool) {
	studies := 0
	for _, j := range jobs {
		studies = max(studies, j.Study+1)
	}
	var all calib
	done := make([]calib, studies) // by study
	for _, j := range jobs {
		if j.State == jobDone && j.Wall > 0 {
			all.add(j.Cost, j.Wall)
			done[j.Study].add(j.Cost, j.Wall)
		}
	}
	if all.n == 0 {
		return 0, false
	}
	speed := func(study int) calib {
		if done[study].n > 0 {
			return done[study]
		}
		return all
	}
	// A running job that has run longer than its study's speed says shows
	// that the study is slower: its time so far joins the calibration (the
	// only one of a study with no done job).
	over := make([]calib, studies)
	for _, j := range jobs {
		if j.State == jobRunning && j.Wall > speed(j.Study).need(j.Cost) {
			over[j.Study].add(j.Cost, j.Wall)
		}
	}
	need := func(j jobTiming) float64 {
		c := speed(j.Study)
		switch o := over[j.Study]; {
		case o.n > 0 && done[j.Study].n > 0:
			c = c.plus(o)
		case o.n > 0:
			c = o
		}
		return c.need(j.Cost)
	}
	var work, longest float64
	for _, j := range jobs {
		var s float64
		switch j.State {
		case jobWaiting:
			s = need(j)
		case jobRunning:
			s = max(0, need(j)-j.Wall)
		default:
			continue
		}
		work += s
		longest = max(longest, s)
	}
	sec := max(work/float64(max(slots, 1)), longest)
	return time.Duration(math.Round(sec * float64(time.Second))), true
}

// calib sums the costs and run times of finished jobs (n of them).
type calib struct {
	cost, wall float64
	n          int
}

func (c *calib) add(cost, wall float64) { c.cost += cost; c.wall += wall; c.n++ }

func (c calib) plus(d calib) calib { return calib{c.cost + d.cost, c.wall + d.wall, c.n + d.n} }

// need is the run time of a job of the given cost at c's speed, or the
// mean run time where the costs say nothing.
func (c calib) need(cost float64) float64 {
	if cost > 0 && c.cost > 0 {
		return cost * c.wall / c.cost
	}
	return c.wall / float64(max(c.n, 1))
}

// sweepProgress follows the jobs of one sweep while run runs it: which are
// done, failed, running or waiting, per study. Outcomes come from the
// coordinator as it stores them (stored), the running jobs from the
// workers' reports (setRunning). Its methods are safe for concurrent use.
type sweepProgress struct {
	mu      sync.Mutex
	name    string
	labels  []string       // by study index - 1
	jobs    []jobTiming    // Study is the study index - 1
	byID    map[string]int // job ID -> index into jobs
	early   map[string]job.Outcome
	slots   int
	start   time.Time
	startAt float64 // cost finished before start
}

func newSweepProgress(name string, labels []string) *sweepProgress {
	return &sweepProgress{name: name, labels: labels, early: map[string]job.Outcome{}, start: time.Now()}
}

// load sets the jobs of the sweep and their state from rows (the store),
// then applies the outcomes stored since rows were read.
func (p *sweepProgress) load(rows []wire.Row) {
	p.mu.Lock()
	defer p.mu.Unlock()
	p.jobs = make([]jobTiming, len(rows))
	p.byID = make(map[string]int, len(rows))
	p.startAt = 0
	for i, r := range rows {
		j := jobTiming{Study: max(0, r.Job.Study-1), Cost: r.Job.Cost}
		if r.Outcome != nil {
			j.State, j.Wall = finishedState(*r.Outcome), r.Outcome.WallS
			p.startAt += j.Cost
		}
		p.jobs[i] = j
		p.byID[r.Job.ID] = i
	}
	for id, o := range p.early {
		p.applyLocked(id, o)
	}
	clear(p.early)
}

func finishedState(o job.Outcome) jobState {
	if o.Status == job.StatusDone {
		return jobDone
	}
	return jobFailed
}

// stored takes outcomes as the coordinator stores them (those of other
// sweeps are ignored).
func (p *sweepProgress) stored(outs []job.Outcome) {
	p.mu.Lock()
	defer p.mu.Unlock()
	for _, o := range outs {
		if o.Sweep != p.name {
			continue
		}
		if p.byID == nil {
			p.early[o.JobID] = o
			continue
		}
		p.applyLocked(o.JobID, o)
	}
}

func (p *sweepProgress) applyLocked(id string, o job.Outcome) {
	if i, ok := p.byID[id]; ok {
		p.jobs[i].State, p.jobs[i].Wall = finishedState(o), o.WallS
	}
}

// setRunning marks the jobs the workers report running now, and counts
// their slots.
func (p *sweepProgress) setRunning(reports []wire.WorkerReport, now time.Time) {
	p.mu.Lock()
	defer p.mu.Unlock()
	for i := range p.jobs {
		if p.jobs[i].State == jobRunning {
			p.jobs[i].State, p.jobs[i].Wall = jobWaiting, 0
		}
	}
	p.slots = 0
	for _, r := range reports {
		p.slots += r.Concurrency
		for _, c := range r.Current {
			if i, ok := p.byID[c.JobID]; ok && c.Sweep == p.name && p.jobs[i].State == jobWaiting {
				p.jobs[i].State, p.jobs[i].Wall = jobRunning, max(0, now.Sub(c.Since).Seconds())
			}
		}
	}
}

// counts is where the jobs of a sweep or a study stand.
type counts struct {
	total, done, failed, running, waiting int
	cost, finishedCost                    float64
	doneCost, doneWall                    float64 // of the done jobs: calibrates the speed
}

func (c *counts) add(j jobTiming) {
	c.total++
	c.cost += j.Cost
	switch j.State {
	case jobDone:
		c.done++
		c.finishedCost += j.Cost
		if j.Wall > 0 {
			c.doneCost += j.Cost
			c.doneWall += j.Wall
		}
	case jobFailed:
		c.failed++
		c.finishedCost += j.Cost
	case jobRunning:
		c.running++
	default:
		c.waiting++
	}
}

// finished reports whether every job has an outcome.
func (c counts) finished() bool { return c.done+c.failed >= c.total }

// workShare is the fraction of the estimated cost that has an outcome (of
// the jobs when no job has a cost).
func (c counts) workShare() float64 {
	if c.cost > 0 {
		return c.finishedCost / c.cost
	}
	if c.total == 0 {
		return 1
	}
	return float64(c.done+c.failed) / float64(c.total)
}

// snapshot is the state of the sweep and of each study, and the time left.
type snapshot struct {
	sweep   counts
	studies []counts
	left    time.Duration
	leftOK  bool
	elapsed time.Duration
}

func (p *sweepProgress) snapshot() snapshot {
	p.mu.Lock()
	defer p.mu.Unlock()
	s := snapshot{studies: make([]counts, len(p.labels)), elapsed: time.Since(p.start)}
	for _, j := range p.jobs {
		s.sweep.add(j)
		if j.Study < len(s.studies) {
			s.studies[j.Study].add(j)
		}
	}
	s.left, s.leftOK = timeLeft(p.jobs, p.slots)
	return s
}

// line is the plain progress line of the sweep, for a log or a pipe:
//
//	blast-limiters  41/94 done  0 failed  2 running  51 queued  38% of the work  ~12 s left
func (s snapshot) line(name string) string {
	c := s.sweep
	var b strings.Builder
	fmt.Fprintf(&b, "%s  %d/%d done  %d failed", name, c.done, c.total, c.failed)
	if c.finished() {
		fmt.Fprintf(&b, "  finished after %s", roughDuration(s.elapsed))
		return b.String()
	}
	fmt.Fprintf(&b, "  %d running  %d queued  %.0f%% of the work  %s", c.running, c.waiting, 100*c.workShare(), s.leftText())
	return b.String()
}

// leftText says the time left: "~12 s left", or that it is not known yet.
func (s snapshot) leftText() string {
	switch {
	case !s.leftOK:
		return "time left: after the first job"
	case s.left < time.Second:
		return "<1 s left"
	}
	return "~" + roughDuration(s.left) + " left"
}

// roughDuration writes d to the second below a minute, then to the
// minute: "12 s", "3 min 20 s", "2 h 05 min".
func roughDuration(d time.Duration) string {
	sec := int(d.Round(time.Second) / time.Second)
	switch {
	case sec < 60:
		return fmt.Sprintf("%d s", sec)
	case sec < 3600:
		return fmt.Sprintf("%d min %02d s", sec/60, sec%60)
	}
	return fmt.Sprintf("%d h %02d min", sec/3600, sec/60%60)
}

// rate says how fast a study's done jobs ran, in cell updates per second
// of a slot ("" before the first).
func (c counts) rate() string {
	if c.doneWall <= 0 || c.doneCost <= 0 {
		return ""
	}
	return siCount(c.doneCost/c.doneWall) + " cell updates/s"
}

// siCount writes x with an SI prefix and 3 significant digits: "4.12M".
func siCount(x float64) string {
	for _, u := range []struct {
		f float64
		p string
	}{{1e12, "T"}, {1e9, "G"}, {1e6, "M"}, {1e3, "k"}} {
		if x >= u.f {
			return fmt.Sprintf("%.3g%s", x/u.f, u.p)
		}
	}
	return fmt.Sprintf("%.3g", x)
}
