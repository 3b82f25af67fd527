package fv2d

import (
	"time"

	"golang.org/x/sys/unix"
)

// threadCPU is the CPU time the calling OS thread has used so far, and
// true; the caller must be locked to its thread (runtime.LockOSThread) for
// two readings to be of the same thread. clock_gettime(2) of
// CLOCK_THREAD_CPUTIME_ID: the scheduler's nanosecond count, where
// getrusage(RUSAGE_THREAD) would round a short run to whole ticks.
func threadCPU() (time.Duration, bool) {
	var ts unix.Timespec
	if err := unix.ClockGettime(unix.CLOCK_THREAD_CPUTIME_ID, &ts); err != nil {
		return 0, false
	}
	return time.Duration(ts.Nano()), true
}
