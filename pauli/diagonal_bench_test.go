package pauli

import (
	"fmt"
	"math/rand/v2"
	"testing"
)

// benchFamily is a family of m products of k commuting generators spread over
// all n qubits by a layered random Clifford (see randomCommutingFamily).
func benchFamily(n, k, m int) []String {
	rng := rand.New(rand.NewPCG(uint64(n), uint64(m)))
	return randomCommutingFamily(rng, n, k, m, true)
}

func BenchmarkDiagonalize(b *testing.B) {
	for _, sz := range []struct{ n, k, m int }{{20, 20, 100}, {50, 25, 1000}, {50, 50, 1000}, {100, 100, 1000}} {
		fam := benchFamily(sz.n, sz.k, sz.m)
		b.Run(fmt.Sprintf("qubits=%d/rank=%d/members=%d", sz.n, sz.k, sz.m), func(b *testing.B) {
			b.ReportAllocs()
			var d *Diagonalization
			for b.Loop() {
				var err error
				d, err = Diagonalize(fam)
				if err != nil {
					b.Fatal(err)
				}
			}
			c := d.Circuit()
			b.ReportMetric(float64(c.Len()), "gates")
			b.ReportMetric(float64(c.TwoQubitGates()), "2q-gates")
			b.ReportMetric(float64(c.Depth()), "depth")
		})
	}
}

// BenchmarkConjugate measures strings conjugated per second through a
// circuit of the given length, gate by gate and through a tableau built once.
func BenchmarkConjugate(b *testing.B) {
	for _, sz := range []struct{ n, gates int }{{20, 100}, {50, 1000}, {100, 1000}} {
		rng := rand.New(rand.NewPCG(1, uint64(sz.n)))
		c := randomCircuit(rng, sz.n, sz.gates)
		tab := c.toTableau()
		ps := make([]String, 256)
		for i := range ps {
			ps[i] = randomString(rng, sz.n)
		}
		name := fmt.Sprintf("qubits=%d/gates=%d", sz.n, sz.gates)
		b.Run("circuit/"+name, func(b *testing.B) {
			b.ReportAllocs()
			i := 0
			for b.Loop() {
				c.Conjugate(ps[i&255])
				i++
			}
		})
		b.Run("tableau/"+name, func(b *testing.B) {
			b.ReportAllocs()
			i := 0
			for b.Loop() {
				tab.Conjugate(ps[i&255])
				i++
			}
		})
		b.Run("tableau-build/"+name, func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				c.toTableau()
			}
		})
	}
}

func BenchmarkDiagonalizationSample(b *testing.B) {
	fam := benchFamily(50, 50, 1000)
	d, err := Diagonalize(fam)
	if err != nil {
		b.Fatal(err)
	}
	out := NewBits(50)
	out[0] = 0x2f0a_1c3b_55aa
	b.Run("qubits=50/members=1000", func(b *testing.B) {
		b.ReportAllocs()
		s := 0
		for b.Loop() {
			for i := range d.Len() {
				s += d.Sample(i, out)
			}
		}
		_ = s
	})
}

// BenchmarkDiagonalizationCovered finds, among terms random strings, those
// one entangled setting measures.
func BenchmarkDiagonalizationCovered(b *testing.B) {
	for _, sz := range []struct{ n, terms int }{{20, 10000}, {50, 100000}} {
		rng := rand.New(rand.NewPCG(3, uint64(sz.n)))
		d, err := Diagonalize(randomCommutingFamily(rng, sz.n, sz.n/2, 100, true))
		if err != nil {
			b.Fatal(err)
		}
		tab := NewTable(sz.n, sz.terms)
		for range sz.terms {
			tab.Append(randomString(rng, sz.n))
		}
		dst := make([]int, 0, sz.terms)
		b.Run(fmt.Sprintf("qubits=%d/terms=%d", sz.n, sz.terms), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				dst = d.Covered(dst[:0], tab)
			}
		})
	}
}

// BenchmarkSettingSamples reads the rows an entangled setting covers
// (products of two family members) from one outcome, as an estimator does
// per shot.
func BenchmarkSettingSamples(b *testing.B) {
	for _, sz := range []struct{ n, terms int }{{20, 1000}, {50, 10000}} {
		rng := rand.New(rand.NewPCG(5, uint64(sz.n)))
		fam := randomCommutingFamily(rng, sz.n, sz.n/2, 100, true)
		s, err := NewFamilySetting(fam)
		if err != nil || s.IsLocal() {
			b.Fatalf("NewFamilySetting: %v, local %v", err, s.IsLocal())
		}
		tab := NewTable(sz.n, sz.terms)
		for range sz.terms {
			p, _ := Mul(fam[rng.IntN(len(fam))], fam[rng.IntN(len(fam))])
			tab.Append(p)
		}
		rows := tab.Covered(nil, s)
		out := make([]int8, len(rows))
		bits := genBits(rng, sz.n)
		b.Run(fmt.Sprintf("qubits=%d/rows=%d", sz.n, len(rows)), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				tab.SettingSamples(out, rows, s, bits)
			}
		})
	}
}
