package allocate

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/hamiltonian/fermion"
	"github.com/shotplan/shotplan/hamiltonian/hamiltoniantest"
	"github.com/shotplan/shotplan/pauli"
)

// varianceFixture is a Hamiltonian, its ground state, a greedy plan and a
// Moments fed with pilot shots of the plan's settings from the simulator.
type varianceFixture struct {
	h        *hamiltonian.Hamiltonian
	psi      []complex128
	settings []pauli.Setting
	start    []float64
	m        *Moments
}

func newVarianceFixture(t *testing.T, h *hamiltonian.Hamiltonian, budget, pilot int) *varianceFixture {
	t.Helper()
	ev, err := hamiltonian.GroundState(h, nil)
	if err != nil {
		t.Fatal(err)
	}
	p, err := Run(h, budget, &Greedy{}, nil)
	if err != nil {
		t.Fatal(err)
	}
	settings, shots := p.Distinct()
	f := &varianceFixture{h: h, psi: ev.State, settings: settings}
	for _, s := range shots {
		f.start = append(f.start, float64(s))
	}
	if f.m, err = NewMoments(h, settings); err != nil {
		t.Fatal(err)
	}
	sim, err := estimate.NewSimulator(ev.State, 4, nil)
	if err != nil {
		t.Fatal(err)
	}
	// The pilot: shots in proportion to the plan, scaled to about pilot.
	counts := make([]int, len(shots))
	for k, s := range shots {
		counts[k] = max(1, s*pilot/p.TotalShots())
	}
	rec := estimate.NewRecords(h.Qubits())
	if err := sim.Run(settings, counts, rec); err != nil {
		t.Fatal(err)
	}
	for _, s := range rec.Shots() {
		f.m.Observe(rec.Setting(s.Group), s.Outcome)
	}
	return f
}

// exact returns a Moments over the same candidates whose pair means are
// the exact tr(ρ P_i P_k).
func (f *varianceFixture) exact() *Moments {
	e := *f.m
	e.sum = make([]float64, len(f.m.sum))
	e.count = make([]int, len(f.m.count))
	for id := range e.sum {
		p, _ := pauli.Mul(f.h.Pauli(f.m.pi[id]), f.h.Pauli(f.m.pk[id]))
		e.sum[id] = hamiltonian.Expectation(f.psi, p)
		e.count[id] = 1
	}
	return &e
}

func lihJW(t *testing.T) *hamiltonian.Hamiltonian {
	t.Helper()
	h, err := hamiltoniantest.Molecule(hamiltoniantest.LiH, fermion.JordanWigner)
	if err != nil {
		t.Fatal(err)
	}
	return h
}

// TestMomentsEstimates compares the pilot's pair means with the exact
// expectation values of the products (state-vector ground state of a
// Heisenberg ring). Each mean is of ±1 samples, so it lies within
// 5/sqrt(count) of the truth except with probability below 6e-7 per pair.
func TestMomentsEstimates(t *testing.T) {
	h, err := hamiltonian.Heisenberg(hamiltonian.Ring(6), 1)
	if err != nil {
		t.Fatal(err)
	}
	f := newVarianceFixture(t, h, 30, 3000)
	e := f.exact()
	checked := 0
	for id := range f.m.sum {
		if f.m.count[id] == 0 {
			continue
		}
		checked++
		got := f.m.sum[id] / float64(f.m.count[id])
		if math.Abs(got-e.sum[id]) > 5/math.Sqrt(float64(f.m.count[id])) {
			t.Errorf("mean of s_i s_k for %s·%s = %v from %d shots, want %v", h.Pauli(f.m.pi[id]), h.Pauli(f.m.pk[id]), got, f.m.count[id], e.sum[id])
		}
	}
	if checked == 0 {
		t.Fatal("no pair was observed")
	}
	if f.m.Shots() < 3000 {
		t.Errorf("Shots() = %d, want at least 3000", f.m.Shots())
	}
}

// TestReweightGradient checks the analytic gradient of S against central
// differences (step 1e-6, relative tolerance 1e-4), without a baseline and
// with a random one (MATH.md §4.11).
func TestReweightGradient(t *testing.T) {
	h, err := hamiltonian.Heisenberg(hamiltonian.Ring(6), 1)
	if err != nil {
		t.Fatal(err)
	}
	f := newVarianceFixture(t, h, 30, 500)
	pi0, err := f.m.normalise(f.start)
	if err != nil {
		t.Fatal(err)
	}
	crng := rand.New(rand.NewPCG(4, 5))
	c := make([]float64, h.Len())
	for i := range c {
		c[i] = 2*crng.Float64() - 1
	}
	for _, base := range [][]float64{nil, c} {
		if err := f.m.SetBaseline(base); err != nil {
			t.Fatal(err)
		}
		checkGradient(t, f, pi0)
	}
}

func checkGradient(t *testing.T, f *varianceFixture, pi0 []float64) {
	t.Helper()
	ev := f.m.newEvaluator(pi0, 0.1)
	rng := rand.New(rand.NewPCG(2, 3))
	rho := make([]float64, len(pi0))
	for q := range rho {
		rho[q] = 0.5 + rng.Float64()
	}
	g := ev.gradient(rho)
	for q := range rho {
		const step = 1e-6
		rho[q] += step
		up := ev.objective(rho)
		rho[q] -= 2 * step
		down := ev.objective(rho)
		rho[q] += step
		// ∂S/∂ρ = (1 − η) ∂S/∂π; gradient omits the common factor.
		fd := (up - down) / (2 * step) / (1 - 0.1)
		if math.Abs(fd-g[q]) > 1e-4*math.Max(1, math.Abs(fd)) {
			t.Errorf("∂S/∂ρ(%s) = %v, central difference %v", f.m.settings[q], g[q], fd)
		}
	}
}

// TestReweightLowersVariance re-weights the greedy plan of LiH (Jordan–Wigner)
// on its ground state. Var X = S(π) − (E − h_0)² and E does not depend on π
// (MATH.md §4.6), so a lower S is a lower single-shot variance. Reweight is
// a descent that accepts a step only when S falls and mixes in the floor
// share, S being evaluated at the mixed distribution throughout, so
// S(result) ≤ S(start) holds exactly for the moments it is given (up to
// rounding: relative 1e-12). Checked twice: with the exact moments
// tr(ρ P_i P_k), where it is a statement about the true variance, and with
// the moments of a 2000-shot pilot, for the estimated S. The fall of the
// true variance with the pilot's weights depends on the pilot's noise and is
// only logged.
func TestReweightLowersVariance(t *testing.T) {
	if testing.Short() {
		t.Skip("LiH ground state and re-weighting take a few seconds")
	}
	h := lihJW(t)
	f := newVarianceFixture(t, h, 1000, 2000)
	e := f.exact()
	shift := h.Energy(f.psi) - h.Offset()
	var w []float64
	for _, c := range []struct {
		name string
		m    *Moments
	}{{"exact moments", e}, {"pilot moments", f.m}} {
		wc, err := c.m.Reweight(f.start, nil)
		if err != nil {
			t.Fatal(err)
		}
		s0, err := c.m.SecondMoment(f.start)
		if err != nil {
			t.Fatal(err)
		}
		s1, err := c.m.SecondMoment(wc)
		if err != nil {
			t.Fatal(err)
		}
		if s1 > s0*(1+1e-12) {
			t.Errorf("%s: S = %v after re-weighting, %v before; a descent must not raise it", c.name, s1, s0)
		}
		t.Logf("%s: S from %.6g to %.6g", c.name, s0, s1)
		w = wc
	}
	s0, err := e.SecondMoment(f.start)
	if err != nil {
		t.Fatal(err)
	}
	s1, err := e.SecondMoment(w)
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("true single-shot variance with the pilot's weights: %.4g before, %.4g after", s0-shift*shift, s1-shift*shift)
	// The floor keeps at least 10% of every starting weight.
	total0, total1 := 0.0, 0.0
	for q := range w {
		total0 += f.start[q]
		total1 += w[q]
	}
	for q := range w {
		if w[q]/total1 < 0.1*f.start[q]/total0*(1-1e-12) {
			t.Fatalf("weight of %s is %v, below the floor 0.1·%v", f.m.settings[q], w[q]/total1, f.start[q]/total0)
		}
	}
}

func TestReweightErrors(t *testing.T) {
	h, err := hamiltonian.New(2, 0, []hamiltonian.Term{{Coeff: 1, Pauli: pauli.MustParse("ZI")}, {Coeff: 0.5, Pauli: pauli.MustParse("IX")}})
	if err != nil {
		t.Fatal(err)
	}
	m, err := NewMoments(h, []pauli.Setting{pauli.MustParseSetting("ZX"), pauli.MustParseSetting("ZZ")})
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		name  string
		start []float64
		s     *VarianceOptions
		want  string
	}{
		{"length", []float64{1}, nil, "1 weights for 2 candidate settings"},
		{"negative", []float64{1, -1}, nil, "weight -1"},
		{"zero", []float64{0, 0}, nil, "positive total"},
		{"floor", nil, &VarianceOptions{Floor: 1}, "floor 1"},
		{"iterations", nil, &VarianceOptions{Iterations: -1}, "-1 iterations"},
	} {
		_, err := m.Reweight(c.start, c.s)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: Reweight error = %v, want one containing %q", c.name, err, c.want)
		}
	}
	if _, err := NewMoments(h, []pauli.Setting{pauli.MustParseSetting("ZXZ")}); err == nil || !strings.Contains(err.Error(), "has 3 qubits") {
		t.Errorf("NewMoments with a 3-qubit setting: error = %v", err)
	}
	// A candidate of zero starting weight keeps zero weight.
	w, err := m.Reweight([]float64{1, 0}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if w[1] != 0 {
		t.Errorf("Reweight moved weight %v onto a candidate that started at zero", w[1])
	}
	// With only ZX useful (it covers both terms), the descent puts all
	// free weight there: S = 1 + 0.25 at π(ZX) = 1, more otherwise.
	w, err = m.Reweight([]float64{1, 1}, &VarianceOptions{Floor: -1})
	if err != nil {
		t.Fatal(err)
	}
	if w[0] < 0.99 {
		t.Errorf("Reweight gave ZX weight %v, want about 1 (it covers both terms)", w[0])
	}
}

// TestMomentsBaseline checks the shifted second moment (MATH.md §4.11) on a
// case worked by hand: H = 0.7 Z0 − 0.4 Z1 + 0.3 Z0Z1, one setting ZZ (so
// f_i = 1 and every pair is seen on every shot), outcomes 00, 00, 01, 11.
// Then SecondMoment is exactly the sample mean of (Σ_i h_i (s_i − c_i))²
// over the four shots, and without a baseline that of (Σ_i h_i s_i)².
func TestMomentsBaseline(t *testing.T) {
	h, err := hamiltonian.New(2, 0, []hamiltonian.Term{
		{Coeff: 0.7, Pauli: pauli.MustParse("ZI")}, {Coeff: -0.4, Pauli: pauli.MustParse("IZ")}, {Coeff: 0.3, Pauli: pauli.MustParse("ZZ")}})
	if err != nil {
		t.Fatal(err)
	}
	s := pauli.MustParseSetting("ZZ")
	m, err := NewMoments(h, []pauli.Setting{s})
	if err != nil {
		t.Fatal(err)
	}
	// Outcome bits (qubit 0 first) and the term signs they give.
	outcomes := []struct {
		b    uint64
		sign [3]float64
	}{{0b00, [3]float64{1, 1, 1}}, {0b00, [3]float64{1, 1, 1}}, {0b10, [3]float64{1, -1, -1}}, {0b11, [3]float64{-1, -1, 1}}}
	for _, o := range outcomes {
		m.Observe(s, pauli.Bits{o.b})
	}
	coef := []float64{0.7, -0.4, 0.3}
	for _, c := range [][]float64{nil, {1, 1, 1}, {0.5, -0.25, 0}} {
		if err := m.SetBaseline(c); err != nil {
			t.Fatal(err)
		}
		want := 0.0
		for _, o := range outcomes {
			x := 0.0
			for i, h := range coef {
				ci := 0.0
				if c != nil {
					ci = c[i]
				}
				x += h * (o.sign[i] - ci)
			}
			want += x * x / float64(len(outcomes))
		}
		got, err := m.SecondMoment([]float64{1})
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(got-want) > 1e-12 {
			t.Errorf("baseline %v: SecondMoment %.15g, want %.15g", c, got, want)
		}
	}
	for _, c := range []struct {
		c    []float64
		want string
	}{{[]float64{0, 0}, "2 entries"}, {[]float64{0, math.NaN(), 0}, "term 1"}, {[]float64{0, 0, 2}, "term 2"}} {
		if err := m.SetBaseline(c.c); err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("SetBaseline(%v): error %v, want one naming %q", c.c, err, c.want)
		}
	}
}
