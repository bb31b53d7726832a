//go:build !unix

package cputime

import "time"

// Now returns 0: the CPU time of the process is not measured on this system,
// and [Report] then reports no cpu-ns/op metric.
func Now() time.Duration { return 0 }
