package coordinator

import (
	"time"

	"fvsweep/store"
)

// What the status page (package coordinator/web) reads of a running
// coordinator besides Status and Workers.

// Store is the coordinator's store, for reading a sweep's jobs and
// outcomes.
func (c *Coordinator) Store() *store.DB { return c.db }

// Generation counts the coordinator's store writes so far: a reader's
// results are current while it is unchanged.
func (c *Coordinator) Generation() uint64 {
	c.mu.Lock()
	defer c.mu.Unlock()
	return c.gen
}

// LastSeen maps each live worker's ID to when its latest report came, by
// the coordinator's clock.
func (c *Coordinator) LastSeen() map[string]time.Time { return c.reg.lastSeen() }
