//go:build !unix

package allocate_test

// cpuTime is not measured on this system; the cpu-ns/op metric reads 0.
func cpuTime() int64 { return 0 }
