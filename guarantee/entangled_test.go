package guarantee_test

import (
	"math"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/guarantee"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/hamiltonian/fermion"
	"github.com/shotplan/shotplan/hamiltonian/hamiltoniantest"
	"github.com/shotplan/shotplan/pauli"
)

// TestCertifyEntangledHandCount evaluates the certificate of MATH.md §3.1
// for a plan with an entangled setting, against a count by hand. The
// Bell-basis setting XX|ZZ covers XX, ZZ and YY (= −XX·ZZ) and neither XI
// nor IZ, which anticommute with one of its generators; the local settings
// cover as usual. Tolerance 1e-12 (a few roundings).
func TestCertifyEntangledHandCount(t *testing.T) {
	coef := map[string]float64{"XX": 0.5, "ZZ": -0.3, "YY": 0.2, "XI": 0.4, "IZ": 0.1}
	var terms []hamiltonian.Term
	for p, c := range coef {
		terms = append(terms, hamiltonian.Term{Pauli: pauli.MustParse(p), Coeff: c})
	}
	h, err := hamiltonian.New(2, 0, terms)
	if err != nil {
		t.Fatal(err)
	}
	settings := []pauli.Setting{pauli.MustParseSetting("XX|ZZ"), pauli.MustParseSetting("XZ"), pauli.MustParseSetting("ZZ")}
	shots := []int{3, 2, 1}
	const delta = 0.05
	c, err := guarantee.Certify(h, settings, shots, delta, nil)
	if err != nil {
		t.Fatal(err)
	}
	// By hand: N = 3 (XX), 3+1 (ZZ), 3 (YY), 2 (XI), 2+1 (IZ).
	wantN := map[string]int{"XX": 3, "ZZ": 4, "YY": 3, "XI": 2, "IZ": 3}
	for i := range h.Len() {
		p := h.Pauli(i).String()
		if c.Cover[i] != wantN[p] {
			t.Errorf("Cover of %s = %d, want %d", p, c.Cover[i], wantN[p])
		}
	}
	// s_Q = Σ_{i◁Q} |h_i|/N_i per setting; V = Σ_Q m_Q s_Q².
	sBell := 0.5/3 + 0.3/4 + 0.2/3
	sXZ := 0.4/2 + 0.1/3
	sZZ := 0.3/4 + 0.1/3
	wantV := 3*sBell*sBell + 2*sXZ*sXZ + 1*sZZ*sZZ
	if math.Abs(c.Variance-wantV) > 1e-12 {
		t.Errorf("Variance = %.15f, want %.15f", c.Variance, wantV)
	}
	wantR := math.Sqrt(2 * wantV * math.Log(2/delta))
	if math.Abs(c.Radius-wantR) > 1e-12 || math.Abs(c.Bound-wantR) > 1e-12 || c.Bias != 0 {
		t.Errorf("Radius %v, Bound %v, Bias %v; want %v, %v, 0", c.Radius, c.Bound, c.Bias, wantR, wantR)
	}
}

// TestCertifyEntangledCoverage runs plans of general-commutation groups on
// the H2 ground state (Jordan–Wigner) 300 times and counts how often the
// grouped estimate misses the exact energy by more than the certificate's
// Bound at δ = 0.2. The certificate promises a miss probability of at most
// δ per run, and the runs are independent, so the count is at most
// binomial(300, 0.2) in distribution (stochastically dominated). The test
// fails when the count exceeds the smallest k with P(binomial(300, 0.2) > k)
// ≤ 10^-3, computed with gonum's binomial distribution (guarantee.BinomialLimit): a correct
// certificate fails it with probability at most 10^-3 per strategy (three
// strategies: at most 0.3% in all). The threshold is 82 misses (27%). The
// worst-case bound is conservative on this state (no run misses), so the
// count catches gross errors only: a radius 8 times too small gives about
// 140 misses, one 3 times too small still passes. The exact radius is
// checked by TestCertifyEntangledHandCount.
func TestCertifyEntangledCoverage(t *testing.T) {
	if testing.Short() {
		t.Skip("300 simulated runs")
	}
	h, err := hamiltoniantest.Molecule(hamiltoniantest.H2, fermion.JordanWigner)
	if err != nil {
		t.Fatal(err)
	}
	sim, ev, err := estimate.GroundStateSimulator(h, 3, nil)
	if err != nil {
		t.Fatal(err)
	}
	for _, name := range []string{"sorted-gc", "color-gc", "greedy-gc"} {
		a, err := allocate.ByName(name, 0)
		if err != nil {
			t.Fatal(err)
		}
		plan, err := allocate.Run(h, 100, a, nil)
		if err != nil {
			t.Fatal(err)
		}
		cert, err := guarantee.CertifyPlan(h, plan, 0.2, nil)
		if err != nil {
			t.Fatal(err)
		}
		miss := 0
		const runs = 300
		var rec *estimate.Records
		var res *estimate.Result
		for range runs {
			rec = estimate.NewRecords(h.Qubits())
			if err := sim.Run(plan.Settings, plan.Shots, rec); err != nil {
				t.Fatal(err)
			}
			res, err = estimate.Grouped(h, rec, nil)
			if err != nil {
				t.Fatal(err)
			}
			if math.Abs(res.Energy-ev.Energy) > cert.Bound {
				miss++
			}
		}
		// The data-dependent bound reads the last run's shots through the
		// circuits: its energy must be the grouped estimate (1e-12).
		db, err := guarantee.Empirical(h, rec, 0.2, nil)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(db.Energy-res.Energy) > 1e-12 {
			t.Errorf("%s: Empirical energy %v, Grouped %v; want equal", name, db.Energy, res.Energy)
		}
		t.Logf("%s: %d settings, certified %.4f at δ = 0.2, %d of %d runs miss; empirical bound %.4f", name, cert.Settings, cert.Bound, miss, runs, db.Bound)
		if limit := guarantee.BinomialLimit(runs, 0.2, 1e-3); miss > limit {
			t.Errorf("%s: %d of %d runs miss the certified bound %v at δ = 0.2, want at most %d", name, miss, runs, cert.Bound, limit)
		}
	}
}

// TestIIDValueEntangled: the single-shot value of an entangled setting in
// an i.i.d. plan reads each term through the circuit. The Bell state
// (|00⟩+|11⟩)/√2 has XX = ZZ = +1 and YY = −1 (Nielsen & Chuang §2.6), so
// for H = 0.5 XX + 0.3 ZZ + 0.2 YY + 0.1 every shot of XX|ZZ on it has value
// 0.5 + 0.3 − 0.2 + 0.1 = 0.7.
func TestIIDValueEntangled(t *testing.T) {
	h, err := hamiltonian.New(2, 0.1, []hamiltonian.Term{
		{Pauli: pauli.MustParse("XX"), Coeff: 0.5},
		{Pauli: pauli.MustParse("ZZ"), Coeff: 0.3},
		{Pauli: pauli.MustParse("YY"), Coeff: 0.2},
	})
	if err != nil {
		t.Fatal(err)
	}
	s := pauli.MustParseSetting("XX|ZZ")
	d, err := guarantee.NewIID(h, []pauli.Setting{s}, []float64{1})
	if err != nil {
		t.Fatal(err)
	}
	r := complex(1/math.Sqrt2, 0)
	sim, err := estimate.NewSimulator([]complex128{r, 0, 0, r}, 1, nil)
	if err != nil {
		t.Fatal(err)
	}
	rec := estimate.NewRecords(2)
	if err := sim.Run([]pauli.Setting{s}, []int{5}, rec); err != nil {
		t.Fatal(err)
	}
	for k, sh := range rec.Shots() {
		if got := d.Value(0, sh.Outcome); math.Abs(got-0.7) > 1e-12 {
			t.Errorf("shot %d outcome %s: Value = %v, want 0.7", k, sh.Outcome.Format(2), got)
		}
	}
}

// TestBinomialLimit checks binomialLimit against hand values: for
// binomial(1, 1/2), P(X > 0) = 1/2, so the limit at α = 1/2 is 0 and at
// α = 0.4 it is 1; for binomial(300, 0.2) (mean 60, standard deviation
// sqrt(48) ≈ 6.93) the 10^-3 limit lies about 3.1 standard deviations up,
// between 80 and 84.
func TestBinomialLimit(t *testing.T) {
	if got := guarantee.BinomialLimit(1, 0.5, 0.5); got != 0 {
		t.Errorf("guarantee.BinomialLimit(1, 1/2, 1/2) = %d, want 0", got)
	}
	if got := guarantee.BinomialLimit(1, 0.5, 0.4); got != 1 {
		t.Errorf("guarantee.BinomialLimit(1, 1/2, 0.4) = %d, want 1", got)
	}
	if got := guarantee.BinomialLimit(300, 0.2, 1e-3); got < 80 || got > 84 {
		t.Errorf("guarantee.BinomialLimit(300, 0.2, 1e-3) = %d, want 80 to 84", got)
	}
}
