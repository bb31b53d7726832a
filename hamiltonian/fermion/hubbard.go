package fermion

import "fmt"

// Spin labels the two spin states of a spatial orbital or lattice site.
type Spin int

// The two spin states; they are also called α and β.
const (
	Up   Spin = 0
	Down Spin = 1
)

// SpinOrder decides how spin orbitals are numbered as modes. The zero value
// is [Interleaved].
type SpinOrder int

const (
	// Interleaved numbers orbital p with spin σ as mode 2p+σ: 0↑, 0↓, 1↑, 1↓, ...
	Interleaved SpinOrder = iota
	// SpinBlocks numbers all spin-up orbitals first, then all spin-down:
	// orbital p with spin σ is mode p + σ·orbitals.
	SpinBlocks
)

// String returns "interleaved" or "blocks".
func (s SpinOrder) String() string {
	switch s {
	case Interleaved:
		return "interleaved"
	case SpinBlocks:
		return "blocks"
	}
	return fmt.Sprintf("SpinOrder(%d)", int(s))
}

// Mode returns the mode number of orbital p with spin σ among the given
// number of spatial orbitals. It panics if the order is not defined.
func (s SpinOrder) Mode(p int, sigma Spin, orbitals int) int {
	switch s {
	case Interleaved:
		return 2*p + int(sigma)
	case SpinBlocks:
		return p + int(sigma)*orbitals
	}
	panic("fermion: invalid spin order")
}

// Hubbard describes a spinful Fermi–Hubbard model on a Width × Height
// rectangle of sites (Height 0 or 1 is a chain of Width sites):
//
//	H = −t Σ_{⟨i,j⟩,σ} (a†_{iσ} a_{jσ} + a†_{jσ} a_{iσ}) + U Σ_i n_{i↑} n_{i↓} − μ Σ_{i,σ} n_{iσ}
//
// where ⟨i,j⟩ runs over nearest-neighbour bonds, each counted once. Site
// (x, y) is number x + Width·y; its modes follow Order. The zero value of
// every field means what its zero says: no hopping, no interaction, no
// chemical potential, open boundaries, interleaved spins.
type Hubbard struct {
	Width, Height int

	// PeriodicX and PeriodicY add the wrap-around bond along each direction.
	// The wrap bond is added only when that side has at least 3 sites: with 2
	// it would repeat the open bond, with 1 it would be an on-site term.
	PeriodicX, PeriodicY bool

	Hopping           float64 // t
	Interaction       float64 // U
	ChemicalPotential float64 // μ

	Order SpinOrder
}

// Sites returns the number of lattice sites.
func (m Hubbard) Sites() int { return m.Width * max(m.Height, 1) }

// Operator returns the model's Hamiltonian on 2·Sites() modes. It returns an
// error for a non-positive width, a negative height or an undefined spin
// order.
func (m Hubbard) Operator() (*Operator, error) {
	if m.Width <= 0 || m.Height < 0 {
		return nil, fmt.Errorf("fermion: Hubbard lattice %d×%d: sides must be positive", m.Width, m.Height)
	}
	if m.Order != Interleaved && m.Order != SpinBlocks {
		return nil, fmt.Errorf("fermion: undefined spin order %d", int(m.Order))
	}
	h := max(m.Height, 1)
	ns := m.Sites()
	o := NewOperator(2 * ns)
	mode := func(s int, sigma Spin) int { return m.Order.Mode(s, sigma, ns) }
	hop := func(i, j int) {
		if m.Hopping == 0 {
			return
		}
		for _, sigma := range []Spin{Up, Down} {
			o.Add(complex(-m.Hopping, 0), Create(mode(i, sigma)), Annihilate(mode(j, sigma)))
			o.Add(complex(-m.Hopping, 0), Create(mode(j, sigma)), Annihilate(mode(i, sigma)))
		}
	}
	for y := range h {
		for x := range m.Width {
			s := x + m.Width*y
			if x+1 < m.Width {
				hop(s, s+1)
			} else if m.PeriodicX && m.Width >= 3 {
				hop(s, m.Width*y)
			}
			if y+1 < h {
				hop(s, s+m.Width)
			} else if m.PeriodicY && h >= 3 {
				hop(s, x)
			}
		}
	}
	for s := range ns {
		up, dn := mode(s, Up), mode(s, Down)
		if m.Interaction != 0 {
			o.Add(complex(m.Interaction, 0), Create(up), Annihilate(up), Create(dn), Annihilate(dn))
		}
		if m.ChemicalPotential != 0 {
			o.Add(complex(-m.ChemicalPotential, 0), Create(up), Annihilate(up))
			o.Add(complex(-m.ChemicalPotential, 0), Create(dn), Annihilate(dn))
		}
	}
	return o, nil
}
