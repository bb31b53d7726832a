package guarantee

import (
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/hamiltonian/fermion"
	"github.com/shotplan/shotplan/hamiltonian/hamiltoniantest"
	"github.com/shotplan/shotplan/pauli"
)

// copiesOf returns p with every shot count multiplied by r.
func copiesOf(p *allocate.Plan, r int) *allocate.Plan {
	out := &allocate.Plan{Qubits: p.Qubits, Settings: p.Settings}
	for _, n := range p.Shots {
		out.Shots = append(out.Shots, r*n)
	}
	return out
}

// Copies is exactly the smallest number of copies whose certificate meets
// ε: checked by certifying the replicated plans directly.
func TestBudgetOfCopiesCertify(t *testing.T) {
	h, err := hamiltoniantest.Molecule(hamiltoniantest.LiH, fermion.JordanWigner)
	if err != nil {
		t.Fatal(err)
	}
	for _, name := range []string{"greedy", "sorted", "derand"} {
		a, err := allocate.ByName(name, 1)
		if err != nil {
			t.Fatal(err)
		}
		// The smallest reference budget (doubling) at which every term is
		// measured.
		var p *allocate.Plan
		for n := h.Len(); p == nil || slices.Contains(p.Cover, 0); n *= 2 {
			if p, err = allocate.Run(h, n, a, nil); err != nil {
				t.Fatal(err)
			}
		}
		const eps, delta = 1.6e-3, 0.05
		b, err := BudgetOf(h, p, eps, delta, nil)
		if err != nil {
			t.Fatal(err)
		}
		if !b.Reachable || b.Copies < 2 {
			t.Fatalf("%s: reachable %v, %d copies; want a reachable target needing several copies", name, b.Reachable, b.Copies)
		}
		at, err := CertifyPlan(h, copiesOf(p, b.Copies), delta, &Options{Top: -1})
		if err != nil {
			t.Fatal(err)
		}
		below, err := CertifyPlan(h, copiesOf(p, b.Copies-1), delta, &Options{Top: -1})
		if err != nil {
			t.Fatal(err)
		}
		// Rounding of V between the two computations is far below 1e-12
		// relative (a sum of a few thousand positive terms).
		if at.Bound > eps*(1+1e-12) || below.Bound <= eps*(1-1e-12) {
			t.Errorf("%s: %d copies certify %g, %d copies %g; want the first ≤ %g < the second", name, b.Copies, at.Bound, b.Copies-1, below.Bound, eps)
		}
		if b.Shots != at.Shots || math.Abs(b.Variance-at.Variance*float64(b.Copies)) > 1e-9*b.Variance {
			t.Errorf("%s: shots %d vs %d, V %g vs %g·R", name, b.Shots, at.Shots, b.Variance, at.Variance)
		}
		// Without a state the proxy is the worst case: the grouped
		// estimate's variance is at most V (a sum of m_Q variances of
		// values in [−s_Q, s_Q]), and the i.i.d. view's at most
		// Σ_Q π_Q A_Q², which is N_0·V for an unsplit plan (A_Q = N_0 s_Q,
		// π_Q = m_Q/N_0); the two routes round differently, far below
		// 1e-12 relative for sums of a few thousand positive terms.
		if w := float64(b.Reference) * b.Variance; b.ProxyVariance != b.Variance || math.Abs(b.IIDVariance-w) > 1e-12*w {
			t.Errorf("%s: worst-case proxy %g, %g; want V = %g and N0·V", name, b.ProxyVariance, b.IIDVariance, b.Variance)
		}
	}
}

// With a state, ProxyVariance is the exact variance of the grouped estimate
// and IIDVariance the exact single-shot variance of the i.i.d. view: both
// recomputed from ⟨P_i⟩ and ⟨P_i P_j⟩ of the state, found by applying the
// Pauli strings to the state vector (hamiltonian.Expectation), not by the
// Walsh–Hadamard route under test. The grouped estimate's variance is
// Σ_Q m_Q Var_Q(Σ_{i◁Q} (h_i/N_i) s_i) (MATH.md §2).
func TestBudgetOfProxyExact(t *testing.T) {
	h := h2JW(t)
	ev, err := hamiltonian.GroundState(h, nil)
	if err != nil {
		t.Fatal(err)
	}
	// A basis state too: the Hartree–Fock determinant of H2 in this
	// ordering (qubits 0 and 1 occupied), index 0b0011.
	basis := make([]complex128, 16)
	basis[3] = 1
	for _, c := range []struct {
		name  string
		state []complex128
	}{{"greedy", ev.State}, {"sorted", ev.State}, {"sorted-gc", ev.State}, {"sorted", basis}, {"sorted-gc", basis}} {
		name, state := c.name, c.state
		a, err := allocate.ByName(name, 1)
		if err != nil {
			t.Fatal(err)
		}
		p, err := allocate.Run(h, 60, a, nil)
		if err != nil {
			t.Fatal(err)
		}
		b, err := BudgetOf(h, p, 0.01, 0.05, state)
		if err != nil {
			t.Fatal(err)
		}
		settings, shots := p.Distinct()
		cover := make([]int, h.Len())
		for k, s := range settings {
			for i := range h.Len() {
				if s.Covers(h.Pauli(i)) {
					cover[i] += shots[k]
				}
			}
		}
		mean := func(i int) float64 { return hamiltonian.Expectation(state, h.Pauli(i)) }
		prod := func(i, j int) float64 {
			// Co-measured terms commute, so P_i P_j is ± a Pauli string.
			q, ph := pauli.Mul(h.Pauli(i), h.Pauli(j))
			return [4]float64{1, 0, -1, 0}[ph&3] * hamiltonian.Expectation(state, q)
		}
		want := 0.0
		for k, s := range settings {
			m1, m2 := 0.0, 0.0
			for i := range h.Len() {
				if !s.Covers(h.Pauli(i)) {
					continue
				}
				ci := h.Coeff(i) / float64(cover[i])
				m1 += ci * mean(i)
				for j := range h.Len() {
					if s.Covers(h.Pauli(j)) {
						m2 += ci * h.Coeff(j) / float64(cover[j]) * prod(i, j)
					}
				}
			}
			want += float64(shots[k]) * (m2 - m1*m1)
		}
		if !(want > 0) || math.Abs(b.ProxyVariance-want) > 1e-10*(1+want) {
			t.Errorf("%s: grouped proxy variance %.12g, direct %.12g", name, b.ProxyVariance, want)
		}
		d, err := IIDOf(h, p)
		if err != nil {
			t.Fatal(err)
		}
		if w := d.Variance(mean, prod); math.Abs(b.IIDVariance-w) > 1e-9*(1+w) {
			t.Errorf("%s: i.i.d. proxy variance %.12g, direct %.12g", name, b.IIDVariance, w)
		}
		if b.ProxyVariance > b.Variance*(1+1e-12) {
			t.Errorf("%s: proxy variance %g above the worst case %g", name, b.ProxyVariance, b.Variance)
		}
	}
}

// A target below the bias of the terms the plan never covers is refused as
// unreachable rather than answered with a number.
func TestBudgetOfUnreachable(t *testing.T) {
	h := mustH(t, 2, 0, 1.0, "XI", 0.5, "ZZ")
	p := &allocate.Plan{Qubits: 2, Settings: settingsOf("XX"), Shots: []int{10}}
	b, err := BudgetOf(h, p, 0.4, 0.05, nil)
	if err != nil {
		t.Fatal(err)
	}
	if b.Reachable || b.Copies != 0 || b.Bias != 0.5 {
		t.Errorf("got reachable %v, %d copies, bias %g; want unreachable with bias 0.5", b.Reachable, b.Copies, b.Bias)
	}
	for _, c := range []struct{ eps, delta float64 }{{0, 0.05}, {0.1, 0}, {0.1, 1}, {math.Inf(1), 0.05}} {
		if _, err := BudgetOf(h, p, c.eps, c.delta, nil); err == nil {
			t.Errorf("ε=%g δ=%g: no error", c.eps, c.delta)
		}
	}
	if _, err := BudgetOf(h, p, 0.1, 0.05, make([]complex128, 3)); err == nil {
		t.Error("state of 3 amplitudes: no error")
	}
}

// ProxyShots means what it says: with the exact ground state as the proxy,
// the grouped estimate of ProxyCopies copies errs by at most ε in about
// 1 − δ of simulated runs (the normal approximation; shot noise of 2·10³ or
// more shots). 400 runs at nominal 95%: the count within ε is binomial with
// standard deviation 4.4, and the check fails below 360 (90%), more than 4
// deviations away — false-failure rate below 1e-4 if the nominal rate holds.
func TestBudgetOfProxyCoverage(t *testing.T) {
	if testing.Short() {
		t.Skip("400 simulated runs")
	}
	h := h2JW(t)
	ev, err := hamiltonian.GroundState(h, nil)
	if err != nil {
		t.Fatal(err)
	}
	p, err := allocate.Run(h, 100, &allocate.Greedy{}, nil)
	if err != nil {
		t.Fatal(err)
	}
	const eps, delta = 0.01, 0.05
	b, err := BudgetOf(h, p, eps, delta, ev.State)
	if err != nil {
		t.Fatal(err)
	}
	if b.ProxyShots < 2000 {
		t.Fatalf("proxy shots %d: want a target needing at least 2000", b.ProxyShots)
	}
	q := copiesOf(p, b.ProxyCopies)
	within := 0
	const runs = 400
	for seed := range uint64(runs) {
		sim, err := estimate.NewSimulator(ev.State, seed, nil)
		if err != nil {
			t.Fatal(err)
		}
		rec := estimate.NewRecords(h.Qubits())
		if err := sim.Run(q.Settings, q.Shots, rec); err != nil {
			t.Fatal(err)
		}
		res, err := estimate.Grouped(h, rec, nil)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(res.Energy-ev.Energy) <= eps {
			within++
		}
	}
	if within < 360 {
		t.Errorf("%d of %d runs within ε at %d shots; want about %d", within, runs, b.ProxyShots, int((1-delta)*runs))
	}
	t.Logf("%d of %d runs within ε = %g at %d proxy shots (certified: %d)", within, runs, eps, b.ProxyShots, b.Shots)
}

// TestBudgetWithBaselineByHand checks the anytime figures of BudgetWith
// with a baseline on a case worked by hand (MATH.md §4.11): H = 0.5 ZI +
// 0.3 IZ + 0.2 XX, the plan ZZ ×3, XX ×1 (π = 3/4, 1/4; f = 3/4, 3/4, 1/4),
// the state cos θ|00⟩ + sin θ|11⟩ and the baseline c = (1, 1, 0) of |00⟩.
// ZZ reads s_0 = s_1 = +1 with probability cos²θ and −1 with sin²θ; XX
// reads ±1 with probability (1 ± sin 2θ)/2. With C = 0.5 + 0.3 = 0.8,
// X_c = C + (2/3)(s_0 − 1) + 0.4(s_1 − 1) is 0.8 or −4/3 on ZZ and
// 0.8 + 0.8 s on XX; without the baseline X = (16/15)s on ZZ, 0.8 s on XX.
// Both means are the energy 0.8 cos 2θ + 0.2 sin 2θ (checked, as a check
// of the hand values). The worst-case bound Σ_Q π_Q (A_Q + |C_Q|)² has
// A_ZZ = C_ZZ = 16/15, A_XX = 0.8, C_XX = 0. The grouped figures do not
// depend on the baseline.
func TestBudgetWithBaselineByHand(t *testing.T) {
	h := mustH(t, 2, 0, 0.5, "ZI", 0.3, "IZ", 0.2, "XX")
	p := &allocate.Plan{Qubits: 2, Settings: settingsOf("ZZ", "XX"), Shots: []int{3, 1}}
	const theta, eps, delta = 0.3, 0.01, 0.05
	co, si := math.Cos(theta), math.Sin(theta)
	psi := []complex128{complex(co, 0), 0, 0, complex(si, 0)}
	c2, s2 := co*co, si*si
	plus := (1 + math.Sin(2*theta)) / 2
	type outcome struct{ p, x float64 }
	moments := func(zz, xx []outcome) (mean, variance float64) {
		m1, m2 := 0.0, 0.0
		for _, o := range zz {
			m1 += 0.75 * o.p * o.x
			m2 += 0.75 * o.p * o.x * o.x
		}
		for _, o := range xx {
			m1 += 0.25 * o.p * o.x
			m2 += 0.25 * o.p * o.x * o.x
		}
		return m1, m2 - m1*m1
	}
	energy := 0.8*math.Cos(2*theta) + 0.2*math.Sin(2*theta)
	meanC, varC := moments([]outcome{{c2, 0.8}, {s2, -4.0 / 3}}, []outcome{{plus, 1.6}, {1 - plus, 0}})
	mean0, var0 := moments([]outcome{{c2, 16.0 / 15}, {s2, -16.0 / 15}}, []outcome{{plus, 0.8}, {1 - plus, -0.8}})
	if math.Abs(meanC-energy) > 1e-12 || math.Abs(mean0-energy) > 1e-12 {
		t.Fatalf("hand means %v, %v; energy %v", meanC, mean0, energy)
	}
	worstC := 0.75*math.Pow(32.0/15, 2) + 0.25*0.64
	worst0 := 0.75*math.Pow(16.0/15, 2) + 0.25*0.64
	l := math.Log(2 / delta)
	plain, err := BudgetOf(h, p, eps, delta, psi)
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		name     string
		state    []complex128
		baseline []float64
		want     float64
	}{
		{"state, baseline", psi, []float64{1, 1, 0}, varC},
		{"state, none", psi, nil, var0},
		{"worst, baseline", nil, []float64{1, 1, 0}, worstC},
		{"worst, none", nil, nil, worst0},
	} {
		b, err := BudgetWith(h, p, eps, delta, &ShotBudgetOptions{State: c.state, Baseline: c.baseline})
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		if math.Abs(b.IIDVariance-c.want) > 1e-12*c.want || b.Baseline != (c.baseline != nil) {
			t.Errorf("%s: σ² %.15g (baseline %v), want %.15g by hand", c.name, b.IIDVariance, b.Baseline, c.want)
		}
		if n := int(math.Ceil(2 * b.IIDVariance * l / (eps * eps))); b.AnytimeShots != n {
			t.Errorf("%s: %d anytime shots, want ⌈2σ² ln(2/δ)/ε²⌉ = %d", c.name, b.AnytimeShots, n)
		}
		if c.state != nil && (b.ProxyVariance != plain.ProxyVariance || b.Copies != plain.Copies) {
			t.Errorf("%s: grouped proxy variance %v, copies %d; without a baseline %v, %d", c.name, b.ProxyVariance, b.Copies, plain.ProxyVariance, plain.Copies)
		}
	}
	// The bound over all states holds in random states (amplitudes of a
	// fixed seed; any state would do).
	rng := rand.New(rand.NewPCG(7, 7))
	d, err := IIDOf(h, p)
	if err != nil {
		t.Fatal(err)
	}
	dc, err := d.WithBaseline([]float64{1, 1, 0})
	if err != nil {
		t.Fatal(err)
	}
	for range 50 {
		st := make([]complex128, 4)
		for k := range st {
			st[k] = complex(rng.NormFloat64(), rng.NormFloat64())
		}
		for _, c := range []struct {
			d     *IID
			worst float64
		}{{d, worst0}, {dc, worstC}} {
			if _, v, err := AnytimeBudget(c.d, eps, delta, st); err != nil || v > c.worst*(1+1e-12) {
				t.Errorf("variance %v in a random state, above the bound %v (%v)", v, c.worst, err)
			}
		}
	}
	if _, err := BudgetWith(h, p, eps, delta, &ShotBudgetOptions{Baseline: []float64{1, 2, 0}}); err == nil || !strings.Contains(err.Error(), "term 1") {
		t.Errorf("baseline 2 for term 1: error %v, want one naming term 1", err)
	}
	if _, err := BudgetWith(h, p, eps, delta, &ShotBudgetOptions{Baseline: []float64{1}}); err == nil || !strings.Contains(err.Error(), "3 terms") {
		t.Errorf("short baseline: error %v, want one naming the 3 terms", err)
	}
}
