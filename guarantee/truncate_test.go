package guarantee

import (
	"math"
	"math/rand/v2"
	"testing"
)

// bruteForceOptimum tries every dropped set of all covered terms (uncovered
// ones always dropped) and returns the smallest bias + radius; it does not
// use the candidate reduction, so it checks it.
func bruteForceOptimum(c *coverage, a []float64, delta float64) float64 {
	m := len(c.cover)
	best := math.Inf(1)
	drop := make([]bool, m)
	for code := 0; code < 1<<m; code++ {
		ok := true
		for i := range m {
			drop[i] = code>>i&1 == 1
			if c.cover[i] == 0 && !drop[i] {
				ok = false
			}
		}
		if !ok {
			continue
		}
		best = min(best, evaluate(c, a, nil, drop, delta, "").Bound)
	}
	return best
}

func TestOptimalTruncationExact(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	found := 0
	for trial := range 300 {
		n := 2 + rng.IntN(4)
		h := randomH(t, rng, n, 2+rng.IntN(10), 2)
		settings, shots := randomPlan(rng, n, 1+rng.IntN(8), 4)
		delta := []float64{0.5, 0.1, 0.01}[rng.IntN(3)]
		c, err := newCoverage(h, settings, shots)
		if err != nil {
			t.Fatal(err)
		}
		cert := certify(c, delta, nil)
		want := bruteForceOptimum(c, c.weights(), delta)
		if !near(cert.Optimal.Bound, want, 1e-12) || !cert.Optimal.Exact {
			t.Errorf("trial %d: Optimal.Bound = %.15g (exact %v), brute force over all subsets %.15g", trial, cert.Optimal.Bound, cert.Optimal.Exact, want)
		}
		if cert.Optimal.Bound > cert.Threshold.Bound*(1+1e-12) || cert.Optimal.Bound > cert.Bound*(1+1e-12) {
			t.Errorf("trial %d: Optimal.Bound = %g above threshold %g or none dropped %g", trial, cert.Optimal.Bound, cert.Threshold.Bound, cert.Bound)
		}
		if cert.Optimal.Bound < cert.Bound*(1-1e-9) {
			found++
		}
		// The threshold rule drops exactly the terms with N_i < 2 ln(2/δ).
		for i, n := range cert.Cover {
			if want := float64(n) < 2*math.Log(2/delta); cert.Threshold.Drop[i] != want {
				t.Fatalf("trial %d: Threshold.Drop[%d] = %v with N_i = %d, want %v", trial, i, cert.Threshold.Drop[i], n, want)
			}
		}
	}
	if found == 0 {
		t.Errorf("no trial where dropping terms helped: the test does not exercise the search")
	}
}

// With enumeration switched off (Enumerate 1), branch and bound finds the
// brute-force optimum and says so.
func TestOptimalTruncationBranchAndBound(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 14))
	for trial := range 100 {
		n := 3 + rng.IntN(3)
		h := randomH(t, rng, n, 6+rng.IntN(8), 2)
		settings, shots := randomPlan(rng, n, 3+rng.IntN(6), 3)
		c, err := newCoverage(h, settings, shots)
		if err != nil {
			t.Fatal(err)
		}
		cert := certify(c, 0.05, &Options{Enumerate: 1})
		want := bruteForceOptimum(c, c.weights(), 0.05)
		if o := cert.Optimal; !o.Exact || !near(o.Bound, want, 1e-12) || !near(o.Lower, want, 1e-12) {
			t.Errorf("trial %d: branch and bound = %.15g (lower %.15g, exact %v), brute force %.15g", trial, o.Bound, o.Lower, o.Exact, want)
		}
	}
}

// With the branch and bound cut off at once, the local search and the lower
// bounds still bracket the brute-force optimum.
func TestOptimalTruncationBracket(t *testing.T) {
	rng := rand.New(rand.NewPCG(15, 16))
	inexact := 0
	for trial := range 100 {
		n := 3 + rng.IntN(3)
		h := randomH(t, rng, n, 6+rng.IntN(8), 2)
		settings, shots := randomPlan(rng, n, 3+rng.IntN(6), 3)
		c, err := newCoverage(h, settings, shots)
		if err != nil {
			t.Fatal(err)
		}
		cert := certify(c, 0.05, &Options{Enumerate: 1, searchSteps: -1})
		want := bruteForceOptimum(c, c.weights(), 0.05)
		o := cert.Optimal
		if o.Bound < want*(1-1e-12) || o.Lower > want*(1+1e-9) {
			t.Errorf("trial %d: found %.12g, lower bound %.12g, true optimum %.12g: not bracketed", trial, o.Bound, o.Lower, want)
		}
		if o.Exact && !near(o.Bound, want, 1e-9) {
			t.Errorf("trial %d: Exact claimed at %.12g, optimum %.12g", trial, o.Bound, want)
		}
		if !o.Exact {
			inexact++
		}
	}
	if inexact == 0 {
		t.Errorf("no trial left inexact: the cut-off path is not exercised")
	}
}

// MATH.md §3.3: at δ = 0.05 the threshold is c² = 2 ln 40 ≈ 7.38, so a term
// covered 7 times is dropped and one covered 8 times is kept.
func TestThresholdAtDelta005(t *testing.T) {
	h := mustH(t, 2, 0, 1.0, "ZI", 1.0, "IX")
	c, err := Certify(h, settingsOf("ZZ", "ZX"), []int{0, 7}, 0.05, nil)
	if err != nil {
		t.Fatal(err)
	}
	if !c.Threshold.Drop[0] || !c.Threshold.Drop[1] {
		t.Errorf("N = (7, 7) at δ = 0.05: Threshold.Drop = %v, want both dropped (7 < 7.38)", c.Threshold.Drop)
	}
	c, err = Certify(h, settingsOf("ZZ", "ZX"), []int{1, 7}, 0.05, nil)
	if err != nil {
		t.Fatal(err)
	}
	if c.Threshold.Drop[0] || !c.Threshold.Drop[1] {
		t.Errorf("N = (8, 7) at δ = 0.05: Threshold.Drop = %v, want [false true] (8 > 7.38 > 7)", c.Threshold.Drop)
	}
}
