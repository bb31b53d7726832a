package guarantee

import (
	"fmt"
	"math"
	"math/rand/v2"
	"sort"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/hamiltonian/fermion"
	"github.com/shotplan/shotplan/hamiltonian/hamiltoniantest"
	"github.com/shotplan/shotplan/pauli"
)

// anytimeSystem is a Hamiltonian with its exact ground state and energy.
type anytimeSystem struct {
	name     string
	molecule bool
	h        *hamiltonian.Hamiltonian
	state    []complex128
	energy   float64
}

// anytimeSystems returns the H2 and LiH (Jordan–Wigner, from the FCIDUMP
// hamiltonian/hamiltoniantest) and 10-qubit TFIM ground states.
// The systems are built once per test binary.
func anytimeSystems(t testing.TB) []anytimeSystem {
	t.Helper()
	if anytimeCache == nil {
		anytimeCache = buildAnytimeSystems(t)
	}
	return anytimeCache
}

var anytimeCache []anytimeSystem

func buildAnytimeSystems(t testing.TB) []anytimeSystem {
	t.Helper()
	var out []anytimeSystem
	for _, c := range []struct {
		name, file string
		fci        float64
	}{
		// Full-CI energies of the shared reference data (psi4 1.3.2;
		// hamiltonian/hamiltoniantest/README.md), equal to the lowest eigenvalue of
		// the qubit Hamiltonian over all electron numbers.
		{"H2 (JW)", hamiltoniantest.H2Alt, -1.1372701747},
		{"LiH (JW)", hamiltoniantest.LiH, -7.8824034103},
	} {
		h, err := hamiltoniantest.Molecule(c.file, fermion.JordanWigner)
		if err != nil {
			t.Fatal(err)
		}
		ev, err := hamiltonian.GroundState(h, nil)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(ev.Energy-c.fci) > 1e-8 {
			t.Fatalf("%s ground energy %.10f, want the full-CI %.10f (hamiltonian/hamiltoniantest)", c.name, ev.Energy, c.fci)
		}
		out = append(out, anytimeSystem{c.name, true, h, ev.State, ev.Energy})
	}
	// Transverse-field Ising ring, N = 10, J = h = 1: E0 = −2/sin(π/20)
	// (Pfeuty 1970; REFERENCE_VALUES.md).
	tfim, err := hamiltonian.TransverseFieldIsing(hamiltonian.Ring(10), 1, 1)
	if err != nil {
		t.Fatal(err)
	}
	ev, err := hamiltonian.GroundState(tfim, nil)
	if err != nil {
		t.Fatal(err)
	}
	if want := -2 / math.Sin(math.Pi/20); math.Abs(ev.Energy-want) > 1e-8 {
		t.Fatalf("TFIM ground energy %.12f, want −2/sin(π/20) = %.12f", ev.Energy, want)
	}
	out = append(out, anytimeSystem{"TFIM ring (10 qubits)", false, tfim, ev.State, ev.Energy})
	return out
}

// greedyIID returns the greedy plan of the given budget and its i.i.d.
// form.
func greedyIID(t testing.TB, h *hamiltonian.Hamiltonian, budget int) (*allocate.Plan, *IID) {
	t.Helper()
	p, err := allocate.Run(h, budget, &allocate.Greedy{}, nil)
	if err != nil {
		t.Fatal(err)
	}
	d, err := IIDOf(h, p)
	if err != nil {
		t.Fatal(err)
	}
	return p, d
}

// tableDevice is a fast estimate.Device for many repetitions: each
// distinct setting's Born distribution is computed once by the simulator
// and sampled by binary search.
type tableDevice struct {
	sim *estimate.Simulator
	n   int
	cum map[string][]float64
	rng *rand.Rand
}

func newTableDevice(t testing.TB, state []complex128, seed uint64) *tableDevice {
	t.Helper()
	sim, err := estimate.NewSimulator(state, 1, nil)
	if err != nil {
		t.Fatal(err)
	}
	return &tableDevice{sim: sim, n: sim.Qubits(), cum: make(map[string][]float64), rng: rand.New(rand.NewPCG(seed, 7))}
}

func (d *tableDevice) Run(settings []pauli.Setting, shots []int, rec *estimate.Records) error {
	if len(settings) != len(shots) {
		return fmt.Errorf("tableDevice: %d settings, %d counts", len(settings), len(shots))
	}
	for k, s := range settings {
		cum, ok := d.cum[s.Key()]
		if !ok {
			cum = d.sim.Probabilities(nil, s)
			for j := 1; j < len(cum); j++ {
				cum[j] += cum[j-1]
			}
			d.cum[s.Key()] = cum
		}
		b := pauli.NewBits(d.n)
		for range shots[k] {
			u := d.rng.Float64() * cum[len(cum)-1]
			a := min(sort.SearchFloat64s(cum, u), len(cum)-1)
			for a < len(cum)-1 && cum[a] <= u {
				a++
			}
			b[0] = uint64(a)
			if err := rec.Add(s, b); err != nil {
				return err
			}
		}
	}
	return nil
}

// exactMoments returns ⟨P_i⟩ and ⟨P_i P_k⟩ of a state. For commuting P_i,
// P_k the product is ±C with C a Pauli string (its phase is real), and the
// sign is kept: generally commuting terms such as XX and YY have
// XX·YY = −ZZ.
func exactMoments(h *hamiltonian.Hamiltonian, psi []complex128) (func(i int) float64, func(i, k int) float64) {
	means := make([]float64, h.Len())
	for i := range means {
		means[i] = hamiltonian.Expectation(psi, h.Pauli(i))
	}
	cache := make(map[[2]int]float64)
	return func(i int) float64 { return means[i] }, func(i, k int) float64 {
		if v, ok := cache[[2]int{i, k}]; ok {
			return v
		}
		p, ph := pauli.Mul(h.Pauli(i), h.Pauli(k))
		v := real(ph.Complex()) * hamiltonian.Expectation(psi, p)
		cache[[2]int{i, k}] = v
		return v
	}
}
