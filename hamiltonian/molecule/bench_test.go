package molecule_test

import (
	"bytes"
	"fmt"
	"testing"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/hamiltonian/fermion"
	"github.com/shotplan/shotplan/hamiltonian/molecule"
	"github.com/shotplan/shotplan/internal/benchmol"
	"github.com/shotplan/shotplan/internal/cputime"
)

// randomIntegrals returns the seeded random integrals of internal/benchmol
// (the symmetries of real orbitals, every value non-zero), a stand-in for
// a molecule of the given size; the allocation, certificate and estimation
// benchmarks use the same ones.
func randomIntegrals(tb testing.TB, orbitals int, seed uint64) *molecule.Integrals {
	tb.Helper()
	g, err := benchmol.Integrals(orbitals, seed)
	if err != nil {
		tb.Fatal(err)
	}
	return g
}

var benchOrbitals = benchmol.Orbitals

// benchSizes returns benchOrbitals, or under -short only the smallest: with
// -short, `go test -short -run '^$' -bench . -benchtime 1x` runs every
// benchmark once on small sizes, as CI does, so that a benchmark that no
// longer runs is caught.
func benchSizes() []int {
	if testing.Short() {
		return benchOrbitals[:1]
	}
	return benchOrbitals
}

// BenchmarkQubitHamiltonian maps the electronic Hamiltonian of random
// integrals, built beforehand as a fermion operator (about 1.5·10^6
// two-electron products at 50 spin orbitals), to a qubit Hamiltonian.
func BenchmarkQubitHamiltonian(b *testing.B) {
	for _, orbitals := range benchSizes() {
		o := randomIntegrals(b, orbitals, 1).FermionOperator(fermion.Interleaved)
		for _, enc := range []fermion.Encoding{fermion.JordanWigner, fermion.BravyiKitaev, fermion.Parity} {
			b.Run(fmt.Sprintf("modes=%d/products=%d/enc=%s", 2*orbitals, o.Len(), enc), func(b *testing.B) {
				b.ReportAllocs()
				terms := 0
				for b.Loop() {
					h, err := o.QubitHamiltonian(enc)
					if err != nil {
						b.Fatal(err)
					}
					terms = h.Len()
				}
				b.ReportMetric(float64(terms), "pauli-terms")
			})
		}
	}
}

// BenchmarkFermionOperator builds the fermion operator from the integrals.
func BenchmarkFermionOperator(b *testing.B) {
	for _, orbitals := range benchSizes() {
		g := randomIntegrals(b, orbitals, 1)
		b.Run(fmt.Sprintf("modes=%d", 2*orbitals), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				g.FermionOperator(fermion.Interleaved)
			}
		})
	}
}

// BenchmarkReadFCIDUMP parses the FCIDUMP text of random integrals, written
// beforehand by WriteFCIDUMP.
func BenchmarkReadFCIDUMP(b *testing.B) {
	for _, orbitals := range benchSizes() {
		var buf bytes.Buffer
		if err := molecule.WriteFCIDUMP(&buf, randomIntegrals(b, orbitals, 1)); err != nil {
			b.Fatal(err)
		}
		lines := bytes.Count(buf.Bytes(), []byte("\n"))
		b.Run(fmt.Sprintf("orbitals=%d/lines=%d", orbitals, lines), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				if _, err := molecule.ReadFCIDUMP(bytes.NewReader(buf.Bytes())); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

// BenchmarkSectorGroundState finds ground states in the sector of NELEC
// electrons with S_z = 0: the linear H12 chain of testdata (STO-3G, 12
// orbitals, 24 qubits, 853 776 determinants; integrals from psi4) and seeded
// random integrals on 10 and 12 orbitals (20 and 24 qubits, half filling),
// whose off-diagonal elements are as large as the diagonal ones, the slow
// case for the diagonal preconditioner. Under -short (see benchSizes) only random10.
func BenchmarkSectorGroundState(b *testing.B) {
	h12, err := molecule.ReadFCIDUMPFile("testdata/h12_sto3g_1.0A.fcidump")
	if err != nil {
		b.Fatal(err)
	}
	cases := []struct {
		name string
		g    func() *molecule.Integrals
		el   int
	}{
		{"h12", func() *molecule.Integrals { return h12 }, 12},
		{"random10", func() *molecule.Integrals { return randomIntegrals(b, 10, 1) }, 10},
		{"random12", func() *molecule.Integrals { return randomIntegrals(b, 12, 1) }, 12},
	}
	if testing.Short() {
		cases = cases[1:2] // the 20-qubit random case only
	}
	for _, c := range cases {
		g := c.g()
		h, err := g.QubitHamiltonian(fermion.JordanWigner)
		if err != nil {
			b.Fatal(err)
		}
		sec, err := hamiltonian.ElectronSector(h.Qubits(), c.el, 0)
		if err != nil {
			b.Fatal(err)
		}
		b.Run(fmt.Sprintf("molecule=%s/qubits=%d/terms=%d/dim=%d", c.name, h.Qubits(), h.Len(), sec.Dim(h.Qubits())), func(b *testing.B) {
			b.ReportAllocs()
			products := 0
			start := cputime.Now()
			for b.Loop() {
				gs, err := hamiltonian.GroundState(h, &hamiltonian.EigenOptions{Sector: &sec})
				if err != nil {
					b.Fatal(err)
				}
				products = gs.Products
			}
			cputime.Report(b, start)
			b.ReportMetric(float64(products), "products")
		})
	}
}
