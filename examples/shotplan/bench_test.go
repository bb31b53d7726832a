package main

import (
	"github.com/shotplan/shotplan/internal/cputime"
	"io"
	"path/filepath"
	"testing"
)

// BenchmarkBudgetLiH answers "how many shots for 1.6 mHa?" on LiH
// (STO-3G, Jordan–Wigner, 12 qubits, 630 terms) through the command, as
// `shotplan budget -ham lih.txt -eps 0.0016 -strategy NAME` does (target:
// under 10 s and 1 GB for one strategy).
func BenchmarkBudgetLiH(b *testing.B) {
	dir := b.TempDir()
	ham := filepath.Join(dir, "lih.txt")
	if code := run([]string{"convert", "-o", ham, "testdata/lih_sto3g_1.5949A.fcidump"}, io.Discard, io.Discard); code != 0 {
		b.Fatalf("convert exited with status %d", code)
	}
	for _, c := range []struct{ name, strategy, proxy string }{
		{"strategy=greedy/proxy=worst", "greedy", "worst"},
		{"strategy=greedy/proxy=exact", "greedy", "exact"},
		{"strategy=sorted/proxy=exact", "sorted", "exact"},
		{"strategy=all/proxy=worst", "all", "worst"},
		{"strategy=all/proxy=exact", "all", "exact"},
	} {
		b.Run(c.name, func(b *testing.B) {
			b.ReportAllocs()
			start := cputime.Now()
			for b.Loop() {
				if code := run([]string{"budget", "-ham", ham, "-eps", "0.0016", "-strategy", c.strategy, "-proxy", c.proxy}, io.Discard, io.Discard); code != 0 {
					b.Fatalf("budget exited with status %d", code)
				}
			}
			cputime.Report(b, start)
		})
	}
}
