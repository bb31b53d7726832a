package allocate_test

import (
	"cmp"
	"fmt"
	"github.com/shotplan/shotplan/internal/cputime"
	"math"
	"slices"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/hamiltonian"
	mol "github.com/shotplan/shotplan/hamiltonian/molecule"
	"github.com/shotplan/shotplan/internal/benchmol"
	"github.com/shotplan/shotplan/pauli"
)

// The molecular fixtures of the allocation benchmarks are those of
// internal/benchmol: 10 orbitals give 20 qubits and 14 250 terms, 25
// orbitals 50 qubits and 571 875 terms. Each is built once per process,
// outside the timing.

// benchMoleculeOrbitals are the fixture sizes in spatial orbitals.
var benchMoleculeOrbitals = benchmol.Orbitals

// moleculeFixture returns the qubit Hamiltonian of the random integrals over
// the given number of orbitals (seed 1), built on first use and cached.
func moleculeFixture(tb testing.TB, orbitals int) *hamiltonian.Hamiltonian {
	tb.Helper()
	h, err := benchmol.Hamiltonian(orbitals)
	if err != nil {
		tb.Fatal(err)
	}
	return h
}

// benchIntegrals draws the integrals of the fixtures with another seed.
func benchIntegrals(orbitals int, seed uint64) (*mol.Integrals, error) {
	return benchmol.Integrals(orbitals, seed)
}

// benchMoleculePlan runs a fresh strategy from mk to plan settings shots on
// the molecular fixtures of the given orbitals (all of them if none),
// reporting CPU time as benchPlan does. A fixture is built only when a
// sub-benchmark needs it.
func benchMoleculePlan(b *testing.B, mk func() allocate.Allocator, settings int, orbitals ...int) {
	if len(orbitals) == 0 {
		orbitals = benchMoleculeOrbitals
	}
	if testing.Short() {
		orbitals, settings = benchMoleculeOrbitals[:1], smoke(settings, 10)
	}
	for _, o := range orbitals {
		b.Run(fmt.Sprintf("molecule/qubits=%d/terms=%d/settings=%d", 2*o, benchmol.Terms(o), settings), func(b *testing.B) {
			h := moleculeFixture(b, o)
			b.ReportAllocs()
			start := cputime.Now()
			for b.Loop() {
				if _, err := allocate.Run(h, settings, mk(), nil); err != nil {
					b.Fatal(err)
				}
			}
			cputime.Report(b, start)
		})
	}
}

// plainGreedy is greedy one-norm descent (MATH §5.1) written plainly: every
// round computes every term's weight, sorts all terms by it (ties by |h_i|
// descending, then term index) and walks the whole list word-wise, then
// tests every term against the setting. It is the reference the benchmarks
// compare [allocate.Greedy] with, and the baseline of its speed-up.
type plainGreedy struct {
	h     *hamiltonian.Hamiltonian
	n, w  int
	abs   []float64
	cnt   []int
	key   []float64
	order []int
	x, z  []uint64 // term i at i·w
}

func (g *plainGreedy) String() string { return "plain-greedy" }

func (g *plainGreedy) Init(h *hamiltonian.Hamiltonian, budget int) error {
	m := h.Len()
	g.h, g.n, g.w = h, h.Qubits(), pauli.Words(h.Qubits())
	g.abs, g.cnt, g.key, g.order = make([]float64, m), make([]int, m), make([]float64, m), make([]int, m)
	g.x, g.z = make([]uint64, m*g.w), make([]uint64, m*g.w)
	for i := range m {
		g.abs[i] = math.Abs(h.Coeff(i))
		x, z := h.Table().Words(i)
		copy(g.x[i*g.w:], x)
		copy(g.z[i*g.w:], z)
	}
	return nil
}

func (g *plainGreedy) Next(dst []pauli.Letter) (int, error) {
	top := 0.0
	for _, a := range g.abs {
		top = max(top, a)
	}
	for i := range g.order {
		g.order[i] = i
		if c := float64(g.cnt[i]); c == 0 {
			g.key[i] = top + g.abs[i] // uncovered terms first, by |h_i|
		} else {
			g.key[i] = g.abs[i] * (1/math.Sqrt(c) - 1/math.Sqrt(c+1))
		}
	}
	slices.SortFunc(g.order, func(a, b int) int {
		if c := cmp.Compare(g.key[b], g.key[a]); c != 0 {
			return c
		}
		if c := cmp.Compare(g.abs[b], g.abs[a]); c != 0 {
			return c
		}
		return cmp.Compare(a, b)
	})
	w := g.w
	px, pz, fixed := make([]uint64, w), make([]uint64, w), make([]uint64, w)
	for _, i := range g.order {
		x, z := g.x[i*w:(i+1)*w], g.z[i*w:(i+1)*w]
		ok, grow := true, false
		for k := range w {
			s := x[k] | z[k]
			if ((x[k]^px[k])|(z[k]^pz[k]))&s&fixed[k] != 0 {
				ok = false
			}
			if s&^fixed[k] != 0 {
				grow = true
			}
		}
		if ok && grow {
			for k := range w {
				px[k] |= x[k]
				pz[k] |= z[k]
				fixed[k] |= x[k] | z[k]
			}
		}
	}
	for q := range dst {
		if fixed[q>>6]>>(q&63)&1 == 0 {
			pz[q>>6] |= 1 << (q & 63) // free qubits get Z
		}
		b := px[q>>6]>>(q&63)&1 | (pz[q>>6]>>(q&63)&1)<<1
		dst[q] = [4]pauli.Letter{pauli.I, pauli.X, pauli.Z, pauli.Y}[b]
	}
	for i := range g.cnt {
		x, z := g.x[i*w:(i+1)*w], g.z[i*w:(i+1)*w]
		var bad uint64
		for k := range w {
			bad |= ((x[k] ^ px[k]) | (z[k] ^ pz[k])) & (x[k] | z[k])
		}
		if bad == 0 {
			g.cnt[i]++
		}
	}
	return 1, nil
}

// Cover implements [allocate.Counter].
func (g *plainGreedy) Cover(dst []int) { copy(dst, g.cnt) }

// BenchmarkGreedyVsPlain plans with [allocate.Greedy] and with plainGreedy
// on a random 4-local Hamiltonian and on both molecular fixtures; fewer
// settings on the largest, where the plain version re-sorts 571 875 terms
// per setting.
func BenchmarkGreedyVsPlain(b *testing.B) {
	for _, mk := range []func() allocate.Allocator{
		func() allocate.Allocator { return &allocate.Greedy{} },
		func() allocate.Allocator { return &plainGreedy{} },
	} {
		b.Run(allocate.Name(mk()), func(b *testing.B) {
			benchPlan(b, mk, benchSize{50, 100_000, 1000})
			benchMoleculePlan(b, mk, 1000, 10)
			benchMoleculePlan(b, mk, 100, 25)
		})
	}
}
