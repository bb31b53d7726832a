package estimate

import (
	"fmt"
	"math/rand/v2"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/internal/benchmol"
	"github.com/shotplan/shotplan/internal/cputime"
	"github.com/shotplan/shotplan/pauli"
)

// moleculePlan returns the plan of the named strategy (seed 1) for shots
// shots on the molecular fixture of the given orbitals (internal/benchmol).
func moleculePlan(b *testing.B, orbitals int, strategy string, shots int) (*hamiltonian.Hamiltonian, *allocate.Plan) {
	b.Helper()
	h, p, err := benchmol.Plan(orbitals, strategy, shots)
	if err != nil {
		b.Fatal(err)
	}
	return h, p
}

// BenchmarkGroupedMolecule estimates the energy (Grouped, and the same
// shots fed one by one to a Stream) from 10^5 shots of sorted insertion's
// and random's plans on the molecular fixtures (14 250 and 571 875 terms).
// The outcomes are uniformly random bits: the estimators' work does not
// depend on them (except the Stream's cache of shot values, which repeated
// outcomes would help; here they rarely repeat). Plans and records are made
// outside the timing.
func BenchmarkGroupedMolecule(b *testing.B) {
	shots, orbitals := smoke(100_000, 1000), benchmol.Orbitals
	if testing.Short() {
		orbitals = orbitals[:1]
	}
	for _, o := range orbitals {
		for _, strategy := range []string{"sorted", "random"} {
			name := fmt.Sprintf("molecule/qubits=%d/terms=%d/plan=%s/shots=%d", 2*o, benchmol.Terms(o), strategy, shots)
			var (
				h   *hamiltonian.Hamiltonian
				p   *allocate.Plan
				rec *Records
			)
			setup := func(b *testing.B) {
				if rec != nil {
					return
				}
				h, p = moleculePlan(b, o, strategy, shots)
				rng := rand.New(rand.NewPCG(uint64(o), 9))
				rec = NewRecords(h.Qubits())
				bits := pauli.NewBits(h.Qubits())
				for k, s := range p.Settings {
					for range p.Shots[k] {
						for w := range bits {
							bits[w] = rng.Uint64()
						}
						if r := h.Qubits() % 64; r != 0 {
							bits[len(bits)-1] &= 1<<r - 1
						}
						if err := rec.Add(s, bits); err != nil {
							b.Fatal(err)
						}
					}
				}
			}
			b.Run("grouped/"+name, func(b *testing.B) {
				setup(b)
				b.ReportAllocs()
				cpu := cputime.Now()
				for b.Loop() {
					if _, err := Grouped(h, rec, nil); err != nil {
						b.Fatal(err)
					}
				}
				cputime.Report(b, cpu)
			})
			b.Run("stream/"+name, func(b *testing.B) {
				setup(b)
				b.ReportAllocs()
				cpu := cputime.Now()
				for b.Loop() {
					st, err := NewStream(h, p.Settings, p.Shots, nil)
					if err != nil {
						b.Fatal(err)
					}
					for _, sh := range rec.Shots() {
						if err := st.Add(sh.Setting, sh.Outcome); err != nil {
							b.Fatal(err)
						}
					}
					if _, err := st.Result(); err != nil {
						b.Fatal(err)
					}
				}
				cputime.Report(b, cpu)
			})
		}
	}
}

// BenchmarkSimulatorMolecule simulates 10^5 shots of sorted insertion's,
// random's and sorted-gc's (entangled settings) plans on the 20-qubit
// molecular fixture (14 250 terms) in
// its Hartree–Fock determinant (10 electrons, S_z = 0), the state made
// outside the timing. The 50-qubit fixture is out of reach of a state
// vector (2^50 amplitudes; HartreeFockState refuses more than
// hamiltonian.MaxExactQubits qubits).
func BenchmarkSimulatorMolecule(b *testing.B) {
	const orbitals = 10
	shots := smoke(100_000, 1000)
	for _, strategy := range []string{"sorted", "random", "sorted-gc"} {
		b.Run(fmt.Sprintf("molecule/qubits=%d/terms=%d/plan=%s/shots=%d", 2*orbitals, benchmol.Terms(orbitals), strategy, shots), func(b *testing.B) {
			h, p := moleculePlan(b, orbitals, strategy, shots)
			psi, err := HartreeFockState(h.Qubits(), orbitals, 0)
			if err != nil {
				b.Fatal(err)
			}
			b.ReportMetric(float64(len(p.Settings)), "settings")
			b.ReportAllocs()
			cpu := cputime.Now()
			for b.Loop() {
				sim, err := NewSimulator(psi, 1, nil)
				if err != nil {
					b.Fatal(err)
				}
				if err := sim.Run(p.Settings, p.Shots, NewRecords(h.Qubits())); err != nil {
					b.Fatal(err)
				}
			}
			cputime.Report(b, cpu)
		})
	}
}
