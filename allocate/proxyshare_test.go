package allocate_test

import (
	"math"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/hamiltonian/fermion"
	"github.com/shotplan/shotplan/hamiltonian/hamiltoniantest"
	"github.com/shotplan/shotplan/pauli"
)

// proxyGrouper is a grouping strategy that reports its groups.
type proxyGrouper interface {
	allocate.Allocator
	Groups() ([]pauli.Setting, []int)
	Members() [][]int
}

// groupers returns sorted, sorted-gc and color-gc with the given proxy.
func proxyGroupers(px allocate.Proxy) []proxyGrouper {
	return []proxyGrouper{&allocate.Sorted{Proxy: px}, &allocate.SortedGC{Proxy: px}, &allocate.ColorGC{Proxy: px}}
}

// groupVariance returns Var_ψ(O) = ‖Oψ‖² − ⟨ψ|Oψ⟩² for O the sum of h's
// terms listed, applied matrix-free by package hamiltonian (MATH.md §7);
// with moment, ⟨O²⟩ = ‖Oψ‖² instead.
func groupVariance(t *testing.T, h *hamiltonian.Hamiltonian, members []int, psi []complex128, moment bool) float64 {
	t.Helper()
	terms := make([]hamiltonian.Term, len(members))
	for j, i := range members {
		terms[j] = h.Term(i)
	}
	o, err := hamiltonian.New(h.Qubits(), 0, terms)
	if err != nil {
		t.Fatal(err)
	}
	out := make([]complex128, len(psi))
	o.Apply(out, psi)
	var m complex128
	m2 := 0.0
	for a, v := range out {
		m += complex(real(psi[a]), -imag(psi[a])) * v
		m2 += real(v)*real(v) + imag(v)*imag(v)
	}
	if moment {
		return m2
	}
	return max(m2-real(m)*real(m), 0)
}

// TestProxySharesCauchySchwarz checks, on H2 and LiH (Jordan–Wigner and
// Bravyi–Kitaev) in their exact ground states, that the shares a grouping
// strategy draws from a proxy give a smaller shot cost in the proxy state
// than its one-norm shares, for the same groups.
//
// The cost of shares m_g (Σ m_g = N) is C(m) = N·Σ_g V_g/m_g, with V_g the
// variance of group g's O_g = Σ_{i∈g} h_i P_i in the state (MATH.md §2.3,
// the split fixed by the grouping). For fractions f_g = w_g/Σw,
// C = (Σ_g w_g)(Σ_g V_g/w_g); Cauchy–Schwarz gives C ≥ (Σ_g sqrt(V_g))²
// with equality at w_g = sqrt(V_g), and the floor
// w_g = max(sqrt(V_g), ρ W_g), W_g = Σ_{i∈g}|h_i| ≥ sqrt(V_g), costs no
// more than w = W (MATH.md §2.4: along w(t) = max(sqrt V, tW) the cost
// grows with t, and t = 1 is w = W). Rounding moves the counts:
// the proxy's m_g ≥ (N − G)f_g (one shot each, then largest remainders of
// N − G), so C_proxy ≤ N/(N − G)·C(f); the one-norm plan's
// m_g ≤ N f_g + 1, so C_onenorm ≥ C(f)/(1 + 1/(N min f)). The test asserts
// C_proxy ≤ C_onenorm·N/(N − G)·(1 + 1/(N min f)). Variances come from
// package hamiltonian's matrix-free product, independent of the proxy code.
// With ProxyMoment the same holds with ⟨O_g²⟩ in place of V_g (the
// single-shot second moment Σ_g ⟨O_g²⟩/π_g of shots drawn i.i.d. from the
// plan, each term in its own group; sqrt⟨O_g²⟩ ≤ W_g as ‖O_g‖ ≤ W_g).
// The reference energies: full CI of psi4 (hamiltoniantest).
func TestProxySharesCauchySchwarz(t *testing.T) {
	const budget = 1000000
	cases := []struct {
		name string
		enc  fermion.Encoding
	}{
		{hamiltoniantest.H2, fermion.JordanWigner},
		{hamiltoniantest.LiH, fermion.JordanWigner},
		{hamiltoniantest.LiH, fermion.BravyiKitaev},
	}
	for _, c := range cases {
		h, err := hamiltoniantest.Molecule(c.name, c.enc)
		if err != nil {
			t.Fatal(err)
		}
		gs, err := hamiltonian.GroundState(h, nil)
		if err != nil {
			t.Fatal(err)
		}
		fci, err := hamiltoniantest.FullCI(c.name)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(gs.Energy-fci) > 1e-8 {
			t.Fatalf("%s %s: ground energy %.10f, want full CI %.10f", c.name, c.enc, gs.Energy, fci)
		}
		px, err := allocate.NewStateProxy(gs.State)
		if err != nil {
			t.Fatal(err)
		}
		plain := append(proxyGroupers(nil), proxyGroupers(nil)...)
		withProxy := append(proxyGroupers(px),
			&allocate.Sorted{Proxy: px, ProxyMoment: true}, &allocate.SortedGC{Proxy: px, ProxyMoment: true}, &allocate.ColorGC{Proxy: px, ProxyMoment: true})
		for k, a := range withProxy {
			moment := k >= 3
			if err := a.Init(h, budget); err != nil {
				t.Fatal(err)
			}
			if err := plain[k].Init(h, budget); err != nil {
				t.Fatal(err)
			}
			_, mw := a.Groups()
			_, mu := plain[k].Groups()
			members := a.Members()
			G := len(members)
			var cw, cu, minf, oneNorm float64
			minf = 1
			for _, ms := range members {
				for _, i := range ms {
					oneNorm += math.Abs(h.Coeff(i))
				}
			}
			for g, ms := range members {
				v := groupVariance(t, h, ms, gs.State, moment)
				if mw[g] < 1 {
					t.Fatalf("%s %s %s: group %d has no shots with a proxy", c.name, c.enc, a, g)
				}
				cw += budget * v / float64(mw[g])
				if mu[g] == 0 {
					cu = math.Inf(1)
				} else {
					cu += budget * v / float64(mu[g])
				}
				wg := 0.0
				for _, i := range ms {
					wg += math.Abs(h.Coeff(i))
				}
				minf = min(minf, wg/oneNorm)
			}
			bound := cu * budget / float64(budget-G) * (1 + 1/(budget*minf))
			if cw > bound {
				t.Errorf("%s %s %s (moment %v): cost with proxy shares %.6g > %.6g (one-norm shares %.6g)", c.name, c.enc, a, moment, cw, bound, cu)
			}
			t.Logf("%s %s %s (moment %v): %d groups, cost with proxy shares %.5g, one-norm shares %.5g", c.name, c.enc, a, moment, G, cw, cu)
		}
	}
}

// TestProxyEveryGroupMeasured: in the Hartree–Fock basis state of LiH under
// Jordan–Wigner (the lowest 4 spin orbitals occupied: bits 0–3, Szabo &
// Ostlund §3.4; common practice) every diagonal term has variance zero, so
// a group of Z strings would get no shots without the floor. With the
// floor and one shot per group first, every group and every term is
// measured, and the total is the budget.
func TestProxyEveryGroupMeasured(t *testing.T) {
	h, err := hamiltoniantest.Molecule(hamiltoniantest.LiH, fermion.JordanWigner)
	if err != nil {
		t.Fatal(err)
	}
	px := allocate.BasisProxy{Bits: pauli.Bits{0b1111}}
	for _, a := range proxyGroupers(px) {
		p, err := allocate.Run(h, 5000, a, nil)
		if err != nil {
			t.Fatal(err)
		}
		_, quota := a.Groups()
		for g, q := range quota {
			if q < 1 {
				t.Errorf("%s: group %d has no shots", a, g)
			}
		}
		for i, c := range p.Cover {
			if c == 0 {
				t.Errorf("%s: term %d never measured", a, i)
			}
		}
		if p.TotalShots() != 5000 {
			t.Errorf("%s: %d shots, want 5000", a, p.TotalShots())
		}
	}
}

// TestProxyErrors: a proxy of another width and a floor outside (0, 1]
// are errors, not panics.
func TestProxyErrors(t *testing.T) {
	h, err := hamiltoniantest.Molecule(hamiltoniantest.H2, fermion.JordanWigner)
	if err != nil {
		t.Fatal(err)
	}
	small, err := allocate.NewStateProxy([]complex128{1, 0})
	if err != nil {
		t.Fatal(err)
	}
	bad := []allocate.Allocator{
		&allocate.Sorted{Proxy: small},
		&allocate.SortedGC{Proxy: allocate.BasisProxy{Bits: pauli.Bits{1 << 7}}},
		&allocate.ColorGC{Proxy: allocate.BasisProxy{}},
		&allocate.Sorted{Proxy: allocate.BasisProxy{Bits: pauli.Bits{3}}, ProxyFloor: -1},
		&allocate.ColorGC{Proxy: allocate.BasisProxy{Bits: pauli.Bits{3}}, ProxyFloor: math.NaN()},
		&allocate.SortedGC{Proxy: allocate.BasisProxy{Bits: pauli.Bits{3}}, ProxyFloor: 2},
	}
	for k, a := range bad {
		if _, err := allocate.Run(h, 100, a, nil); err == nil {
			t.Errorf("case %d (%s): no error", k, a)
		}
	}
}
