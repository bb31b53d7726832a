package guarantee

import (
	"math"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/hamiltonian/hamiltoniantest"
	"github.com/shotplan/shotplan/pauli"
)

// h2JW returns the 15-term H2 qubit Hamiltonian (STO-3G, R = 0.7414 Å,
// Jordan–Wigner) of hamiltonian/hamiltoniantest, computed outside this project; its
// lowest eigenvalue is −1.137270174657 hartree.
func h2JW(t testing.TB) *hamiltonian.Hamiltonian {
	t.Helper()
	h, _, err := hamiltoniantest.H2Qubit(hamiltoniantest.H2Alt, "jw")
	if err != nil {
		t.Fatal(err)
	}
	return h
}

// runPlan measures a plan on a simulator of h's ground state.
func runPlan(t testing.TB, h *hamiltonian.Hamiltonian, p *allocate.Plan, seed uint64) (*estimate.Records, float64) {
	t.Helper()
	sim, ev, err := estimate.GroundStateSimulator(h, seed, nil)
	if err != nil {
		t.Fatal(err)
	}
	rec := estimate.NewRecords(h.Qubits())
	if err := sim.Run(p.Settings, p.Shots, rec); err != nil {
		t.Fatal(err)
	}
	return rec, ev.Energy
}

// A single term measured m times: the data bound is the empirical
// Bernstein radius of the ±1 samples themselves (the per-shot values are
// those samples divided by m, and the estimate adds m of their mean), which
// is checked against the reference-tested primitive.
func TestEmpiricalSingleTerm(t *testing.T) {
	h := mustH(t, 1, 0.25, 1.0, "Z")
	rec := estimate.NewRecords(1)
	z := pauli.MustParseSetting("Z")
	ones := 0
	for k := range 200 {
		b := pauli.NewBits(1)
		if k%5 == 0 { // 40 outcomes of −1
			b.Set(0, 1)
			ones++
		}
		if err := rec.Add(z, b); err != nil {
			t.Fatal(err)
		}
	}
	mean := 1 - 2*float64(ones)/200
	biased := 1 - mean*mean // the ±1 samples' biased sample variance
	unbiased := biased * 200 / 199
	const delta, tol = 0.05, 1e-12
	cases := []struct {
		form EmpiricalForm
		want float64
	}{
		{PerGroupAMS, EmpiricalBernsteinAMS(200, biased, 2, delta)},
		{PerGroupMP, EmpiricalBernsteinMP(200, unbiased, 2, delta/2)},
	}
	for _, c := range cases {
		b, err := Empirical(h, rec, delta, &EmpiricalOptions{Form: c.form})
		if err != nil {
			t.Fatal(err)
		}
		if !near(b.Radius, c.want, tol) || !near(b.Energy, 0.25+mean, tol) || b.Bias != 0 {
			t.Errorf("Empirical(%v): energy %g radius %.15g bias %g, want %g, %.15g, 0", c.form, b.Energy, b.Radius, b.Bias, 0.25+mean, c.want)
		}
	}
	// The approximate radius is z_{0.975} · (sample sd)/sqrt(m) with
	// z_{0.975} = 1.959963984540054 (standard normal quantile; any table).
	b, _ := Empirical(h, rec, delta, nil)
	if want := 1.959963984540054 * math.Sqrt(unbiased/200); !near(b.ApproxRadius, want, 1e-9) {
		t.Errorf("Empirical.ApproxRadius = %g, want %g", b.ApproxRadius, want)
	}
}

// The estimate the data bound is about is the grouped estimator of the
// estimate package, with and without excluded terms.
func TestEmpiricalMatchesGrouped(t *testing.T) {
	h := h2JW(t)
	p, err := allocate.Run(h, 300, &allocate.Greedy{}, nil)
	if err != nil {
		t.Fatal(err)
	}
	rec, _ := runPlan(t, h, p, 1)
	exclude := make([]bool, h.Len())
	exclude[7] = true // XXYY
	for _, ex := range [][]bool{nil, exclude} {
		g, err := estimate.Grouped(h, rec, &estimate.Options{Exclude: ex})
		if err != nil {
			t.Fatal(err)
		}
		for _, form := range []EmpiricalForm{PerGroupAMS, PerGroupMP, Pooled} {
			b, err := Empirical(h, rec, 0.1, &EmpiricalOptions{Exclude: ex, Form: form})
			if err != nil {
				t.Fatal(err)
			}
			if !near(b.Energy, g.Energy, 1e-12) || !near(b.Bias, g.Bias, 1e-12) {
				t.Errorf("Empirical(%v, exclude %v) energy %.15g bias %g; estimate.Grouped %.15g, %g", form, ex != nil, b.Energy, b.Bias, g.Energy, g.Bias)
			}
		}
	}
}

// The per-group forms add Weight·Radius over the groups, with δ split
// by the shares.
func TestEmpiricalShares(t *testing.T) {
	h := h2JW(t)
	p, err := allocate.Run(h, 300, &allocate.Greedy{}, nil)
	if err != nil {
		t.Fatal(err)
	}
	rec, _ := runPlan(t, h, p, 2)
	shares := make([]float64, rec.Groups())
	for g := range shares {
		shares[g] = float64(g + 1)
	}
	b, err := Empirical(h, rec, 0.1, &EmpiricalOptions{Shares: shares, Form: PerGroupAMS})
	if err != nil {
		t.Fatal(err)
	}
	sumD, sumR := 0.0, 0.0
	total := float64(len(shares)*(len(shares)+1)) / 2
	for g, gb := range b.Groups {
		if !near(gb.Delta, 0.1*shares[g]/total, 1e-14) {
			t.Errorf("group %d: δ share %g, want %g", g, gb.Delta, 0.1*shares[g]/total)
		}
		sumD += gb.Delta
		sumR += gb.Weight * gb.Radius
	}
	if !near(sumD, 0.1, 1e-14) || !near(sumR, b.Radius, 1e-12) {
		t.Errorf("Σ shares = %g (want 0.1), Σ weight·radius = %g (want Radius %g)", sumD, sumR, b.Radius)
	}
	// Pooled: the variance bounds share δ/2 in the same proportions.
	pooled, err := Empirical(h, rec, 0.1, &EmpiricalOptions{Shares: shares})
	if err != nil {
		t.Fatal(err)
	}
	for g, gb := range pooled.Groups {
		if want := 0.05 * shares[g] / total; !near(gb.Delta, want, 1e-14) {
			t.Errorf("pooled group %d: δ share %g, want %g", g, gb.Delta, want)
		}
	}
}

func TestEmpiricalErrors(t *testing.T) {
	h := mustH(t, 2, 0, 1.0, "ZI")
	rec := estimate.NewRecords(2)
	if err := rec.Add(pauli.MustParseSetting("ZZ"), pauli.NewBits(2)); err != nil {
		t.Fatal(err)
	}
	cases := []struct {
		name string
		err  error
		want string
	}{
		{"δ", second(Empirical(h, rec, 1.5, nil)), "δ = 1.5"},
		{"width", second(Empirical(mustH(t, 3, 0, 1.0, "ZII"), rec, 0.1, nil)), "records have 2 qubits, Hamiltonian has 3"},
		{"empty", second(Empirical(h, estimate.NewRecords(2), 0.1, nil)), "no shots"},
		{"exclude", second(Empirical(h, rec, 0.1, &EmpiricalOptions{Exclude: []bool{true, false}})), "exclusion list has 2 entries, Hamiltonian has 1 terms"},
		{"shares", second(Empirical(h, rec, 0.1, &EmpiricalOptions{Shares: []float64{1, 2}})), "2 δ shares for 1 groups"},
		{"negative share", second(Empirical(h, rec, 0.1, &EmpiricalOptions{Shares: []float64{-1}})), "δ share 0 is -1"},
		{"form", second(Empirical(h, rec, 0.1, &EmpiricalOptions{Form: 7})), "unknown empirical form 7"},
	}
	for _, c := range cases {
		if c.err == nil || !strings.Contains(c.err.Error(), c.want) {
			t.Errorf("%s: error %v, want one containing %q", c.name, c.err, c.want)
		}
	}
}
