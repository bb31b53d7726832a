package fermion

import (
	"fmt"
	"math"
	"slices"
	"testing"

	"github.com/shotplan/shotplan/hamiltonian"
)

func groundEnergy(t *testing.T, m Hubbard, enc Encoding) float64 {
	t.Helper()
	o, err := m.Operator()
	if err != nil {
		t.Fatal(err)
	}
	h, err := o.QubitHamiltonian(enc)
	if err != nil {
		t.Fatal(err)
	}
	gs, err := hamiltonian.GroundState(h, nil)
	if err != nil {
		t.Fatal(err)
	}
	return gs.Energy
}

// TestHubbardDimer checks the two-site Hubbard model at half filling against
// the closed form E0 = U/2 − sqrt((U/2)² + 4t²) for two electrons with
// S_z = 0 (Carrascal, Ferrer, Smith & Burke, arXiv:1502.02194; quoted in
// REFERENCE_VALUES.md), to 1e-9.
//
// The electron number is fixed with the chemical potential μ = U/2, the
// particle–hole symmetric point: the lowest eigenvalue over the whole Fock
// space of H − μN is then in the N = 2 sector (N = 0 and 4 give 0, N = 1 and
// 3 give −t − U/2, N = 2 gives E0 − U, lower since sqrt((U/2)² + 4t²) > t),
// so E0 = λ_min + 2μ.
func TestHubbardDimer(t *testing.T) {
	const tol = 1e-9
	for _, u := range []float64{2, 4, 8} {
		want := u/2 - math.Sqrt(u*u/4+4)
		for _, enc := range []Encoding{JordanWigner, BravyiKitaev, Parity} {
			for _, order := range []SpinOrder{Interleaved, SpinBlocks} {
				m := Hubbard{Width: 2, Hopping: 1, Interaction: u, ChemicalPotential: u / 2, Order: order}
				got := groundEnergy(t, m, enc) + 2*m.ChemicalPotential
				if math.Abs(got-want) > tol {
					t.Errorf("dimer U=%v %s %s: E0 = %.12f, want %.12f (±%g)", u, enc, order, got, want, tol)
				}
			}
		}
	}
}

// freeGround returns the lowest energy over all fillings of a non-interacting
// tight-binding lattice, 2 Σ_{ε_k < 0} ε_k over the single-particle levels
// (the factor 2 for spin). Levels of an open side of L sites are
// −2t cos(πk/(L+1)), k = 1..L; of a periodic ring −2t cos(2πk/L), k = 0..L−1
// (tight-binding band, common practice; e.g. Ashcroft & Mermin ch. 10).
func freeGround(t float64, sides [2]int, periodic [2]bool) float64 {
	levels := func(l int, p bool) []float64 {
		var e []float64
		for k := range l {
			switch {
			case l == 1:
				e = append(e, 0)
			case p && l >= 3:
				e = append(e, -2*t*math.Cos(2*math.Pi*float64(k)/float64(l)))
			default:
				e = append(e, -2*t*math.Cos(math.Pi*float64(k+1)/float64(l+1)))
			}
		}
		return e
	}
	ex, ey := levels(sides[0], periodic[0]), levels(sides[1], periodic[1])
	s := 0.0
	for _, a := range ex {
		for _, b := range ey {
			if a+b < -1e-12 {
				s += 2 * (a + b)
			}
		}
	}
	return s
}

// TestHubbardFree checks chains and rectangles with U = 0 against the
// tight-binding levels, to 1e-8.
func TestHubbardFree(t *testing.T) {
	const tol = 1e-8
	tests := []struct {
		w, h     int
		px, py   bool
		encoding Encoding
	}{
		{4, 1, false, false, JordanWigner},
		{4, 1, true, false, BravyiKitaev},
		{6, 1, true, false, Parity},
		{5, 1, false, false, BravyiKitaev},
		{3, 2, false, false, JordanWigner},
		{3, 2, true, false, BravyiKitaev},
		{2, 3, false, true, Parity},
	}
	for _, tc := range tests {
		name := fmt.Sprintf("%dx%d periodic=%v,%v %s", tc.w, tc.h, tc.px, tc.py, tc.encoding)
		m := Hubbard{Width: tc.w, Height: tc.h, PeriodicX: tc.px, PeriodicY: tc.py, Hopping: 1}
		got := groundEnergy(t, m, tc.encoding)
		want := freeGround(1, [2]int{tc.w, max(tc.h, 1)}, [2]bool{tc.px, tc.py})
		if math.Abs(got-want) > tol {
			t.Errorf("%s: lowest eigenvalue %.10f, want %.10f (±%g)", name, got, want, tol)
		}
	}
}

// TestHubbardAtomic checks the atomic limit t = 0: each site is empty (0),
// singly occupied (−μ) or doubly occupied (U − 2μ), so the lowest energy is
// sites·min(0, −μ, U − 2μ) (common practice).
func TestHubbardAtomic(t *testing.T) {
	for _, c := range []struct{ u, mu float64 }{{4, 1}, {4, 3}, {1, -1}} {
		m := Hubbard{Width: 2, Height: 2, Interaction: c.u, ChemicalPotential: c.mu}
		want := 4 * min(0, -c.mu, c.u-2*c.mu)
		if got := groundEnergy(t, m, JordanWigner); math.Abs(got-want) > 1e-9 {
			t.Errorf("atomic limit U=%v μ=%v: %v, want %v", c.u, c.mu, got, want)
		}
	}
}

// TestHubbardBonds counts hopping terms: each bond gives 4 terms (two spins,
// both directions). A side of 2 sites gets no extra wrap bond.
func TestHubbardBonds(t *testing.T) {
	tests := []struct {
		m     Hubbard
		bonds int
	}{
		{Hubbard{Width: 4}, 3},
		{Hubbard{Width: 4, PeriodicX: true}, 4},
		{Hubbard{Width: 2, PeriodicX: true}, 1},
		{Hubbard{Width: 2, Height: 2, PeriodicX: true, PeriodicY: true}, 4},
		{Hubbard{Width: 3, Height: 3, PeriodicX: true, PeriodicY: true}, 18},
		{Hubbard{Width: 3, Height: 2}, 7},
	}
	for _, tc := range tests {
		tc.m.Hopping = 1
		o, err := tc.m.Operator()
		if err != nil {
			t.Fatal(err)
		}
		if o.Len() != 4*tc.bonds {
			t.Errorf("%+v: %d hopping terms, want %d", tc.m, o.Len(), 4*tc.bonds)
		}
		if !o.IsHermitian(0) {
			t.Errorf("%+v: operator is not Hermitian", tc.m)
		}
	}
	for _, bad := range []Hubbard{{Width: 0}, {Width: 2, Height: -1}, {Width: 2, Order: 7}} {
		if _, err := bad.Operator(); err == nil {
			t.Errorf("%+v.Operator() succeeded, want an error", bad)
		}
	}
}

// TestSpinOrderModes checks the documented numbering.
func TestSpinOrderModes(t *testing.T) {
	var inter, blocks []int
	for p := range 3 {
		for _, s := range []Spin{Up, Down} {
			inter = append(inter, Interleaved.Mode(p, s, 3))
			blocks = append(blocks, SpinBlocks.Mode(p, s, 3))
		}
	}
	if want := []int{0, 1, 2, 3, 4, 5}; !slices.Equal(inter, want) {
		t.Errorf("Interleaved modes = %v, want %v", inter, want)
	}
	if want := []int{0, 3, 1, 4, 2, 5}; !slices.Equal(blocks, want) {
		t.Errorf("SpinBlocks modes = %v, want %v", blocks, want)
	}
}
