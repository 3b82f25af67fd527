//go:build !unix

package fv2d

import "time"

func cpuTime() time.Duration { return 0 }
