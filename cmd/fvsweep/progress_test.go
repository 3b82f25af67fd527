package main

import (
	"context"
	"math"
	"math/rand/v2"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"

	"fvsweep/sweep/job"
	"fvsweep/sweep/wire"
	"fvsweep/worker"
)

// simJob is a job of a simulated sweep: its estimated cost and how long it
// really runs.
type simJob struct {
	study int
	cost  float64
	dur   float64
}

// simulate runs jobs (largest cost first, as a sweep sends them) on slots
// slots, each free slot taking the next job, and returns the start and end
// time of each job and when the last one ends.
func simulate(jobs []simJob, slots int) (start, end []float64, makespan float64) {
	start, end = make([]float64, len(jobs)), make([]float64, len(jobs))
	free := make([]float64, slots)
	for i, j := range jobs {
		k := slices.Index(free, slices.Min(free))
		start[i], end[i] = free[k], free[k]+j.dur
		free[k] = end[i]
		makespan = max(makespan, end[i])
	}
	return start, end, makespan
}

// at is the state of the simulated jobs at time t, as timeLeft sees it.
func at(jobs []simJob, start, end []float64, t float64) []jobTiming {
	out := make([]jobTiming, len(jobs))
	for i, j := range jobs {
		out[i] = jobTiming{Study: j.study, Cost: j.cost}
		switch {
		case end[i] <= t:
			out[i].State, out[i].Wall = jobDone, j.dur
		case start[i] <= t:
			out[i].State, out[i].Wall = jobRunning, t-start[i]
		}
	}
	return out
}

// ladder is a grid-convergence study: groups x refinements nx = 16, 32, ...,
// the cost of a 2-D explicit run ~ nx^3 (cells nx^2 times steps ~ nx at a
// fixed CFL number: common practice); the run takes cost x secPerCost x a
// factor within 1 +- noise.
func ladder(rng *rand.Rand, study, groups, grids int, secPerCost, noise float64) []simJob {
	var out []simJob
	for range groups {
		for g := range grids {
			nx := 16 << g
			c := math.Pow(float64(nx), 3)
			f := 1 + noise*(2*rng.Float64()-1)
			out = append(out, simJob{study: study, cost: c, dur: c * secPerCost * f})
		}
	}
	return out
}

// The estimate is within a factor of 2 of the true time left from the
// moment 10 % of the cost has an outcome: a sequence of job costs and run
// times is run through a list schedule (largest first) and timeLeft is
// asked at every start and end of a job.
//
// The estimate it replaces extrapolated the count of jobs (time so far /
// jobs finished x jobs left): on the first case it said 7 times the time
// left after the two largest jobs, 30 to 40 times after the next ones.
func TestTimeLeftWithinFactorTwoAfterTenPercent(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	cases := []struct {
		name  string
		jobs  []simJob
		slots int
	}{
		{"one ladder, 2 slots", ladder(rng, 0, 4, 5, 1e-6, 0), 2},
		{"one ladder, noisy, 1 slot", ladder(rng, 0, 6, 4, 1e-6, 0.3), 1},
		// Euler runs cost more per cell update than Burgers runs, which the
		// cost model does not know: here 3 times. Equal costs go out in
		// the order of their IDs, mixed (shuffled here). Until a study has
		// a done job nothing tells its speed (but its running jobs, once
		// they outlast the estimate): the check starts once each has one.
		{"two studies of unequal speed, 4 slots", shuffle(rng, append(ladder(rng, 0, 8, 4, 1e-6, 0.2), ladder(rng, 1, 8, 4, 3e-6, 0.2)...)), 4},
		// One large job beside many small ones: the throughput so far
		// (cost done / time) would say 90 s where 40 s are left at 10 %.
		{"one large and small ones, 2 slots", []simJob{{0, 50, 50}, {0, 10, 10}, {0, 10, 10}, {0, 10, 10}, {0, 10, 10}, {0, 10, 10}}, 2},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			jobs := slices.Clone(tc.jobs)
			slices.SortStableFunc(jobs, func(a, b simJob) int { return -cmpFloat(a.cost, b.cost) })
			var total float64
			for _, j := range jobs {
				total += j.cost
			}
			start, end, makespan := simulate(jobs, tc.slots)
			studies := 0
			for _, j := range jobs {
				studies = max(studies, j.study+1)
			}
			times := slices.Sorted(slices.Values(append(slices.Clone(start), end...)))
			checked := 0
			for _, now := range times {
				state := at(jobs, start, end, now)
				var finished float64
				seen := map[int]bool{}
				for _, j := range state {
					if j.State == jobDone {
						finished += j.Cost
						seen[j.Study] = true
					}
				}
				truth := makespan - now
				if finished < 0.1*total || truth <= 0 || len(seen) < studies {
					continue
				}
				got, ok := timeLeft(state, tc.slots)
				if !ok {
					t.Fatalf("t=%g: no estimate with %.0f%% of the cost done", now, 100*finished/total)
				}
				// Near the end a few running jobs decide what is left,
				// each off its estimate by the noise of its run time: an
				// error within a tenth of the whole run passes too (it is
				// within the factor 2 while a fifth of the time is left).
				r := got.Seconds() / truth
				if (r < 0.5 || r > 2) && math.Abs(got.Seconds()-truth) > 0.1*makespan {
					t.Errorf("t=%g (%.0f%% of the cost done): estimate %v, truth %.3gs (ratio %.2f)",
						now, 100*finished/total, got, truth, r)
				}
				checked++
			}
			if checked == 0 {
				t.Fatal("no point after 10 % of the cost was checked")
			}
		})
	}
}

func shuffle(rng *rand.Rand, jobs []simJob) []simJob {
	rng.Shuffle(len(jobs), func(i, k int) { jobs[i], jobs[k] = jobs[k], jobs[i] })
	return jobs
}

func cmpFloat(a, b float64) int {
	switch {
	case a < b:
		return -1
	case a > b:
		return 1
	}
	return 0
}

// Exact cases of the rule: per-study speed, running jobs count what they
// have left, the longest job bounds the estimate, no estimate before the
// first done job, failed jobs calibrate nothing.
func TestTimeLeftRule(t *testing.T) {
	s := func(sec float64) time.Duration { return time.Duration(sec * float64(time.Second)) }
	for _, tc := range []struct {
		name  string
		jobs  []jobTiming
		slots int
		want  time.Duration
		ok    bool
	}{
		{"nothing done yet", []jobTiming{{Cost: 10, State: jobRunning, Wall: 3}, {Cost: 5}}, 2, 0, false},
		{"only a failure", []jobTiming{{Cost: 10, State: jobFailed, Wall: 0.1}, {Cost: 5}}, 2, 0, false},
		// speed 2 cost/s: 2 waiting jobs of 10 need 5 s each, on 2 slots 5 s.
		{"two slots", []jobTiming{{Cost: 10, State: jobDone, Wall: 5}, {Cost: 10}, {Cost: 10}}, 2, s(5), true},
		// The running job needs 5 s and has run 4: 1 s left, plus 5 s of
		// waiting work on 1 slot.
		{"running counts what it has left", []jobTiming{{Cost: 10, State: jobDone, Wall: 5}, {Cost: 10, State: jobRunning, Wall: 4}, {Cost: 10}}, 1, s(6), true},
		// A running job past its estimate counts 0, not less, and its time
		// so far joins the calibration: 20 cost in 14 s, the job of 2
		// needs 1.4 s.
		{"overrun", []jobTiming{{Cost: 10, State: jobDone, Wall: 5}, {Cost: 10, State: jobRunning, Wall: 9}, {Cost: 2}}, 1, s(1.4), true},
		// A study with no done job whose running job outlasts the speed of
		// the others: that job's time so far is its speed (1 cost/s).
		{"overrun, study without done jobs", []jobTiming{{Study: 0, Cost: 10, State: jobDone, Wall: 5}, {Study: 1, Cost: 8, State: jobRunning, Wall: 8},
			{Study: 1, Cost: 3}}, 1, s(3), true},
		// 4 slots, one job of 40 left: 20 s, not 5.
		{"longest job bounds", []jobTiming{{Cost: 10, State: jobDone, Wall: 5}, {Cost: 40}}, 4, s(20), true},
		// study 1 runs at 1 cost/s, study 0 at 4: each calibrated by its own.
		{"per study", []jobTiming{{Study: 0, Cost: 8, State: jobDone, Wall: 2}, {Study: 1, Cost: 3, State: jobDone, Wall: 3},
			{Study: 0, Cost: 8}, {Study: 1, Cost: 3}}, 1, s(5), true},
		// study 1 has no done job yet: the speed of all done jobs (2/s).
		{"study without done jobs", []jobTiming{{Study: 0, Cost: 10, State: jobDone, Wall: 5}, {Study: 1, Cost: 6}}, 1, s(3), true},
		// no costs: the mean run time of the done jobs.
		{"no cost model", []jobTiming{{State: jobDone, Wall: 2}, {State: jobDone, Wall: 4}, {}, {}}, 1, s(6), true},
		{"all finished", []jobTiming{{Cost: 1, State: jobDone, Wall: 1}, {Cost: 1, State: jobFailed}}, 1, 0, true},
	} {
		got, ok := timeLeft(tc.jobs, tc.slots)
		if ok != tc.ok || (ok && (got-tc.want).Abs() > time.Millisecond) {
			t.Errorf("%s: timeLeft = %v, %v; want %v, %v", tc.name, got, ok, tc.want, tc.ok)
		}
	}
}

// The plain line and the tracker: stored outcomes and worker reports move
// jobs between the counts; outcomes of other sweeps and those that come
// before the jobs are loaded are handled.
func TestSweepProgressLine(t *testing.T) {
	p := newSweepProgress("demo", []string{"a", "b"})
	p.stored([]job.Outcome{{JobID: "j1", Sweep: "demo", Status: job.StatusDone, WallS: 2}, {JobID: "j1", Sweep: "other", Status: job.StatusFailed}})
	p.load([]wire.Row{
		{Job: job.Job{ID: "j0", Study: 1, Cost: 40}},
		{Job: job.Job{ID: "j1", Study: 1, Cost: 20}},
		{Job: job.Job{ID: "j2", Study: 2, Cost: 20}},
		{Job: job.Job{ID: "j3", Study: 2, Cost: 20}, Outcome: &job.Outcome{Status: job.StatusFailed}},
	})
	now := time.Now()
	p.setRunning([]wire.WorkerReport{{Concurrency: 2, Current: []wire.RunningJob{
		{JobID: "j0", Sweep: "demo", Since: now.Add(-time.Second)}, {JobID: "j2", Sweep: "other", Since: now}}}}, now)
	s := p.snapshot()
	// j0 needs 4 s at 10 cost/s and has run 1; j2 needs 2: 3 s on 2 slots.
	want := "demo  1/4 done  1 failed  1 running  1 queued  40% of the work  ~3 s left"
	if got := s.line("demo"); got != want {
		t.Errorf("line:\n got %q\nwant %q", got, want)
	}
	if got := studyText(s.studies[0]); got != "1/2 done  0 failed  1 running  10 cell updates/s" {
		t.Errorf("study a: %q", got)
	}
	p.stored([]job.Outcome{{JobID: "j0", Sweep: "demo", Status: job.StatusDone, WallS: 4}, {JobID: "j2", Sweep: "demo", Status: job.StatusDone, WallS: 2}})
	p.setRunning(nil, now)
	s = p.snapshot()
	if got := s.line("demo"); !strings.HasPrefix(got, "demo  3/4 done  1 failed  finished after ") {
		t.Errorf("finished line: %q", got)
	}
}

func TestRoughDuration(t *testing.T) {
	for d, want := range map[time.Duration]string{
		12 * time.Second: "12 s", 200 * time.Second: "3 min 20 s", 2*time.Hour + 5*time.Minute + 9*time.Second: "2 h 05 min",
		1400 * time.Millisecond: "1 s",
	} {
		if got := roughDuration(d); got != want {
			t.Errorf("roughDuration(%v) = %q, want %q", d, got, want)
		}
	}
}

// stampedLines keeps each line written to it with the time it came.
type stampedLines struct {
	mu    sync.Mutex
	lines []string
	at    []time.Time
}

func (s *stampedLines) Write(b []byte) (int, error) {
	s.mu.Lock()
	defer s.mu.Unlock()
	for _, l := range strings.Split(strings.TrimRight(string(b), "\n"), "\n") {
		s.lines, s.at = append(s.lines, l), append(s.at, time.Now())
	}
	return len(b), nil
}

const etaSpec = `name = "eta"
[[study]]
label = "sine"
case = "burgers-sine"
fixed = { t_end = 0.2 }
axes = { limiter = ["minmod", "mc", "vanleer"], a = [1.0, 1.5] }
refine = { nx = [32, 64, 128] }
`

// run prints a time left that is within a factor of 2 of the time the
// sweep then takes, on every line from 10 % of the cost on (or within a
// tenth of the whole run near the end): its workers run a stand-in solver
// that takes a time proportional to the job's cost.
func TestRunTimeLeftEndToEnd(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a sweep of about 8 s")
	}
	file, data := specFiles(t, etaSpec)
	var c common
	pl, err := c.loadSpec(file)
	if err != nil {
		t.Fatal(err)
	}
	const slots, seconds = 2, 8.0 // the run takes about seconds on slots
	perCost := time.Duration(seconds * slots / pl.Cost * float64(time.Second))
	lines := &stampedLines{}
	runHooks.progress, runHooks.every = lines, 100*time.Millisecond
	runHooks.runners = map[string]worker.Runner{job.BuiltinSolver: worker.RunnerFunc(func(ctx context.Context, jb job.Job) (worker.Result, error) {
		d := time.Duration(jb.Cost) * perCost
		select {
		case <-ctx.Done():
			return worker.Result{}, ctx.Err()
		case <-time.After(d):
		}
		return worker.Result{Outcome: job.Outcome{Status: job.StatusDone, WallS: d.Seconds(), Steps: 1, TFinal: 0.2}}, nil
	})}
	t.Cleanup(func() { runHooks.progress, runHooks.runners = nil, nil })
	start := time.Now()
	code, out := capture(t, func() int {
		return runRun([]string{file, "--data", data, "--concurrency", strconv.Itoa(slots), "--format", "none", "--log-level", "warn"})
	})
	end := time.Now()
	if code != 0 {
		t.Fatalf("run: exit %d\n%s", code, out)
	}
	total := end.Sub(start).Seconds()
	re := regexp.MustCompile(`(\d+)% of the work  (~(\d+) s|<1 s) left`)
	checked := 0
	for i, l := range lines.lines {
		m := re.FindStringSubmatch(l)
		if m == nil {
			continue
		}
		if share, _ := strconv.Atoi(m[1]); share < 10 {
			continue
		}
		got := 0.5
		if m[3] != "" {
			n, _ := strconv.Atoi(m[3])
			got = float64(n)
		}
		truth := end.Sub(lines.at[i]).Seconds()
		if r := got / truth; (r < 0.5 || r > 2) && math.Abs(got-truth) > 0.1*total {
			t.Errorf("%q at %.1f s: %.1f s were left (ratio %.2f)", l, lines.at[i].Sub(start).Seconds(), truth, r)
		}
		checked++
	}
	if checked < 3 {
		t.Errorf("%d lines after 10 %% of the work checked, want 3 or more:\n%s", checked, strings.Join(lines.lines, "\n"))
	}
	if last := lines.lines[len(lines.lines)-1]; !strings.HasPrefix(last, "eta  18/18 done  0 failed  finished after ") {
		t.Errorf("last line %q", last)
	}
}
