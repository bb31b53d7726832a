package hamiltonian

import (
	"math"
	"math/bits"
	"runtime"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// TestSectorHeisenbergMatchesDenseBlock restricts the Heisenberg ring
// Σ (XX+YY+ZZ), which conserves the number of ones (total S_z), to every
// count on 10 qubits and compares with the lowest eigenvalue of the same
// block of the dense matrix (Matrix, rows picked by counting ones, gonum's
// EigenSym; the matrix is real). Tolerance: the residual tolerance 1e-9.
func TestSectorHeisenbergMatchesDenseBlock(t *testing.T) {
	const n = 10
	h, err := Heisenberg(Ring(n), 1)
	if err != nil {
		t.Fatal(err)
	}
	m, err := h.Matrix()
	if err != nil {
		t.Fatal(err)
	}
	for k := 0; k <= n; k++ {
		sec := Sector{Mask: 1<<n - 1, Ones: k}
		var rows []int
		for a := range 1 << n {
			if bits.OnesCount(uint(a)) == k {
				rows = append(rows, a)
			}
		}
		if int64(len(rows)) != sec.Dim(n) {
			t.Fatalf("k=%d: %d rows, Dim %d", k, len(rows), sec.Dim(n))
		}
		block := mat.NewSymDense(len(rows), nil)
		for i, a := range rows {
			for j, b := range rows {
				block.SetSym(i, j, real(m.At(a, b)))
			}
		}
		var eig mat.EigenSym
		if !eig.Factorize(block, false) {
			t.Fatal("EigenSym failed")
		}
		want := math.Inf(1)
		for _, v := range eig.Values(nil) {
			want = min(want, v)
		}
		gs, err := GroundState(h, &EigenOptions{Sector: &sec, Tolerance: 1e-9})
		if err != nil {
			t.Fatalf("k=%d: %v", k, err)
		}
		if math.Abs(gs.Energy-want) > 1e-9 {
			t.Errorf("%d ones: sector ground state %.12f, dense block %.12f", k, gs.Energy, want)
		}
	}
}

// TestSectorRefusesNonConserving: a transverse field changes the number of
// ones, so no count sector may be used.
func TestSectorRefusesNonConserving(t *testing.T) {
	h, err := Ising(Ring(6), 1, []float64{0.5, 0.5, 0.5, 0.5, 0.5, 0.5}, nil)
	if err != nil {
		t.Fatal(err)
	}
	sec := Sector{Mask: 1<<6 - 1, Ones: 3}
	if _, err := GroundState(h, &EigenOptions{Sector: &sec}); err == nil || !strings.Contains(err.Error(), "does not conserve") {
		t.Errorf("error %v, want a refusal", err)
	}
}

// TestElectronSector checks the sector of NELEC and MS2 on interleaved spin
// orbitals and its dimension C(k, nα)·C(k, nβ) (common practice).
func TestElectronSector(t *testing.T) {
	s, err := ElectronSector(12, 5, 1)
	if err != nil {
		t.Fatal(err)
	}
	if s.Mask != 0x555 || s.Ones != 3 || s.Rest != 2 {
		t.Errorf("ElectronSector(12, 5, 1) = %+v, want mask 0x555, 3 α, 2 β", s)
	}
	if d := s.Dim(12); d != 20*15 {
		t.Errorf("Dim = %d, want C(6,3)·C(6,2) = 300", d)
	}
	for _, c := range [][3]int{{11, 2, 0}, {12, 13, 1}, {12, 4, 1}, {12, 2, 4}, {12, 12, 2}, {-2, 0, 0}} {
		if _, err := ElectronSector(c[0], c[1], c[2]); err == nil {
			t.Errorf("ElectronSector%v: no error", c)
		}
	}
	if _, err := GroundState(mustRing(t, 6), &EigenOptions{Sector: &Sector{Mask: 1 << 7, Ones: 1}}); err == nil {
		t.Error("sector mask beyond the qubits: no error")
	}
}

func mustRing(t *testing.T, n int) *Hamiltonian {
	t.Helper()
	h, err := Heisenberg(Ring(n), 1)
	if err != nil {
		t.Fatal(err)
	}
	return h
}

// TestGroundStateMemoryRefusal: below the memory the smallest Krylov space
// needs, GroundState refuses with its estimate instead of allocating.
func TestGroundStateMemoryRefusal(t *testing.T) {
	h := mustRing(t, 16)
	_, err := GroundState(h, &EigenOptions{MaxBytes: 1 << 20})
	if err == nil || !strings.Contains(err.Error(), "needs about") {
		t.Errorf("error %v, want a refusal with the estimate", err)
	}
}

// TestGroundStateIndependentOfThreads runs the same number of Lanczos steps
// on 16 qubits (65 536 amplitudes, above the length where work is split)
// with 1, 2 and 3 goroutines, in the whole space and in a sector, and wants
// bit-identical energies and states: every sum runs in a fixed order.
func TestGroundStateIndependentOfThreads(t *testing.T) {
	h := mustRing(t, 16)
	for _, sec := range []*Sector{nil, {Mask: 0xffff, Ones: 8}} {
		var first Eigenpair
		for i, procs := range []int{1, 2, 3} {
			old := runtime.GOMAXPROCS(procs)
			gs, _ := GroundState(h, &EigenOptions{MaxApply: 30, Sector: sec})
			runtime.GOMAXPROCS(old)
			if len(gs.State) == 0 {
				t.Fatal("no state")
			}
			if i == 0 {
				first = gs
				continue
			}
			if math.Float64bits(gs.Energy) != math.Float64bits(first.Energy) {
				t.Errorf("sector %v: GOMAXPROCS=%d energy %v, GOMAXPROCS=1 %v", sec, procs, gs.Energy, first.Energy)
			}
			for a := range gs.State {
				if gs.State[a] != first.State[a] {
					t.Errorf("sector %v: GOMAXPROCS=%d: amplitude %d differs", sec, procs, a)
					break
				}
			}
		}
	}
}
