package main

import (
	"io"
	"testing"
)

// BenchmarkQuickstart runs the whole default job — plan 1000 greedy shots,
// certify, find the exact ground state, simulate, estimate, report — as
// `go run ./examples/quickstart` does (target: under 30 s; BENCHMARKS.md).
func BenchmarkQuickstart(b *testing.B) {
	b.ReportAllocs()
	for b.Loop() {
		if code := run(nil, io.Discard, io.Discard); code != 0 {
			b.Fatalf("quickstart exited with status %d", code)
		}
	}
}
