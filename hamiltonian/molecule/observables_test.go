package molecule

import (
	"math"
	"math/bits"
	"math/rand/v2"
	"testing"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/hamiltonian/fermion"
)

func qubitObservables(t *testing.T, g *Integrals, enc fermion.Encoding) map[Observable]*hamiltonian.Hamiltonian {
	t.Helper()
	out := map[Observable]*hamiltonian.Hamiltonian{}
	for _, o := range Observables {
		h, err := g.QubitObservable(o, enc)
		if err != nil {
			t.Fatalf("%v: %v", o, err)
		}
		out[o] = h
	}
	return out
}

// TestObservablesSectorGroundState checks the observables on the exact
// ground state of H2 and LiH in the sector of their FCIDUMP's NELEC and MS2:
// ⟨N⟩ = NELEC, ⟨S_z⟩ = MS2/2, and ⟨S²⟩ = S(S+1) = 0 for these closed-shell
// singlet ground states (textbook: Szabo & Ostlund, Modern Quantum
// Chemistry, §2.4, eigenvalues of S² are S(S+1); the singlet ground states of
// H2 and LiH at equilibrium are common practice). Then the lowest state of
// H2 with both electrons α is a triplet component: ⟨S_z⟩ = 1, ⟨S²⟩ = 2.
//
// Tolerance: N and S_z are diagonal and constant on a sector, so they are
// exact up to rounding (1e-9). For S² the state error is at most
// residual/gap (Davis–Kahan); the residual is below 1e-10·(|h_0|+‖h‖₁)
// (< 1e-8 for these molecules) and the gap above the ground state above
// 0.1 hartree (from memory, loose), so ‖δψ‖ ≤ 1e-7; with
// ‖S²‖ = S_max(S_max+1) ≤ orbitals² (S_max = orbitals/2) the error of ⟨S²⟩
// is at most 2·orbitals²·1e-7.
func TestObservablesSectorGroundState(t *testing.T) {
	for _, name := range []string{"h2_sto3g_0.74A", "lih_sto3g_1.5949A"} {
		g := readMolecule(t, name)
		h, err := g.QubitHamiltonian(fermion.JordanWigner)
		if err != nil {
			t.Fatal(err)
		}
		obs := qubitObservables(t, g, fermion.JordanWigner)
		check := func(label string, electrons, spinTwice int, wantS2 float64) {
			sec, err := hamiltonian.ElectronSector(h.Qubits(), electrons, spinTwice)
			if err != nil {
				t.Fatal(err)
			}
			gs, err := hamiltonian.GroundState(h, &hamiltonian.EigenOptions{Sector: &sec})
			if err != nil {
				t.Fatal(err)
			}
			bound := 2 * float64(g.Orbitals()*g.Orbitals()) * 1e-7
			for _, c := range []struct {
				o    Observable
				want float64
				tol  float64
			}{
				{Number, float64(electrons), 1e-9},
				{SpinZ, float64(spinTwice) / 2, 1e-9},
				{SpinSquared, wantS2, bound},
			} {
				got := obs[c.o].Energy(gs.State)
				if math.Abs(got-c.want) > c.tol {
					t.Errorf("%s %s: ⟨%v⟩ = %.12g, want %g (±%.2g)", name, label, c.o, got, c.want, c.tol)
				}
			}
		}
		check("ground state", g.Electrons, g.SpinTwice, 0)
		if name == "h2_sto3g_0.74A" {
			check("triplet (both α)", 2, 2, 2)
		}
	}
}

// TestObservablesDeterminants checks every Slater determinant of 3 spatial
// orbitals (Jordan–Wigner, interleaved: basis state a occupies spin orbital
// q when bit q is set) against the textbook expectation value of S² for a
// determinant of restricted orbitals,
//
//	⟨S²⟩ = S_z(S_z+1) + N_β − (number of doubly occupied orbitals)
//
// (Szabo & Ostlund, Modern Quantum Chemistry, Eq. 2.271 with orthonormal
// spatial orbitals; from memory), N = number of occupied spin orbitals and
// S_z = (N_α − N_β)/2. The determinants are eigenstates of N and S_z.
func TestObservablesDeterminants(t *testing.T) {
	const norb = 3
	g, err := New(norb)
	if err != nil {
		t.Fatal(err)
	}
	obs := qubitObservables(t, g, fermion.JordanWigner)
	var alpha uint64
	for p := range norb {
		alpha |= 1 << (2 * p)
	}
	psi := make([]complex128, 1<<(2*norb))
	for a := range psi {
		clear(psi)
		psi[a] = 1
		u := uint64(a)
		na, nb := bits.OnesCount64(u&alpha), bits.OnesCount64(u&^alpha)
		double := bits.OnesCount64(u & alpha & (u >> 1))
		sz := float64(na-nb) / 2
		want := map[Observable]float64{
			Number:      float64(na + nb),
			SpinZ:       sz,
			SpinSquared: sz*(sz+1) + float64(nb) - float64(double),
		}
		for o, w := range want {
			if got := obs[o].Energy(psi); math.Abs(got-w) > 1e-12 {
				t.Errorf("determinant %06b: ⟨%v⟩ = %g, want %g", a, o, got, w)
			}
		}
	}
}

// TestObservablesEncodings checks the spectra of the observables on 2
// orbitals (4 qubits) under every encoding, which are unitarily equivalent:
// the Fock space of 4 spin orbitals holds 5 singlet states, 4 doublets
// (8 states) and 1 triplet (3 states) (addition of angular momenta, textbook;
// counted by hand: N=0,4 one singlet each; N=1,3 two doublets each; N=2
// three singlets and one triplet), so S² has eigenvalues 0, ¾, 2 with
// multiplicities 5, 8, 3. N has eigenvalues 0..4 with multiplicities
// C(4,k). Checked through the minimal polynomials on random vectors and the
// normalised traces tr(O)/16 (the offset) and tr(O²)/16 (offset² + Σc_i²).
func TestObservablesEncodings(t *testing.T) {
	g, err := New(2)
	if err != nil {
		t.Fatal(err)
	}
	spectra := map[Observable]map[float64]int{
		Number:      {0: 1, 1: 4, 2: 6, 3: 4, 4: 1},
		SpinZ:       {-1: 1, -0.5: 4, 0: 6, 0.5: 4, 1: 1},
		SpinSquared: {0: 5, 0.75: 8, 2: 3},
	}
	rng := rand.New(rand.NewPCG(1, 2))
	for _, enc := range []fermion.Encoding{fermion.JordanWigner, fermion.BravyiKitaev, fermion.Parity} {
		obs := qubitObservables(t, g, enc)
		for o, spec := range spectra {
			h := obs[o]
			var tr1, tr2 float64
			for v, m := range spec {
				tr1 += v * float64(m) / 16
				tr2 += v * v * float64(m) / 16
			}
			sq := h.Offset() * h.Offset()
			for _, c := range h.Coeffs() {
				sq += c * c
			}
			if math.Abs(h.Offset()-tr1) > 1e-12 || math.Abs(sq-tr2) > 1e-12 {
				t.Errorf("%v %v: tr/16 = %g, tr²/16 = %g, want %g, %g", enc, o, h.Offset(), sq, tr1, tr2)
			}
			v := make([]complex128, 16)
			for i := range v {
				v[i] = complex(rng.NormFloat64(), rng.NormFloat64())
			}
			w := make([]complex128, 16)
			for ev := range spec {
				h.Apply(w, v)
				for i := range w {
					w[i] -= complex(ev, 0) * v[i]
				}
				v, w = w, v
			}
			for i, x := range v {
				if math.Hypot(real(x), imag(x)) > 1e-9 {
					t.Errorf("%v %v: minimal polynomial leaves %v at %d", enc, o, x, i)
					break
				}
			}
		}
	}
}

// TestParseObservable checks the names round-trip and bad names fail.
func TestParseObservable(t *testing.T) {
	for _, o := range Observables {
		got, err := ParseObservable(o.String())
		if err != nil || got != o {
			t.Errorf("ParseObservable(%q) = %v, %v", o.String(), got, err)
		}
	}
	if _, err := ParseObservable("energy"); err == nil {
		t.Error("ParseObservable(energy): no error")
	}
	if _, err := Observable(7).Operator(2, fermion.Interleaved); err == nil {
		t.Error("undefined observable: no error")
	}
	if _, err := Number.Operator(0, fermion.Interleaved); err == nil {
		t.Error("0 orbitals: no error")
	}
}
