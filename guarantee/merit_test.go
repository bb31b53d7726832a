package guarantee_test

import (
	"math"
	"path/filepath"
	"testing"

	"gonum.org/v1/gonum/mat"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/guarantee"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/hamiltonian/fermion"
	"github.com/shotplan/shotplan/hamiltonian/hamiltoniantest"
	"github.com/shotplan/shotplan/hamiltonian/molecule"
	"github.com/shotplan/shotplan/pauli"
)

// fcidumpDir holds the repository's copy of the reference integrals (psi4
// 1.3.2; see its README).
var fcidumpDir = filepath.Join("..", "hamiltonian", "molecule", "testdata")

func moleculeHamiltonian(t testing.TB, name string, enc fermion.Encoding) (*hamiltonian.Hamiltonian, *molecule.Integrals) {
	t.Helper()
	g, err := molecule.ReadFCIDUMPFile(filepath.Join(fcidumpDir, name+".fcidump"))
	if err != nil {
		t.Fatal(err)
	}
	h, err := g.QubitHamiltonian(enc)
	if err != nil {
		t.Fatal(err)
	}
	return h, g
}

// paulis returns the 2×2 matrices of I, X, Y, Z (textbook).
func paulis() [4]*mat.CDense {
	return [4]*mat.CDense{
		mat.NewCDense(2, 2, []complex128{1, 0, 0, 1}),
		mat.NewCDense(2, 2, []complex128{0, 1, 1, 0}),
		mat.NewCDense(2, 2, []complex128{0, -1i, 1i, 0}),
		mat.NewCDense(2, 2, []complex128{1, 0, 0, -1}),
	}
}

// kron returns the Kronecker product a ⊗ b.
func kron(a, b *mat.CDense) *mat.CDense {
	ar, ac := a.Dims()
	br, bc := b.Dims()
	out := mat.NewCDense(ar*br, ac*bc, nil)
	for i := range ar {
		for j := range ac {
			for k := range br {
				for l := range bc {
					out.Set(i*br+k, j*bc+l, a.At(i, j)*b.At(k, l))
				}
			}
		}
	}
	return out
}

// denseString is the 2^n matrix of p with qubit q as bit q of the basis
// index (the library's convention, MATH.md §7): the highest qubit is the
// leftmost Kronecker factor.
func denseString(p pauli.String) *mat.CDense {
	ps := paulis()
	m := mat.NewCDense(1, 1, []complex128{1})
	for q := p.Qubits() - 1; q >= 0; q-- {
		m = kron(m, ps[p.At(q)])
	}
	return m
}

// covers reports whether s measures p: qwcCovers for a local setting; for
// an entangled one (a commuting family) the library's Setting.Covers, which
// only decides membership — the variance is still computed densely.
func covers(s pauli.Setting, p pauli.String) bool {
	if s.IsLocal() {
		return qwcCovers(s, p)
	}
	return s.Covers(p)
}

// qwcCovers reports whether the local setting s measures p: on every qubit
// p is I or s's letter (qubit-wise commuting measurement, common practice).
func qwcCovers(s pauli.Setting, p pauli.String) bool {
	for q := range p.Qubits() {
		if l := p.At(q); l != pauli.I && l != s.At(q) {
			return false
		}
	}
	return true
}

// referenceMerit recomputes PlanValue and Optimal of a local plan with dense
// matrices: Var_g = ⟨O_g²⟩ − ⟨O_g⟩² with O_g = Σ_{i◁g} α_{ig} h_i P_i,
// α_{ig} = m_g/N_i or the plan's split (MATH.md §2.5, [splitWeight]).
func referenceMerit(h *hamiltonian.Hamiltonian, p *allocate.Plan, psi []complex128) (planValue, optimal float64) {
	settings, shots := p.Distinct()
	cover := make([]int, h.Len())
	for g, s := range settings {
		for i := range h.Len() {
			if covers(s, h.Term(i).Pauli) {
				cover[i] += shots[g]
			}
		}
	}
	dim := len(psi)
	total, sumVar, sumSD := 0, 0.0, 0.0
	for g, s := range settings {
		o := mat.NewCDense(dim, dim, nil)
		for i := range h.Len() {
			if !covers(s, h.Term(i).Pauli) {
				continue
			}
			w := complex(splitWeight(p, s, i, shots[g], cover[i])*h.Coeff(i), 0)
			d := denseString(h.Term(i).Pauli)
			for r := range dim {
				for c := range dim {
					if x := d.At(r, c); x != 0 {
						o.Set(r, c, o.At(r, c)+w*x)
					}
				}
			}
		}
		ov := matVec(o, psi)
		o2v := matVec(o, ov)
		mean, second := complex128(0), complex128(0)
		for r := range dim {
			mean += conj(psi[r]) * ov[r]
			second += conj(psi[r]) * o2v[r]
		}
		vg := real(second) - real(mean)*real(mean)
		vg = max(vg, 0)
		total += shots[g]
		sumVar += vg / float64(shots[g])
		sumSD += math.Sqrt(vg)
	}
	return float64(total) * sumVar, sumSD * sumSD
}

// matVec returns the product of the dense matrix a and the vector x.
func matVec(a *mat.CDense, x []complex128) []complex128 {
	r, c := a.Dims()
	out := make([]complex128, r)
	for i := range r {
		for j := range c {
			out[i] += a.At(i, j) * x[j]
		}
	}
	return out
}

func conj(z complex128) complex128 { return complex(real(z), -imag(z)) }

// denseGround returns the ground state of h from a dense eigendecomposition
// by gonum: the Hermitian H = A + iB is embedded as the real symmetric
// [[A, −B], [B, A]], whose eigenvector (u, v) gives ψ = u + iv.
func denseGround(h *hamiltonian.Hamiltonian) ([]complex128, float64) {
	dim := 1 << h.Qubits()
	hm := mat.NewCDense(dim, dim, nil)
	for i := range h.Len() {
		d := denseString(h.Term(i).Pauli)
		for r := range dim {
			for c := range dim {
				hm.Set(r, c, hm.At(r, c)+complex(h.Coeff(i), 0)*d.At(r, c))
			}
		}
	}
	big := mat.NewSymDense(2*dim, nil)
	for r := range dim {
		for c := r; c < dim; c++ {
			a, b := real(hm.At(r, c)), imag(hm.At(r, c))
			big.SetSym(r, c, a)
			big.SetSym(dim+r, dim+c, a)
			big.SetSym(r, dim+c, -b)
			big.SetSym(c, dim+r, b)
		}
	}
	var es mat.EigenSym
	if !es.Factorize(big, true) {
		panic("eigendecomposition failed")
	}
	var vecs mat.Dense
	es.VectorsTo(&vecs)
	psi := make([]complex128, dim)
	for r := range dim {
		psi[r] = complex(vecs.At(r, 0), vecs.At(dim+r, 0))
	}
	return psi, es.Values(nil)[0] + h.Offset()
}

// TestMeritOfH2Outside recomputes ε²M of sorted insertion (qubit-wise and,
// with entangled settings, general commutation) on H2 (STO-3G, 0.7414 Å,
// Jordan–Wigner and Bravyi–Kitaev) from the ground state of a
// dense gonum eigendecomposition, with each group's observable built as a
// dense matrix and its variance taken as ⟨O²⟩ − ⟨O⟩² — a computation that
// shares nothing with MeritOf but the Hamiltonian and the plan. The
// ground energy is checked against the full-CI value of the data README
// (psi4). Tolerances: the two sides sum at most 15 terms of size ≤ 1 in
// double precision, so their difference is a few 1e-15 relative; 1e-10
// leaves room for the eigenvector's own error (residual ~1e-14).
func TestMeritOfH2Outside(t *testing.T) {
	const efci = -1.1372701747 // README of the reference data, H2 at 0.7414 Å
	for _, enc := range []fermion.Encoding{fermion.JordanWigner, fermion.BravyiKitaev} {
		h, _ := moleculeHamiltonian(t, "h2_sto3g_0.7414A", enc)
		psi, e := denseGround(h)
		if math.Abs(e-efci) > 1e-8 {
			t.Fatalf("%v: dense ground energy %.10f, full CI %.10f", enc, e, efci)
		}
		for _, c := range []struct {
			a      allocate.Allocator
			budget int
		}{{&allocate.Sorted{}, 1000}, {&allocate.Sorted{}, 997}, {&allocate.SortedGC{}, 1000}, {&allocate.Overlap{Proxy: mustStateProxy(t, psi)}, 1000}, {&allocate.Overlap{}, 999}} {
			budget := c.budget
			p, err := allocate.Run(h, budget, c.a, nil)
			if err != nil {
				t.Fatal(err)
			}
			m, err := guarantee.MeritOf(h, p, psi)
			if err != nil {
				t.Fatal(err)
			}
			wantPlan, wantOpt := referenceMerit(h, p, psi)
			if d := math.Abs(m.PlanValue - wantPlan); d > 1e-10*wantPlan {
				t.Errorf("%v, %d shots: PlanValue %.15g, dense reference %.15g", enc, budget, m.PlanValue, wantPlan)
			}
			if d := math.Abs(m.Optimal - wantOpt); d > 1e-10*wantOpt {
				t.Errorf("%v, %d shots: Optimal %.15g, dense reference %.15g", enc, budget, m.Optimal, wantOpt)
			}
			if wantPlan <= 0 || m.Optimal > m.PlanValue*(1+1e-12) {
				t.Errorf("%v: Optimal %g, PlanValue %g: want 0 < Optimal ≤ PlanValue", enc, m.Optimal, m.PlanValue)
			}
		}
	}
}

// splitWeight returns α_{ig} of term i in setting s (m_g shots; the term
// has N_i covering shots): the plan's split weight when the split lists
// the term (0 in a setting that does not list it), else m_g/N_i. It reads
// the split entry by entry, independently of the library's lookups.
func splitWeight(p *allocate.Plan, s pauli.Setting, i, mg, ni int) float64 {
	listed, w := false, 0.0
	for _, gr := range p.Split {
		for k, t := range gr.Terms {
			if t == i {
				listed = true
				if gr.Setting.Equal(s) {
					w = gr.Weights[k]
				}
			}
		}
	}
	if !listed {
		return float64(mg) / float64(ni)
	}
	return w
}

func mustStateProxy(t *testing.T, psi []complex128) *allocate.StateProxy {
	t.Helper()
	px, err := allocate.NewStateProxy(psi)
	if err != nil {
		t.Fatal(err)
	}
	return px
}

// TestMeritOfLiHOutside does the same for LiH (12 qubits, Jordan–Wigner) in
// its exact ground state (sector of 4 electrons, S_z = 0; energy checked
// against the full-CI value of the README), with O_g|ψ⟩ built term by term
// by hamiltoniantest.ApplyString and Var_g = ‖O_g ψ‖² − ⟨ψ|O_g|ψ⟩².
func TestMeritOfLiHOutside(t *testing.T) {
	if testing.Short() {
		t.Skip("LiH: a few seconds")
	}
	const efci = -7.8824034103 // README of the reference data
	h, g := moleculeHamiltonian(t, "lih_sto3g_1.5949A", fermion.JordanWigner)
	sec, err := hamiltonian.ElectronSector(h.Qubits(), g.Electrons, g.SpinTwice)
	if err != nil {
		t.Fatal(err)
	}
	gs, err := hamiltonian.GroundState(h, &hamiltonian.EigenOptions{Sector: &sec})
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(gs.Energy-efci) > 1e-7 {
		t.Fatalf("ground energy %.10f, full CI %.10f", gs.Energy, efci)
	}
	psi := gs.State
	p, err := allocate.Run(h, 10000, &allocate.Sorted{}, nil)
	if err != nil {
		t.Fatal(err)
	}
	m, err := guarantee.MeritOf(h, p, psi)
	if err != nil {
		t.Fatal(err)
	}
	settings, shots := p.Distinct()
	cover := make([]int, h.Len())
	for k, s := range settings {
		for i := range h.Len() {
			if qwcCovers(s, h.Term(i).Pauli) {
				cover[i] += shots[k]
			}
		}
	}
	total, sumVar, sumSD := 0, 0.0, 0.0
	for k, s := range settings {
		o := make([]complex128, len(psi))
		for i := range h.Len() {
			if !qwcCovers(s, h.Term(i).Pauli) {
				continue
			}
			w := complex(float64(shots[k])/float64(cover[i])*h.Coeff(i), 0)
			for b, x := range hamiltoniantest.ApplyString(h.Term(i).Pauli, psi) {
				o[b] += w * x
			}
		}
		mean, second := 0.0, 0.0
		for b := range psi {
			mean += real(conj(psi[b]) * o[b])
			second += real(o[b])*real(o[b]) + imag(o[b])*imag(o[b])
		}
		vg := max(second-mean*mean, 0)
		total += shots[k]
		sumVar += vg / float64(shots[k])
		sumSD += math.Sqrt(vg)
	}
	wantPlan, wantOpt := float64(total)*sumVar, sumSD*sumSD
	// Sums of about 600 terms of size ≤ 10 in double precision, with a
	// state whose residual is ≤ 1e-10 (GroundState's default): 1e-8 relative.
	if math.Abs(m.PlanValue-wantPlan) > 1e-8*wantPlan || math.Abs(m.Optimal-wantOpt) > 1e-8*wantOpt {
		t.Errorf("PlanValue %.12g (reference %.12g), Optimal %.12g (reference %.12g)", m.PlanValue, wantPlan, m.Optimal, wantOpt)
	}
}
