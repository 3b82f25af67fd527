//go:build unix

package fv2d

import (
	"syscall"
	"time"
)

// cpuTime is the user + system CPU time of the process so far: on a shared
// machine it measures the benchmark's own work, not the time it waited.
func cpuTime() time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}
