package guarantee_test

import (
	"math"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/guarantee"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// oneX is H = 0.5 X on one qubit.
func oneX(t *testing.T) *hamiltonian.Hamiltonian {
	t.Helper()
	h, err := hamiltonian.New(1, 0, []hamiltonian.Term{{Pauli: pauli.MustParse("X"), Coeff: 0.5}})
	if err != nil {
		t.Fatal(err)
	}
	return h
}

// TestCertifyIIDByHand: for H = 0.5 X and uniform random bases, X is
// covered with probability 1/3 (MATH.md §5.3), the single-shot value is
// 0.5·3·s (s = ±1) or 0, so the width is 2·1.5 = 3; Hoeffding's radius for
// N = 100, δ = 0.05 is 3·sqrt(ln 40/200) = 0.4074304547 (worked by hand
// from Hoeffding 1963 with a calculator, not by this code).
func TestCertifyIIDByHand(t *testing.T) {
	h := oneX(t)
	sp, err := allocate.NewSeedPlan(h, 100, &allocate.Random{Seed: 1})
	if err != nil {
		t.Fatal(err)
	}
	d, err := guarantee.SeedDistribution(h, sp)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(d.Cover[0]-1.0/3) > 1e-15 || math.Abs(d.Width-3) > 1e-12 {
		t.Errorf("cover %v, width %v; want 1/3 and 3", d.Cover[0], d.Width)
	}
	c, err := guarantee.CertifyIID(h, d, 100, 0.05)
	if err != nil {
		t.Fatal(err)
	}
	// 1e-9: the hand value's rounding.
	if math.Abs(c.Radius-0.4074304547) > 1e-9 || c.Bias != 0 || c.Bound != c.Radius {
		t.Errorf("radius %v bias %v bound %v, want 0.4074304547, 0, the radius", c.Radius, c.Bias, c.Bound)
	}
}

// TestSeedDistributionImportance: importance sampling on H = 1·Z0 Z1 +
// 0.5·X0 with fill Z draws ZZ (weight 1) or XZ (weight 0.5), so ZZ is
// covered with probability 2/3 and X0 (covered by XZ only) 1/3; the width
// is 2·max(1/(2/3), 0.5/(1/3)) = 3 (worked by hand from MATH.md §4.1).
func TestSeedDistributionImportance(t *testing.T) {
	h, err := hamiltonian.New(2, 0, []hamiltonian.Term{{Pauli: pauli.MustParse("ZZ"), Coeff: 1}, {Pauli: pauli.MustParse("XI"), Coeff: -0.5}})
	if err != nil {
		t.Fatal(err)
	}
	sp, err := allocate.NewSeedPlan(h, 10, &allocate.Importance{Seed: 1})
	if err != nil {
		t.Fatal(err)
	}
	d, err := guarantee.SeedDistribution(h, sp)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(d.Cover[0]-2.0/3) > 1e-15 || math.Abs(d.Cover[1]-1.0/3) > 1e-15 || math.Abs(d.Width-3) > 1e-12 {
		t.Errorf("cover %v, width %v; want [2/3 1/3] and 3", d.Cover, d.Width)
	}
}

// TestCertifyIIDCoverage measures the state |+⟩ (⟨X⟩ = 1, so E = 0.5 for
// H = 0.5 X) with 200 seed plans of 100 uniformly random shots each: a
// shot read in X gives +1 exactly, so X_n = 1.5 if the shot's basis is X
// and 0 otherwise, and the mean must lie within the certificate's bound
// of E in at least 1 − δ of the plans. With δ = 0.05 the number of misses
// is at most Binomial(200, 0.05); more than 24 has probability 2.6e-5
// (the binomial tail), the test's false-failure rate.
func TestCertifyIIDCoverage(t *testing.T) {
	h := oneX(t)
	const shots, plans, delta = 100, 200, 0.05
	misses := 0
	for seed := range uint64(plans) {
		sp, err := allocate.NewSeedPlan(h, shots, &allocate.Random{Seed: seed})
		if err != nil {
			t.Fatal(err)
		}
		d, err := guarantee.SeedDistribution(h, sp)
		if err != nil {
			t.Fatal(err)
		}
		c, err := guarantee.CertifyIID(h, d, shots, delta)
		if err != nil {
			t.Fatal(err)
		}
		st, err := sp.Stream()
		if err != nil {
			t.Fatal(err)
		}
		sum := 0.0
		for st.Next() {
			if st.Letters()[0] == pauli.X {
				sum += 1.5 * float64(st.Shots())
			}
		}
		if math.Abs(sum/shots-0.5) > c.Bound {
			misses++
		}
	}
	if misses > 24 {
		t.Errorf("%d of %d plans missed the certified bound, want at most 24", misses, plans)
	}
}
