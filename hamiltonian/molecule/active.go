package molecule

import (
	"fmt"
	"slices"
)

// ActiveSpace returns the integrals of the active space that keeps orbitals
// frozen … frozen+active−1 and freezes the lowest `frozen` orbitals doubly
// occupied. The frozen orbitals' energy folds into the constant and their
// mean field into the one-electron integrals (Szabo & Ostlund, Modern
// Quantum Chemistry, §3.4, Fock operator of the core):
//
//	E_core' = E_core + Σ_c 2 h_cc + Σ_{cd} (2 (cc|dd) − (cd|dc))
//	h'_pq   = h_pq + Σ_c (2 (pq|cc) − (pc|cq))
//	(pq|rs)' = (pq|rs) for active p, q, r, s
//
// with c, d over the frozen orbitals. Orbitals above the active space are
// dropped (a virtual-orbital truncation). Electrons drops by 2·frozen and
// OrbSym is cut to the active orbitals. ActiveSpace(0, Orbitals()) returns
// an equal copy.
//
// It returns an error if frozen is negative, active is not positive,
// frozen+active exceeds the orbital count, the frozen orbitals need more
// electrons than there are, the remaining electrons do not fit in the
// active orbitals, or OrbSym is set but does not have one label per orbital.
func (g *Integrals) ActiveSpace(frozen, active int) (*Integrals, error) {
	switch {
	case frozen < 0:
		return nil, fmt.Errorf("molecule: active space: negative frozen count %d", frozen)
	case active < 1:
		return nil, fmt.Errorf("molecule: active space: %d active orbitals, want at least 1", active)
	case frozen+active > g.norb:
		return nil, fmt.Errorf("molecule: active space: %d frozen + %d active orbitals exceed the %d orbitals", frozen, active, g.norb)
	case 2*frozen > g.Electrons:
		return nil, fmt.Errorf("molecule: active space: %d frozen orbitals need %d electrons, have %d", frozen, 2*frozen, g.Electrons)
	case g.Electrons-2*frozen > 2*active:
		return nil, fmt.Errorf("molecule: active space: %d electrons left after freezing do not fit in %d orbitals", g.Electrons-2*frozen, active)
	case g.OrbSym != nil && len(g.OrbSym) != g.norb:
		return nil, fmt.Errorf("molecule: active space: OrbSym has %d labels for %d orbitals", len(g.OrbSym), g.norb)
	}
	a, err := New(active)
	if err != nil {
		return nil, err
	}
	a.Electrons = g.Electrons - 2*frozen
	a.SpinTwice = g.SpinTwice
	a.ISym = g.ISym
	if g.OrbSym != nil {
		a.OrbSym = slices.Clone(g.OrbSym[frozen : frozen+active])
	}
	core := g.core
	for c := range frozen {
		core += 2 * g.One(c, c)
		for d := range frozen {
			core += 2*g.Two(c, c, d, d) - g.Two(c, d, d, c)
		}
	}
	a.core = core
	for p := range active {
		for q := range p + 1 {
			v := g.One(frozen+p, frozen+q)
			for c := range frozen {
				v += 2*g.Two(frozen+p, frozen+q, c, c) - g.Two(frozen+p, c, c, frozen+q)
			}
			a.SetOne(p, q, v)
		}
	}
	for p := range active {
		for q := range p + 1 {
			for r := range active {
				for s := range r + 1 {
					if pair(r, s) > pair(p, q) {
						continue
					}
					a.SetTwo(p, q, r, s, g.Two(frozen+p, frozen+q, frozen+r, frozen+s))
				}
			}
		}
	}
	return a, nil
}
