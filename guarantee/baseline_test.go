package guarantee

import (
	"bytes"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/hamiltonian/fermion"
	"github.com/shotplan/shotplan/hamiltonian/hamiltoniantest"
	"github.com/shotplan/shotplan/hamiltonian/molecule"
	"github.com/shotplan/shotplan/pauli"
)

// hfBits returns the Hartree–Fock determinant of an embedded molecule under
// Jordan–Wigner.
func hfBits(t testing.TB, name string) pauli.Bits {
	t.Helper()
	raw, err := hamiltoniantest.FCIDUMP(name)
	if err != nil {
		t.Fatal(err)
	}
	g, err := molecule.ReadFCIDUMP(bytes.NewReader(raw))
	if err != nil {
		t.Fatal(err)
	}
	bits, err := g.HartreeFockBits(fermion.JordanWigner)
	if err != nil {
		t.Fatal(err)
	}
	return bits
}

// hfBaseline returns the Hartree–Fock baseline of an embedded molecule.
func hfBaseline(t testing.TB, name string, h *hamiltonian.Hamiltonian) []float64 {
	t.Helper()
	c, err := BaselineOf(h, allocate.BasisProxy{Bits: hfBits(t, name)})
	if err != nil {
		t.Fatal(err)
	}
	return c
}

// braket returns ⟨ψ|P|ψ⟩ from hamiltoniantest.ApplyString (textbook Pauli
// matrices, independent of the library's word-wise algebra).
func braket(p pauli.String, psi []complex128) float64 {
	phi := hamiltoniantest.ApplyString(p, psi)
	var s complex128
	for k, a := range psi {
		s += cmplx.Conj(a) * phi[k]
	}
	return real(s)
}

// baselineCases are small distributions (at most 4 qubits, so every outcome
// of every setting can be enumerated) with a random state and a random
// baseline: random local plans on random Hamiltonians, and H2's sorted-gc
// plan, whose settings are entangled.
type baselineCase struct {
	name string
	h    *hamiltonian.Hamiltonian
	d    *IID // with the baseline c
	c    []float64
	psi  []complex128
}

func baselineCases(t *testing.T) []baselineCase {
	t.Helper()
	rng := rand.New(rand.NewPCG(41, 42))
	var out []baselineCase
	randomC := func(m int) []float64 {
		c := make([]float64, m)
		for i := range c {
			c[i] = 2*rng.Float64() - 1
		}
		c[0] = 1 // the ends of [−1, 1] are allowed
		return c
	}
	for k := range 6 {
		n := 2 + k%3
		h := randomH(t, rng, n, 8+k, 2)
		settings, shots := randomPlan(rng, n, 6, 4)
		w := make([]float64, len(shots))
		for j, m := range shots {
			w[j] = float64(m)
		}
		w[0]++
		d, err := NewIID(h, settings, w)
		if err != nil {
			t.Fatal(err)
		}
		c := randomC(h.Len())
		dc, err := d.WithBaseline(c)
		if err != nil {
			t.Fatal(err)
		}
		out = append(out, baselineCase{"random local " + string(rune('a'+k)), h, dc, c, randomState(rng, n)})
	}
	h, err := hamiltoniantest.Molecule(hamiltoniantest.H2Alt, fermion.JordanWigner)
	if err != nil {
		t.Fatal(err)
	}
	p, err := allocate.Run(h, 200, &allocate.SortedGC{}, nil)
	if err != nil {
		t.Fatal(err)
	}
	entangled := false
	for _, s := range p.Settings {
		entangled = entangled || !s.IsLocal()
	}
	if !entangled {
		t.Fatal("H2 sorted-gc plan has no entangled setting; the case would not test one")
	}
	d, err := IIDOf(h, p)
	if err != nil {
		t.Fatal(err)
	}
	c := randomC(h.Len())
	dc, err := d.WithBaseline(c)
	if err != nil {
		t.Fatal(err)
	}
	out = append(out, baselineCase{"H2 sorted-gc (entangled)", h, dc, c, randomState(rng, 4)})
	return out
}

// enumerate returns E[X_c], E[X_c²], the least and the largest X_c over all
// outcomes of all settings of d (Born probabilities of the simulator).
func enumerate(t *testing.T, d *IID, psi []complex128) (m1, m2, lo, hi float64) {
	t.Helper()
	sim, err := estimate.NewSimulator(psi, 1, nil)
	if err != nil {
		t.Fatal(err)
	}
	lo, hi = math.Inf(1), math.Inf(-1)
	for k, s := range d.Settings {
		for a, pr := range sim.Probabilities(nil, s) {
			x := d.Value(k, pauli.Bits{uint64(a)})
			m1 += d.Prob[k] * pr * x
			m2 += d.Prob[k] * pr * x * x
			lo, hi = min(lo, x), max(hi, x)
		}
	}
	return m1, m2, lo, hi
}

// TestBaselineUnbiased checks E[X_c] = h_0 + Σ_{f_i>0} h_i⟨P_i⟩ (MATH.md
// §4.11) by exact expectation: every outcome of every setting weighed by
// π(Q) and its Born probability, against the plain sum with ⟨P_i⟩ from
// hamiltoniantest.ApplyString. Tolerance 1e-10: sums of at most a few
// hundred terms of size ≤ Σ|h_i|/f_i ≈ 10^2 in double precision.
func TestBaselineUnbiased(t *testing.T) {
	for _, c := range baselineCases(t) {
		want := c.h.Offset()
		for i := range c.h.Len() {
			if c.d.Dist.Cover[i] > 0 {
				want += c.h.Coeff(i) * braket(c.h.Pauli(i), c.psi)
			}
		}
		m1, _, _, _ := enumerate(t, c.d, c.psi)
		if math.Abs(m1-want) > 1e-10 {
			t.Errorf("%s: E[X_c] = %.12f, want Σ h_i⟨P_i⟩ = %.12f", c.name, m1, want)
		}
	}
}

// TestBaselineRange checks that every outcome of every setting gives a value
// inside Range, and that Range is the formula of MATH.md §4.11 recomputed
// here letter by letter: [h_0 + C + min_Q(−A_Q − C_Q), h_0 + C + max_Q(A_Q
// − C_Q)]. Local settings are checked against Setting.Covers on the text
// forms (letterCovers); tolerance 1e-9 relative for the different order of
// summation.
func TestBaselineRange(t *testing.T) {
	for _, c := range baselineCases(t) {
		lo, hi := c.d.Range()
		_, _, xlo, xhi := enumerate(t, c.d, c.psi)
		slack := 1e-9 * (1 + hi - lo)
		if xlo < lo-slack || xhi > hi+slack {
			t.Errorf("%s: outcomes span [%g, %g], outside Range [%g, %g]", c.name, xlo, xhi, lo, hi)
		}
		if !strings.HasPrefix(c.name, "random local") {
			continue
		}
		f := make([]float64, c.h.Len())
		for k, s := range c.d.Settings {
			for i := range c.h.Len() {
				if letterCovers(c.h.Pauli(i).String(), s.String()) {
					f[i] += c.d.Prob[k]
				}
			}
		}
		center := c.h.Offset()
		for i := range c.h.Len() {
			if f[i] > 0 {
				center += c.h.Coeff(i) * c.c[i]
			}
		}
		wlo, whi := math.Inf(1), math.Inf(-1)
		for _, s := range c.d.Settings {
			a, cq := 0.0, 0.0
			for i := range c.h.Len() {
				if letterCovers(c.h.Pauli(i).String(), s.String()) {
					a += math.Abs(c.h.Coeff(i)) / f[i]
					cq += c.h.Coeff(i) / f[i] * c.c[i]
				}
			}
			wlo, whi = min(wlo, -a-cq), max(whi, a-cq)
		}
		if math.Abs(lo-(center+wlo)) > slack || math.Abs(hi-(center+whi)) > slack {
			t.Errorf("%s: Range [%.12g, %.12g], want [%.12g, %.12g]", c.name, lo, hi, center+wlo, center+whi)
		}
	}
}

// TestBaselineVariance checks the exact single-shot variance with a
// baseline two ways against enumeration of every outcome: IID.Variance with
// exact moments (exactMoments, sign of the product kept) and AnytimeBudget
// with the state. Tolerance 1e-9 absolute on variances of order 10^2–10^4.
func TestBaselineVariance(t *testing.T) {
	for _, c := range baselineCases(t) {
		m1, m2, _, _ := enumerate(t, c.d, c.psi)
		want := m2 - m1*m1
		mean, second := exactMoments(c.h, c.psi)
		if got := c.d.Variance(mean, second); math.Abs(got-want) > 1e-9*(1+want) {
			t.Errorf("%s: Variance %.12g, want %.12g by enumeration", c.name, got, want)
		}
		_, got, err := AnytimeBudget(c.d, c.d.Bias+1, 0.05, c.psi)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(got-want) > 1e-9*(1+want) {
			t.Errorf("%s: AnytimeBudget variance %.12g, want %.12g by enumeration", c.name, got, want)
		}
	}
}

// TestBaselineVarianceLiH checks on LiH (Jordan–Wigner, exact ground
// state, hamiltoniantest) that the baseline shift lowers the exact
// single-shot variance of the greedy plan's i.i.d. view, with the
// Hartree–Fock and with the exact state's ⟨P_i⟩ as baseline. The reason
// (MATH.md §4.11): the diagonal terms, covered in a fraction f_i < 1 of the
// shots, add about h_i²⟨P_i⟩²(1/f_i − 1) each to Var(X), and their
// expectations are near ±1 in LiH's ground state, which is close to its
// Hartree–Fock determinant; with c_i near ⟨P_i⟩ the term's second moment
// 1 − 2c_i⟨P_i⟩ + c_i² drops from 1 to near 1 − ⟨P_i⟩². The shift does not
// lower the variance for every c and every state (the covariances of the
// shifted terms change too), so the check compares the two exact values
// rather than asserting an identity.
func TestBaselineVarianceLiH(t *testing.T) {
	sys := anytimeSystems(t)[1]
	_, d := greedyIID(t, sys.h, 10000)
	mean, second := exactMoments(sys.h, sys.state)
	exact, err := allocate.NewStateProxy(sys.state)
	if err != nil {
		t.Fatal(err)
	}
	ce, err := BaselineOf(sys.h, exact)
	if err != nil {
		t.Fatal(err)
	}
	v0 := d.Variance(mean, second)
	for _, c := range []struct {
		name string
		c    []float64
	}{{"hf", hfBaseline(t, hamiltoniantest.LiH, sys.h)}, {"exact", ce}} {
		dc, err := d.WithBaseline(c.c)
		if err != nil {
			t.Fatal(err)
		}
		v := dc.Variance(mean, second)
		t.Logf("%s baseline: σ² %.4g, without %.4g", c.name, v, v0)
		if !(v < v0) {
			t.Errorf("%s baseline: σ² = %g, not below %g without it", c.name, v, v0)
		}
	}
}

// TestBaselineCoverage checks by seeded simulation that Anytime's interval
// with a baseline holds at level 1 − δ on H2 (JW, exact ground state), with
// the Hartree–Fock baseline and with a hostile one (c_i = −⟨P_i⟩ rounded
// to ±1 where ⟨P_i⟩ ≠ 0: the shifted values then sit near the ends of the
// widened range), without and with a pilot. The misses of independent
// repetitions are at most binomial(reps, δ) in distribution; checkMisses
// fails with probability at most 10^-3 per row (4 rows). A value outside
// Range would make the run fail outright. Under -short 60 repetitions per
// row, else 400.
func TestBaselineCoverage(t *testing.T) {
	sys := anytimeSystems(t)[0]
	_, d := greedyIID(t, sys.h, 200)
	hf := hfBaseline(t, hamiltoniantest.H2Alt, sys.h)
	hostile := make([]float64, sys.h.Len())
	for i := range hostile {
		if e := braket(sys.h.Pauli(i), sys.state); math.Abs(e) > 1e-9 {
			hostile[i] = -math.Copysign(1, e)
		}
	}
	reps := 400
	if testing.Short() {
		reps = 60
	}
	const delta = 0.05
	for _, c := range []struct {
		name string
		c    []float64
	}{{"hf", hf}, {"hostile", hostile}} {
		dc, err := d.WithBaseline(c.c)
		if err != nil {
			t.Fatal(err)
		}
		for _, pilot := range []int{0, 300} {
			dev := newTableDevice(t, sys.state, 5)
			miss := 0
			var radii []float64
			for r := range reps {
				res, err := Anytime(sys.h, dev, &AnytimeOptions{Plan: dc, Delta: delta, MaxShots: 3000 + pilot, Pilot: pilot,
					Seed: uint64(r), FirstRound: 500})
				if err != nil {
					t.Fatal(err)
				}
				if sys.energy < res.Interval[0] || sys.energy > res.Interval[1] {
					miss++
				}
				radii = append(radii, res.Bound)
			}
			slices.Sort(radii)
			t.Logf("%s pilot %d: %d of %d miss, median half-width %.3g", c.name, pilot, miss, reps, radii[reps/2])
			checkMisses(t, c.name+" baseline", miss, reps, delta)
		}
	}
}

// TestBaselineErrors checks the refusals of WithBaseline and BaselineOf.
func TestBaselineErrors(t *testing.T) {
	h := mustH(t, 2, 0.5, 1.0, "ZI", -0.5, "IZ", 0.25, "XX")
	d, err := NewIID(h, []pauli.Setting{pauli.MustParseSetting("ZZ")}, []float64{1})
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		c    []float64
		want string
	}{
		{[]float64{1, 0}, "2 entries"},
		{[]float64{1, math.NaN(), 0}, "term 1 (IZ)"},
		{[]float64{1, 0, -1.5}, "term 2 (XX)"},
		{[]float64{math.Inf(1), 0, 0}, "term 0"},
	} {
		if _, err := d.WithBaseline(c.c); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("WithBaseline(%v): error %v, want one naming %q", c.c, err, c.want)
		}
	}
	if _, err := (&IID{}).WithBaseline(nil); err == nil {
		t.Error("WithBaseline on a zero IID: no error")
	}
	if _, err := BaselineOf(h, nil); err == nil {
		t.Error("BaselineOf with a nil proxy: no error")
	}
	if _, err := BaselineOf(h, allocate.BasisProxy{}); err == nil || !strings.Contains(err.Error(), "basis state") {
		t.Errorf("BaselineOf with an empty basis state: error %v", err)
	}
	three, err := allocate.NewStateProxy(make8())
	if err != nil {
		t.Fatal(err)
	}
	if _, err := BaselineOf(h, three); err == nil || !strings.Contains(err.Error(), "3 qubits") {
		t.Errorf("BaselineOf with a 3-qubit state for 2 qubits: error %v", err)
	}
	if _, err := BaselineOf(h, badProxy{}); err == nil || !strings.Contains(err.Error(), "term 0") {
		t.Errorf("BaselineOf with NaN values: error %v, want one naming term 0", err)
	}
	// nil removes the baseline: back to the plain range.
	dc, err := d.WithBaseline([]float64{1, 1, 0})
	if err != nil {
		t.Fatal(err)
	}
	plain, err := dc.WithBaseline(nil)
	if err != nil {
		t.Fatal(err)
	}
	if lo, hi := plain.Range(); lo != 0.5-1.5 || hi != 0.5+1.5 || plain.Baseline() != nil {
		t.Errorf("baseline removed: Range [%g, %g], want [−1, 2]", lo, hi)
	}
	// By hand: ZI and IZ are covered with f = 1 (XX is not: bias), c = (1, 1),
	// so X_c = 0.5 + (1 − 0.5) + (s_0 − 1) − 0.5(s_1 − 1) with s_0 − 1 ∈
	// {0, −2} and −0.5(s_1 − 1) ∈ {0, 1}: X_c ∈ [−1, 2]. The formula:
	// A = 1.5, C_Q = 0.5, [1 − 1.5 − 0.5, 1 + 1.5 − 0.5].
	if lo, hi := dc.Range(); math.Abs(lo+1) > 1e-15 || math.Abs(hi-2) > 1e-15 {
		t.Errorf("Range [%g, %g], want [−1, 2]", lo, hi)
	}
}

// TestAnytimeBudgetErrors checks AnytimeBudget's refusals and, on a case
// worked by hand, its answer: H = 0.5 + 1.0 ZI − 0.5 IZ + 0.25 XX with the
// one setting ZZ in the basis state |00⟩ gives X = 0.5 + 1 − 0.5 on every
// shot (variance 0; bias 0.25 from XX), and with the state (|00⟩ + |11⟩)/√2,
// s_0 = s_1 = ±1 with probability 1/2 each: X − 0.5 = ±0.5, variance 0.25;
// with the baseline c = (1, 1, 0), X_c − 1 = (s_0 − 1) − 0.5(s_1 − 1) ∈
// {0, −1}: variance 0.25 as well (the shift is a constant within the one
// setting). Shots = ⌈2·0.25·ln(40)/(0.5 − 0.25)²⌉ = ⌈29.51⌉ = 30.
func TestAnytimeBudgetErrors(t *testing.T) {
	h := mustH(t, 2, 0.5, 1.0, "ZI", -0.5, "IZ", 0.25, "XX")
	d, err := NewIID(h, []pauli.Setting{pauli.MustParseSetting("ZZ")}, []float64{1})
	if err != nil {
		t.Fatal(err)
	}
	basis := []complex128{1, 0, 0, 0}
	bell := []complex128{complex(1/math.Sqrt2, 0), 0, 0, complex(1/math.Sqrt2, 0)}
	if _, v, err := AnytimeBudget(d, 0.5, 0.05, basis); err != nil || math.Abs(v) > 1e-15 {
		t.Errorf("|00⟩: variance %v, %v; want 0", v, err)
	}
	dc, err := d.WithBaseline([]float64{1, 1, 0})
	if err != nil {
		t.Fatal(err)
	}
	for _, dd := range []*IID{d, dc} {
		n, v, err := AnytimeBudget(dd, 0.5, 0.05, bell)
		if err != nil || math.Abs(v-0.25) > 1e-15 || n != 30 {
			t.Errorf("Bell state: %d shots, variance %v, %v; want 30 and 0.25", n, v, err)
		}
	}
	for _, c := range []struct {
		eps, delta float64
		state      []complex128
		want       string
	}{
		{0.2, 0.05, basis, "bias"},
		{0, 0.05, basis, "target"},
		{0.5, 1, basis, "δ"},
		{0.5, 0.05, basis[:2], "amplitudes"},
	} {
		if _, _, err := AnytimeBudget(d, c.eps, c.delta, c.state); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("AnytimeBudget(ε %v, δ %v, %d amplitudes): error %v, want %q", c.eps, c.delta, len(c.state), err, c.want)
		}
	}
}

// make8 returns |000⟩.
func make8() []complex128 {
	v := make([]complex128, 8)
	v[0] = 1
	return v
}

// badProxy returns NaN for every string.
type badProxy struct{}

func (badProxy) Expect(pauli.String) float64 { return math.NaN() }
