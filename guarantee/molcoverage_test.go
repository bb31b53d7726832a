package guarantee

import (
	"fmt"
	"math"
	"math/bits"
	"math/rand/v2"
	"sort"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/hamiltonian/fermion"
	"github.com/shotplan/shotplan/hamiltonian/hamiltoniantest"
	"github.com/shotplan/shotplan/pauli"
)

// TestMoleculeCoverage checks by seeded simulation, on the exact ground
// states of H2 (Jordan–Wigner and Bravyi–Kitaev), LiH and BeH2
// (Jordan–Wigner; STO-3G integrals of hamiltonian/hamiltoniantest, each
// energy checked against its full-CI value), that the bounds added for
// overlapped grouping, variance proxies, pair readout and seed plans hold
// in at least a fraction 1 − δ of the repetitions, δ = 0.05, every
// repetition with fresh shots:
//
//   - fixed plans of 2000 shots by overlap with the Hartree–Fock proxy
//     (coefficient splitting, Plan.Split; MATH.md §2.5), sorted with the
//     Hartree–Fock proxy and ProxyFloor 0.1, sorted-gc with the Hartree–Fock
//     proxy and ProxyMoment, and color-gc with the exact state as proxy
//     (MATH.md §2.4; the overlap plan of H2 under Jordan–Wigner splits no
//     coefficient, the others do): the a-priori certificate (CertifyPlan,
//     with the split's V for overlap) and the Pooled and Residual data bounds
//     (Empirical with EmpiricalOptions.Split; repetition 0 through
//     Empirical and estimate.Grouped, the others through the same code on
//     the drawn outcomes);
//   - the sorted and sorted-gc plans above read through the simulator's
//     asymmetric per-qubit readout error and correlated flips of the pairs
//     (0, 1), (2, 3), ... (probability 0.04 each), mitigated with a fresh
//     pair calibration of 4000 shots per preparation in every repetition:
//     the certificate and the data bound of CalibratedBounds (MATH.md
//     §2.1.5);
//   - seed plans of 2000 shots, a fresh seed per repetition: importance
//     sampling on every system and uniform random bases on H2, certified
//     from the distribution alone (SeedDistribution, CertifyIID; MATH.md
//     §4.1); the estimate, the mean of the single-shot values X, is
//     computed here from the plan's weights with covers tested letter by
//     letter, and checked against RandomizedBound's in repetition 0;
//   - the anytime route with the Hartree–Fock baseline (control variate,
//     MATH.md §4.11): settings drawn i.i.d. from the shares of greedy and
//     color-gc (hf proxy) plans, Anytime's betting interval after 2000
//     shots.
//
// Each of the 78 checks (system × plan × bound) runs R = 300 repetitions
// and fails if the bound is exceeded more than L = 31 times, L the
// smallest count with P(Bin(300, δ) > L) ≤ 1e-4 (binomialLimit, gonum's
// binomial CDF): a bound failing with probability exactly δ fails a check
// with probability 5.4e-5. The failures of each kind of bound are also
// added over the systems and plans and checked the same way against
// Binomial(total, δ) (1200 to 4800 repetitions; at most 9.0e-5 each). So
// the test fails falsely with probability at most 85 × 1e-4 ≈ 0.9%
// (union bound). A bound failing at rate 2δ exceeds L in one check with
// probability 0.38, and its kind's added count exceeds its limit with
// probability above 0.998 (P(Bin(1800, 0.1) > 126), the smallest total;
// gonum). The bounds here are conservative, so the observed counts are
// far below L. About 40 s of CPU; skipped under -short.
func TestMoleculeCoverage(t *testing.T) {
	if testing.Short() {
		t.Skip("long simulation: about a minute of CPU")
	}
	const delta, shots, reps, calShots = 0.05, 2000, 300, 4000
	limit := binomialLimit(reps, delta, 1e-4)
	systems := []molecularCase{
		moleculeOf(t, "H2", hamiltoniantest.H2Alt, fermion.JordanWigner),
		moleculeOf(t, "H2", hamiltoniantest.H2Alt, fermion.BravyiKitaev),
		moleculeOf(t, "LiH", hamiltoniantest.LiH, fermion.JordanWigner),
		moleculeOf(t, "BeH2", hamiltoniantest.BeH2, fermion.JordanWigner),
	}
	var report strings.Builder
	fmt.Fprintf(&report, "| system | plan | settings (split entries) | bound | median bound (mHa) | q₀.₉₅ of \\|Ê−E\\| (mHa) | fails of %d |\n|---|---|---|---|---|---|---|\n", reps)
	// kinds adds the failures and repetitions of each kind of bound.
	kinds := map[string][2]int{}
	var order []string
	check := func(mc molecularCase, plan, settings, bound string, errs, bounds []float64) {
		t.Helper()
		fails := 0
		for r := range errs {
			if errs[r] > bounds[r] {
				fails++
			}
		}
		sys := fmt.Sprintf("%s (%s)", mc.name, mc.enc)
		fmt.Fprintf(&report, "| %s | %s | %s | %s | %.4g | %.4g | %d |\n", sys, plan, settings, bound,
			1000*quantile(bounds, 0.5), 1000*quantile(errs, 1-delta), fails)
		if fails > limit {
			t.Errorf("%s, %s: %s exceeded in %d of %d repetitions, more than the limit %d at δ = %g", sys, plan, bound, fails, len(errs), limit, delta)
		}
		k, ok := kinds[bound]
		if !ok {
			order = append(order, bound)
		}
		kinds[bound] = [2]int{k[0] + fails, k[1] + len(errs)}
	}
	for si, mc := range systems {
		exact, err := allocate.NewStateProxy(mc.state)
		if err != nil {
			t.Fatal(err)
		}
		plans := []struct {
			name string
			a    allocate.Allocator
		}{
			{"overlap, hf proxy", &allocate.Overlap{Proxy: mc.hf}},
			{"sorted, hf proxy, floor 0.1", &allocate.Sorted{Proxy: mc.hf, ProxyFloor: 0.1}},
			{"sorted-gc, hf proxy, moment shares", &allocate.SortedGC{Proxy: mc.hf, ProxyMoment: true}},
			{"color-gc, exact proxy", &allocate.ColorGC{Proxy: exact}},
		}
		for pi, pl := range plans {
			p, err := allocate.Run(mc.h, shots, pl.a, nil)
			if err != nil {
				t.Fatal(err)
			}
			if pi == 0 && mc.h.Qubits() > 4 && p.Split.Entries() == 0 {
				t.Fatalf("%s: the overlap plan splits no coefficient; the check needs a split", mc.name)
			}
			cert, err := CertifyPlan(mc.h, p, delta, nil)
			if err != nil {
				t.Fatal(err)
			}
			errs, res, _, pooled, _ := fixedPlanRuns(t, mc, p, reps, delta, uint64(7000+100*si+pi))
			certs := make([]float64, reps)
			for r := range certs {
				certs[r] = cert.Bound
			}
			distinct, _ := p.Distinct()
			settings := fmt.Sprintf("%d (%d)", len(distinct), p.Split.Entries())
			check(mc, pl.name, settings, "certificate (CertifyPlan)", errs, certs)
			check(mc, pl.name, settings, "data, pooled (Empirical)", errs, pooled)
			check(mc, pl.name, settings, "data, residual (Empirical)", errs, res)
			if pi == 1 || pi == 2 {
				errs, certified, data := pairReadoutRuns(t, mc, p, reps, delta, calShots, uint64(8000+100*si+pi))
				name := pl.name + ", pair readout"
				check(mc, name, settings, "mitigated certificate (CalibratedBounds)", errs, certified)
				check(mc, name, settings, "mitigated data (CalibratedBounds)", errs, data)
			}
		}
		seedPlans := []struct {
			name string
			make func(seed uint64) allocate.Allocator
		}{
			{"importance seed plan", func(seed uint64) allocate.Allocator { return &allocate.Importance{Seed: seed} }},
		}
		if mc.h.Qubits() <= 4 {
			seedPlans = append(seedPlans, struct {
				name string
				make func(seed uint64) allocate.Allocator
			}{"random seed plan", func(seed uint64) allocate.Allocator { return &allocate.Random{Seed: seed} }})
		}
		for ki, sp := range seedPlans {
			errs, bound := seedPlanRuns(t, mc, sp.make, shots, reps, delta, uint64(9000+100*si+10*ki))
			check(mc, sp.name, "–", "certificate (CertifyIID)", errs, bound)
		}
		// The anytime route with the Hartree–Fock baseline (MATH.md §4.11):
		// settings drawn i.i.d. from the greedy and the color-gc (hf proxy)
		// plans' shares, single-shot values shifted by c_i = ⟨P_i⟩ in the
		// Hartree–Fock determinant, the betting interval after 2000 shots
		// in rounds of 500. E lies in the interval [lo, hi] exactly when
		// |mid − E| ≤ (hi − lo)/2, which is what check compares.
		base, err := BaselineOf(mc.h, mc.hf)
		if err != nil {
			t.Fatal(err)
		}
		for ai, ap := range []struct {
			name string
			a    allocate.Allocator
		}{{"anytime, greedy π, hf baseline", &allocate.Greedy{}}, {"anytime, color-gc hf π, hf baseline", &allocate.ColorGC{Proxy: mc.hf}}} {
			p, err := allocate.Run(mc.h, shots, ap.a, nil)
			if err != nil {
				t.Fatal(err)
			}
			d, err := IIDOf(mc.h, p)
			if err != nil {
				t.Fatal(err)
			}
			if d, err = d.WithBaseline(base); err != nil {
				t.Fatal(err)
			}
			dev := newTableDevice(t, mc.state, uint64(11000+100*si+ai))
			errs, half := make([]float64, reps), make([]float64, reps)
			for r := range reps {
				res, err := Anytime(mc.h, dev, &AnytimeOptions{Plan: d, Delta: delta, MaxShots: shots, FirstRound: 500, Seed: uint64(r)})
				if err != nil {
					t.Fatal(err)
				}
				errs[r] = math.Abs((res.Interval[0]+res.Interval[1])/2 - mc.energy)
				half[r] = (res.Interval[1] - res.Interval[0]) / 2
			}
			check(mc, ap.name, fmt.Sprint(len(d.Settings)), "anytime interval (Anytime, baseline)", errs, half)
		}
	}
	for _, k := range order {
		c := kinds[k]
		l := binomialLimit(c[1], delta, 1e-4)
		fmt.Fprintf(&report, "\n%s: %d failures in %d repetitions (limit %d)", k, c[0], c[1], l)
		if c[0] > l {
			t.Errorf("%s: %d failures in %d repetitions over all systems and plans, more than the limit %d at δ = %g", k, c[0], c[1], l, delta)
		}
	}
	t.Log("\n" + report.String())
}

// pairNoiseOf is the pair-readout device of n qubits: asymmetric per-qubit
// flips (asymmetricReadout) and, on the disjoint pairs (0, 1), (2, 3), ...,
// both read bits flipping together with probability 0.04 (the simulator's
// PairFlip); it returns the noise and the pairs.
func pairNoiseOf(n int) (*estimate.SimulatorOptions, [][2]int) {
	flip := make([]float64, n-1)
	var pairs [][2]int
	for q := 0; q+1 < n; q += 2 {
		flip[q] = 0.04
		pairs = append(pairs, [2]int{q, q + 1})
	}
	return &estimate.SimulatorOptions{Readout: asymmetricReadout(n), PairFlip: flip, CacheBytes: -1}, pairs
}

// pairReadoutRuns measures the fixed plan p of mc reps times through the
// pair-readout device of pairNoiseOf, each repetition with a fresh pair
// calibration of calShots shots per preparation (simulatePairCalibration),
// and returns the errors |Ê − E| of the mitigated estimates and their
// certificates and data bounds from CalibratedBounds. The outcomes are
// drawn from the simulator's distribution of recorded outcomes
// (Simulator.OutcomeProbabilities, the Born distribution through the same
// noise as Simulator.Run), computed once per setting.
func pairReadoutRuns(t *testing.T, mc molecularCase, p *allocate.Plan, reps int, delta float64, calShots int, seed uint64) (errs, certified, data []float64) {
	t.Helper()
	n := mc.h.Qubits()
	noise, pairs := pairNoiseOf(n)
	sim, err := estimate.NewSimulator(mc.state, seed, noise)
	if err != nil {
		t.Fatal(err)
	}
	settings, shots := p.Distinct()
	cums := make([][]float64, len(settings))
	for g, s := range settings {
		d, err := sim.OutcomeProbabilities(nil, s)
		if err != nil {
			t.Fatal(err)
		}
		for k := 1; k < len(d); k++ {
			d[k] += d[k-1]
		}
		cums[g] = d
	}
	rng := rand.New(rand.NewPCG(seed, 13))
	for r := range reps {
		rec := estimate.NewRecords(n)
		for g, s := range settings {
			cum := cums[g]
			for range shots[g] {
				u := rng.Float64() * cum[len(cum)-1]
				b := pauli.NewBits(n)
				b[0] = uint64(min(sort.SearchFloat64s(cum, u), len(cum)-1))
				if err := rec.Add(s, b); err != nil {
					t.Fatal(err)
				}
			}
		}
		cal, _ := simulatePairCalibration(t, n, pairs, noise, calShots, seed<<20+uint64(r))
		b, err := CalibratedBounds(mc.h, rec, cal, delta, nil)
		if err != nil {
			t.Fatal(err)
		}
		errs = append(errs, math.Abs(b.Energy-mc.energy))
		certified = append(certified, b.Certified)
		data = append(data, b.Data.Bound)
	}
	return errs, certified, data
}

// seedPlanRuns draws reps seed plans of the i.i.d. strategy make(seed) with
// shots shots, each with its own seed, measures each on mc's state and
// returns the errors |X̄ − E| of the means of the single-shot values
// X = h_0 + Σ_{i◁Q} (h_i/f_i) s_i (MATH.md §4.1) and CertifyIID's bound
// from SeedDistribution. Here f_i, the probability that a shot's setting
// covers term i, is computed from the plan's own description, with covers
// tested letter by letter on the text forms (letterCovers): for
// importance sampling Σ_k (|h_k|/Σ|h|) [P_i ◁ P_k completed with Z]
// (MATH.md §3.5), for uniform random bases 3^−|P_i| (§5.3). Repetition 0
// also goes through RandomizedBound, whose estimate must agree.
func seedPlanRuns(t *testing.T, mc molecularCase, make_ func(seed uint64) allocate.Allocator, shots, reps int, delta float64, seed uint64) (errs, bound []float64) {
	t.Helper()
	h := mc.h
	n := h.Qubits()
	terms := make([]string, h.Len())
	masks := make([]uint64, h.Len())
	for i := range terms {
		terms[i] = h.Pauli(i).String()
		for q := range n {
			if terms[i][q] != 'I' {
				masks[i] |= 1 << q
			}
		}
	}
	sp0, err := allocate.NewSeedPlan(h, shots, make_(seed))
	if err != nil {
		t.Fatal(err)
	}
	f := make([]float64, h.Len())
	switch sp0.Strategy {
	case "importance":
		total := 0.0
		for k := range terms {
			total += math.Abs(h.Coeff(k))
		}
		for k, pk := range terms {
			q := strings.ReplaceAll(pk, "I", "Z")
			for i, pi := range terms {
				if letterCovers(pi, q) {
					f[i] += math.Abs(h.Coeff(k)) / total
				}
			}
		}
	case "random":
		for i := range f {
			f[i] = math.Pow(3, -float64(bits.OnesCount64(masks[i])))
		}
	default:
		t.Fatalf("seed plan of strategy %q", sp0.Strategy)
	}
	d, err := SeedDistribution(h, sp0)
	if err != nil {
		t.Fatal(err)
	}
	cert, err := CertifyIID(h, d, shots, delta)
	if err != nil {
		t.Fatal(err)
	}
	sim, err := estimate.NewSimulator(mc.state, 1, nil)
	if err != nil {
		t.Fatal(err)
	}
	// Per setting met: its Born distribution (cumulative) and the terms it
	// covers, with their weights h_i/f_i and supports.
	type entry struct {
		cum   []float64
		coef  []float64
		masks []uint64
	}
	seen := map[string]*entry{}
	rng := rand.New(rand.NewPCG(seed, 17))
	for r := range reps {
		sp, err := allocate.NewSeedPlan(h, shots, make_(seed+uint64(r)))
		if err != nil {
			t.Fatal(err)
		}
		st, err := sp.Stream()
		if err != nil {
			t.Fatal(err)
		}
		var rec *estimate.Records
		if r == 0 {
			rec = estimate.NewRecords(n)
		}
		sum := 0.0
		for st.Next() {
			s := st.Setting()
			text := s.String()
			e, ok := seen[text]
			if !ok {
				e = &entry{cum: sim.Probabilities(nil, s)}
				for k := 1; k < len(e.cum); k++ {
					e.cum[k] += e.cum[k-1]
				}
				for i, pi := range terms {
					if letterCovers(pi, text) {
						e.coef = append(e.coef, h.Coeff(i)/f[i])
						e.masks = append(e.masks, masks[i])
					}
				}
				seen[text] = e
			}
			for range st.Shots() {
				u := rng.Float64() * e.cum[len(e.cum)-1]
				b := uint64(min(sort.SearchFloat64s(e.cum, u), len(e.cum)-1))
				x := h.Offset()
				for k, c := range e.coef {
					x += c * float64(1-2*(bits.OnesCount64(b&e.masks[k])&1))
				}
				sum += x
				if rec != nil {
					bb := pauli.NewBits(n)
					bb[0] = b
					if err := rec.Add(s, bb); err != nil {
						t.Fatal(err)
					}
				}
			}
		}
		mean := sum / float64(shots)
		if rec != nil {
			rb, err := RandomizedBound(h, rec, d, delta, nil)
			if err != nil {
				t.Fatal(err)
			}
			if !near(rb.Energy, mean, 1e-9) {
				t.Errorf("%s %s: RandomizedBound's estimate %.15g, the mean of X here %.15g", mc.name, sp.Strategy, rb.Energy, mean)
			}
		}
		errs = append(errs, math.Abs(mean-mc.energy))
		bound = append(bound, cert.Bound)
	}
	return errs, bound
}
