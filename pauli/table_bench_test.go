package pauli

import (
	"fmt"
	"math/rand/v2"
	"testing"
)

// benchTable returns m random strings on n qubits of weight about 4 (a
// typical local Hamiltonian term), so that a fair share are covered.
func benchTable(n, m int, seed uint64) (*Table, Setting) {
	rng := rand.New(rand.NewPCG(seed, 1))
	s := genSetting(rng, n)
	t := NewTable(n, m)
	w := Words(n)
	x, z := make([]uint64, w), make([]uint64, w)
	for range m {
		clear(x)
		clear(z)
		for range 1 + rng.IntN(4) {
			q := rng.IntN(n)
			l := Letter(1 + rng.IntN(3))
			if rng.IntN(2) == 0 {
				l = s.At(q)
			}
			lx, lz := l.bits()
			x[q>>6] |= lx << (q & 63)
			z[q>>6] |= lz << (q & 63)
		}
		t.Append(FromWords(n, x, z))
	}
	return t, s
}

// BenchmarkCovered measures the coverage scan of one setting over a table;
// ns/string is the time per row.
func BenchmarkCovered(b *testing.B) {
	for _, n := range []int{20, 64, 200} {
		for _, m := range []int{1_000, 10_000, 100_000, 1_000_000} {
			b.Run(fmt.Sprintf("qubits=%d/strings=%d", n, m), func(b *testing.B) {
				t, s := benchTable(n, m, 1)
				dst := make([]int, 0, m)
				b.ReportAllocs()
				for b.Loop() {
					dst = t.Covered(dst[:0], s)
				}
				b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(m), "ns/string")
			})
		}
	}
}

// BenchmarkCoverMask measures the mask form of the scan.
func BenchmarkCoverMask(b *testing.B) {
	for _, n := range []int{20, 64, 200} {
		m := 100_000
		b.Run(fmt.Sprintf("qubits=%d/strings=%d", n, m), func(b *testing.B) {
			t, s := benchTable(n, m, 2)
			mask := make([]bool, m)
			b.ReportAllocs()
			for b.Loop() {
				t.coverMask(mask, s)
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(m), "ns/string")
		})
	}
}

// BenchmarkSamples measures the ±1 samples of the covered rows for one
// outcome.
func BenchmarkSamples(b *testing.B) {
	for _, n := range []int{20, 64, 200} {
		m := 100_000
		b.Run(fmt.Sprintf("qubits=%d/strings=%d", n, m), func(b *testing.B) {
			t, s := benchTable(n, m, 3)
			rows := t.Covered(nil, s)
			out := make([]int8, len(rows))
			bits := genBits(rand.New(rand.NewPCG(4, 4)), n)
			b.ReportAllocs()
			for b.Loop() {
				t.Samples(out, rows, bits)
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(len(rows)), "ns/row")
		})
	}
}
