package guarantee

import (
	"fmt"
	"math/rand/v2"
	"runtime"
	"testing"
	"time"

	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/internal/cputime"
	"github.com/shotplan/shotplan/pauli"
)

func randomLocalSetting(rng *rand.Rand, n int) pauli.Setting {
	b := make([]byte, n)
	for q := range b {
		b[q] = "XYZ"[rng.IntN(3)]
	}
	return pauli.MustParseSetting(string(b))
}

// streamBenchPlan returns a random 4-local Hamiltonian, distinct random
// settings, and 4096 random outcomes to cycle through.
func streamBenchPlan(b *testing.B, n, terms, settings int) (*hamiltonian.Hamiltonian, []pauli.Setting, []pauli.Bits, float64) {
	h, err := hamiltonian.RandomLocal(n, terms, 4, 1)
	if err != nil {
		b.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(7, 8))
	ss := make([]pauli.Setting, settings)
	covered := 0
	for k := range ss {
		ss[k] = randomLocalSetting(rng, n)
		covered += len(h.Table().Covered(nil, ss[k]))
	}
	outs := make([]pauli.Bits, 4096)
	for k := range outs {
		outs[k] = pauli.NewBits(n)
		for q := range n {
			if rng.IntN(2) == 1 {
				outs[k][q>>6] |= 1 << (q & 63)
			}
		}
	}
	return h, ss, outs, float64(covered) / float64(settings)
}

// planCounts spreads shots over settings, round robin.
func planCounts(shots, settings int) []int {
	c := make([]int, settings)
	for k := range c {
		c[k] = shots / settings
		if k < shots%settings {
			c[k]++
		}
	}
	return c
}

// BenchmarkStream feeds b.N shots, round robin over the distinct settings
// of a plan, into a Stream and finishes with the estimate and both data
// bounds of `shotplan estimate`; one op is one shot. It reports shots/s
// (wall clock), the terms a shot's setting covers on average, and the
// heap in use after the stream is built and after all shots (heap-MB),
// which does not grow with b.N (run with -benchtime 10000000x and
// 100000000x to compare).
func BenchmarkStream(b *testing.B) {
	for _, c := range []struct{ n, terms, settings int }{
		{20, 200, 100},
		{20, 1000, 100},
		{50, 100000, 1000},
	} {
		h, ss, outs, cov := streamBenchPlan(b, c.n, c.terms, c.settings)
		b.Run(fmt.Sprintf("qubits=%d/terms=%d/settings=%d", c.n, c.terms, c.settings), func(b *testing.B) {
			runtime.GC()
			st, err := estimate.NewStream(h, ss, planCounts(b.N, len(ss)), nil)
			if err != nil {
				b.Fatal(err)
			}
			var ms runtime.MemStats
			runtime.ReadMemStats(&ms)
			before := ms.HeapInuse
			b.ReportAllocs()
			b.ResetTimer()
			cpu := cputime.Now()
			start := time.Now()
			g := 0
			for k := range b.N {
				if err := st.Add(ss[g], outs[k&4095]); err != nil {
					b.Fatal(err)
				}
				if g++; g == len(ss) {
					g = 0
				}
			}
			if _, err := st.Result(); err != nil {
				b.Fatal(err)
			}
			for _, form := range []EmpiricalForm{Pooled, Residual} {
				if _, err := EmpiricalStream(st, 0.025, &EmpiricalOptions{Form: form}); err != nil {
					b.Fatal(err)
				}
			}
			el := time.Since(start)
			cputime.Report(b, cpu)
			b.StopTimer()
			runtime.ReadMemStats(&ms)
			b.ReportMetric(float64(b.N)/el.Seconds(), "shots/s")
			b.ReportMetric(cov, "terms/shot")
			b.ReportMetric(float64(before)/1e6, "heap-MB-start")
			b.ReportMetric(float64(ms.HeapInuse)/1e6, "heap-MB-end")
		})
	}
}
