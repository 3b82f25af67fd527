package coordinator

import (
	"context"
	"time"

	"fvsweep/sweep/job"
	"fvsweep/sweep/spec"
	"fvsweep/sweep/table"
	"fvsweep/sweep/verify"
)

// extendTimeout bounds the publishing of the grids added after one batch.
const extendTimeout = 30 * time.Second

// extensions adds grids to the groups whose order has not settled, in the
// studies that ask for it (refine.extend_to): for every sweep of the batch
// outs with such a study, the groups that outs touches are judged (the
// tables' model, table.Build, and verify.Settle) with the batch's outcomes
// over the stored ones, and the job of each group's next grid
// (spec.ExtraJob) is recorded in the store with the sweep's jobs. It runs
// before the batch is stored, so that no reader sees a sweep finished
// whose next grid is still to come; it returns the jobs to queue once the
// batch is stored (publishExtra). A failure is logged and adds nothing: the
// batch itself is stored whatever happens here.
//
// All grids it may add were checked against the limits when the spec was
// (spec.Check: refine.extend_to, job and memory limits), and a canceled
// sweep gets none.
func (c *Coordinator) extensions(outs []job.Outcome) []job.Job {
	bySweep := map[string][]job.Outcome{}
	var names []string
	for _, o := range outs {
		if _, seen := bySweep[o.Sweep]; !seen {
			names = append(names, o.Sweep)
		}
		bySweep[o.Sweep] = append(bySweep[o.Sweep], o)
	}
	var extra []job.Job
	for _, name := range names {
		jobs, err := c.extendSweep(name, bySweep[name])
		if err != nil {
			c.log.Warn("adding grids", "sweep", name, "error", err)
			continue
		}
		extra = append(extra, jobs...)
	}
	return extra
}

type groupKey struct {
	study int
	group string
}

// extendSweep is extensions for one sweep: the jobs added to the store
// that have no outcome yet.
func (c *Coordinator) extendSweep(name string, outs []job.Outcome) ([]job.Job, error) {
	rec, err := c.db.Sweep(name)
	if err != nil || rec.Canceled || !addsGrids(rec.Studies) {
		return nil, err
	}
	rows, err := c.db.Query(name, nil)
	if err != nil {
		return nil, err
	}
	byID := make(map[string]job.Job, len(rows))
	for _, r := range rows {
		byID[r.Job.ID] = r.Job
	}
	touched := map[groupKey]bool{}
	for _, o := range outs {
		if j, ok := byID[o.JobID]; ok && extendTo(rec.Studies, j.Study) > 0 {
			touched[groupKey{j.Study, j.Group}] = true
		}
	}
	if len(touched) == 0 {
		return nil, nil
	}
	var jobs []job.Job
	outcomes := map[string]job.Outcome{}
	for _, r := range rows {
		if !touched[groupKey{r.Job.Study, r.Job.Group}] {
			continue
		}
		jobs = append(jobs, r.Job)
		if r.Outcome != nil {
			outcomes[r.Job.ID] = *r.Outcome
		}
	}
	for _, o := range outs { // as store.DB.PutOutcomes: nothing replaces done
		if old, ok := outcomes[o.JobID]; !ok || old.Status != job.StatusDone {
			outcomes[o.JobID] = o
		}
	}
	studies, _, err := table.Build(rec.Studies, jobs, outcomes, table.Options{})
	if err != nil {
		return nil, err
	}
	var extra []job.Job
	for _, st := range studies {
		for _, g := range st.Groups {
			if g.Settle == nil || g.Settle.State != verify.SettleExtend || len(g.Rows) < 2 {
				continue
			}
			k := len(g.Rows) // coarsest first
			j, _, err := spec.ExtraJob(byID[g.Rows[k-2].JobID], byID[g.Rows[k-1].JobID], g.Settle.Next)
			if err != nil {
				c.log.Warn("adding a grid", "sweep", name, "study", st.Index, "group", g.Label, "error", err)
				continue
			}
			c.log.Info("order not settled: adding a grid", "sweep", name, "study", st.Index, "group", g.Label,
				st.Refine, g.Settle.Next, "reason", g.Settle.Reason)
			extra = append(extra, j)
		}
	}
	if len(extra) == 0 {
		return nil, nil
	}
	if _, err := c.db.AddJobs(name, extra); err != nil {
		return nil, err
	}
	complete, err := c.db.Complete(extra)
	if err != nil {
		return nil, err
	}
	todo := extra[:0]
	for _, j := range extra {
		if !complete[j.ID] {
			todo = append(todo, j)
		}
	}
	return todo, nil
}

// addsGrids reports whether a study of settings adds grids.
func addsGrids(settings []job.StudySettings) bool {
	for _, s := range settings {
		if s.ExtendTo > 0 {
			return true
		}
	}
	return false
}

// extendTo is refine.extend_to of study index (1-based), 0 if none.
func extendTo(settings []job.StudySettings, index int) int {
	if index < 1 || index > len(settings) {
		return 0
	}
	return settings[index-1].ExtendTo
}

// publishExtra queues the jobs that extensions added, after their batch is
// stored. A job whose publish fails stays in the store without an outcome,
// and the reconcile queues it again.
func (c *Coordinator) publishExtra(jobs []job.Job) {
	if len(jobs) == 0 {
		return
	}
	ctx, cancel := context.WithTimeout(context.Background(), extendTimeout)
	defer cancel()
	pub := c.newPublisher(ctx)
	err := pub.addAll(jobs)
	if err == nil {
		err = pub.wait()
	}
	if err != nil {
		c.log.Warn("queueing added grids; the reconcile will queue them", "jobs", len(jobs), "error", err)
		return
	}
	c.bump()
}
