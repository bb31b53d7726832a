package estimate

import (
	"bytes"
	"fmt"
	"io"
	"math/rand/v2"
	"testing"
	"time"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/hamiltonian/fermion"
	"github.com/shotplan/shotplan/hamiltonian/hamiltoniantest"
	"github.com/shotplan/shotplan/internal/cputime"
	"github.com/shotplan/shotplan/pauli"
)

// streamBenchPlan returns a random 4-local Hamiltonian, distinct random
// settings, and 4096 random outcomes to cycle through.
func streamBenchPlan(b *testing.B, n, terms, settings int) (*hamiltonian.Hamiltonian, []pauli.Setting, []pauli.Bits) {
	h, err := hamiltonian.RandomLocal(n, terms, 4, 1)
	if err != nil {
		b.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(7, 8))
	ss := make([]pauli.Setting, settings)
	for k := range ss {
		ss[k] = randomSetting(rng, n)
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
	return h, ss, outs
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

// csvSource produces the CSV form of shots, round robin over settings,
// the outcomes cycled (their number a power of two), without holding the
// shots: a synthetic records file of any length.
type csvSource struct {
	lines [][]byte
	left  int
	k     int
	buf   bytes.Buffer
}

func newCSVSource(ss []pauli.Setting, outs []pauli.Bits, n, shots int) *csvSource {
	c := &csvSource{left: shots}
	c.buf.WriteString(csvHeader + "\n")
	for k := range outs {
		line := ss[k%len(ss)].AppendText(nil)
		line = append(line, ',')
		line = outs[k].AppendText(line, n)
		c.lines = append(c.lines, append(line, '\n'))
	}
	return c
}

func (c *csvSource) Read(p []byte) (int, error) {
	for c.buf.Len() < len(p) && c.left > 0 {
		c.buf.Write(c.lines[c.k&(len(c.lines)-1)])
		c.k++
		c.left--
	}
	if c.buf.Len() == 0 {
		return 0, io.EOF
	}
	return c.buf.Read(p)
}

// BenchmarkStreamCSV is BenchmarkStream through the CSV reader from a
// synthetic records file; one op is one shot. path=parse is ScanCSV
// alone (shots parsed, not added: the reading half), path=scan is ScanCSV
// with Stream.Add on one goroutine, path=addcsv is Stream.AddCSV (parsing on a
// second goroutine when GOMAXPROCS ≥ 2). outcomes=4096 cycles 4096 random
// outcomes, so that a setting's outcomes repeat (as those of a state near
// a basis state do) and the stream's cache of shot values serves them;
// outcomes=262144 cycles 2^18, which on 20 qubits and 64 settings nearly
// never repeat within the cache's reach. shots/s is wall-clock,
// shots/cpu-s per second of process CPU time.
func BenchmarkStreamCSV(b *testing.B) {
	h, ss, outs := streamBenchPlan(b, 20, 200, 64)
	rng := rand.New(rand.NewPCG(9, 9))
	fresh := make([]pauli.Bits, 1<<18)
	for k := range fresh {
		fresh[k] = pauli.Bits{rng.Uint64() & (1<<20 - 1)}
	}
	for _, oc := range []struct {
		name string
		outs []pauli.Bits
	}{{"4096", outs}, {"262144", fresh}} {
		for _, path := range []string{"parse", "scan", "addcsv"} {
			b.Run("qubits=20/terms=200/settings=64/outcomes="+oc.name+"/path="+path, func(b *testing.B) {
				st, err := NewStream(h, ss, planCounts(b.N, len(ss)), nil)
				if err != nil {
					b.Fatal(err)
				}
				src := newCSVSource(ss, oc.outs, 20, b.N)
				b.ReportAllocs()
				b.ResetTimer()
				cpu := cputime.Now()
				start := time.Now()
				switch path {
				case "parse":
					_, err = ScanCSV(src, nil, func(pauli.Setting, pauli.Bits) error { return nil })
					st = nil
				case "scan":
					_, err = ScanCSV(src, nil, st.Add)
				default:
					_, err = st.AddCSV(src, nil, nil)
				}
				if err != nil {
					b.Fatal(err)
				}
				if st != nil {
					if _, err := st.Result(); err != nil {
						b.Fatal(err)
					}
				}
				el := time.Since(start)
				cputime.Report(b, cpu)
				b.ReportMetric(float64(b.N)/el.Seconds(), "shots/s")
				if c := cputime.Now() - cpu; c > 0 {
					b.ReportMetric(float64(b.N)/c.Seconds(), "shots/cpu-s")
				}
			})
		}
	}
}

// BenchmarkStreamEntangled feeds b.N shots of a plan of LiH
// (Jordan–Wigner, 12 qubits, 630 terms) to Stream.Add, settings round
// robin, then takes the Result; one op is one shot. strategy=sorted-gc is
// a plan of entangled settings, strategy=sorted one of local settings on
// the same Hamiltonian, for comparison. Each setting cycles through 4096
// outcomes of its own: outcomes=ground draws them from the ground state
// (the simulator), so that they repeat as a near-basis state's do and the
// cache of shot values serves them; outcomes=random are uniform random
// bits, whose (setting, outcome) pairs rarely meet the cache again.
// shots/s is wall-clock, terms/shot the covered terms a shot averaged over
// the settings.
func BenchmarkStreamEntangled(b *testing.B) {
	h, err := hamiltoniantest.Molecule(hamiltoniantest.LiH, fermion.JordanWigner)
	if err != nil {
		b.Fatal(err)
	}
	sim, _, err := GroundStateSimulator(h, 3, nil)
	if err != nil {
		b.Fatal(err)
	}
	n := h.Qubits()
	rng := rand.New(rand.NewPCG(5, 6))
	for _, strategy := range []string{"sorted-gc", "sorted"} {
		a, err := allocate.ByName(strategy, 0)
		if err != nil {
			b.Fatal(err)
		}
		p, err := allocate.Run(h, 1000, a, nil)
		if err != nil {
			b.Fatal(err)
		}
		ss, _ := p.Distinct()
		covered := 0
		for _, s := range ss {
			covered += len(h.Table().Covered(nil, s))
		}
		counts := make([]int, len(ss))
		for g := range counts {
			counts[g] = 4096
		}
		rec := NewRecords(n)
		if err := sim.Run(ss, counts, rec); err != nil {
			b.Fatal(err)
		}
		ground := make([][]pauli.Bits, len(ss))
		random := make([][]pauli.Bits, len(ss))
		for g, s := range ss {
			grp, ok := rec.Group(s)
			if !ok {
				b.Fatalf("no shots of setting %s", s)
			}
			for j := range 4096 {
				ground[g] = append(ground[g], rec.Outcome(grp, j))
				random[g] = append(random[g], pauli.Bits{rng.Uint64() & (1<<n - 1)})
			}
		}
		for _, oc := range []struct {
			name string
			outs [][]pauli.Bits
		}{{"ground", ground}, {"random", random}} {
			b.Run(fmt.Sprintf("LiH/strategy=%s/settings=%d/outcomes=%s", strategy, len(ss), oc.name), func(b *testing.B) {
				st, err := NewStream(h, ss, planCounts(b.N, len(ss)), nil)
				if err != nil {
					b.Fatal(err)
				}
				b.ReportAllocs()
				b.ResetTimer()
				cpu := cputime.Now()
				start := time.Now()
				g, j := 0, 0
				for range b.N {
					if err := st.Add(ss[g], oc.outs[g][j&4095]); err != nil {
						b.Fatal(err)
					}
					if g++; g == len(ss) {
						g, j = 0, j+1
					}
				}
				if _, err := st.Result(); err != nil {
					b.Fatal(err)
				}
				el := time.Since(start)
				cputime.Report(b, cpu)
				b.ReportMetric(float64(b.N)/el.Seconds(), "shots/s")
				b.ReportMetric(float64(covered)/float64(len(ss)), "terms/shot")
			})
		}
	}
}
