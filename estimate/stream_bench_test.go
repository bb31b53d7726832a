package estimate

import (
	"bytes"
	"io"
	"math/rand/v2"
	"testing"
	"time"

	"github.com/shotplan/shotplan/hamiltonian"
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
