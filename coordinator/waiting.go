package coordinator

import (
	"time"

	"fvsweep/sweep/job"
)

// offered is the set of outside programs ("NAME@VERSION") that live
// workers offer; every worker offers fv2d.
func (g *registry) offered(now time.Time) map[string]bool {
	out := map[string]bool{}
	for _, r := range g.live(now) {
		for _, s := range r.Solvers {
			out[s] = true
		}
	}
	return out
}

// waiting counts the queued jobs of sweep name that no live worker can
// take, by the program they wait for ("NAME@VERSION"); nil when none.
// Only outside programs' jobs can wait so: every worker runs fv2d's. The
// jobs of each program in a sweep are read from the store once per
// submission of the sweep (forgetPrograms), their outcomes at each call.
func (c *Coordinator) waiting(name string, offered map[string]bool) (map[string]int, error) {
	c.mu.Lock()
	progs, ok := c.progJob[name]
	c.mu.Unlock()
	if !ok {
		jobs, err := c.db.Jobs(name)
		if err != nil {
			return nil, err
		}
		progs = map[string][]string{}
		for _, j := range jobs {
			if j.SolverName() != job.BuiltinSolver {
				progs[j.SolverLabel()] = append(progs[j.SolverLabel()], j.ID)
			}
		}
		c.mu.Lock()
		if c.progJob == nil {
			c.progJob = map[string]map[string][]string{}
		}
		c.progJob[name] = progs
		c.mu.Unlock()
	}
	var out map[string]int
	for label, ids := range progs {
		if offered[label] {
			continue
		}
		stored, err := c.db.Stored(ids)
		if err != nil {
			return nil, err
		}
		if n := len(ids) - len(stored); n > 0 {
			if out == nil {
				out = map[string]int{}
			}
			out[label] = n
		}
	}
	return out, nil
}

// forgetPrograms drops what waiting knows of sweep name's jobs (a
// submission may change them).
func (c *Coordinator) forgetPrograms(name string) {
	c.mu.Lock()
	delete(c.progJob, name)
	c.mu.Unlock()
}
