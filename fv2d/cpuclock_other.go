//go:build !linux

package fv2d

import "time"

// threadCPU reports false: a per-thread CPU clock is read only on Linux.
func threadCPU() (time.Duration, bool) { return 0, false }
