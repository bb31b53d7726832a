package guarantee

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/pauli"
)

// referenceWidth is 2 max_Q Σ_{i◁Q} |h_i|/f_i of MATH.md §4.1, letter by
// letter with Setting.Covers.
func referenceWidth(terms []float64, ps []pauli.String, settings []pauli.Setting, w []float64) float64 {
	total := 0.0
	for _, v := range w {
		total += v
	}
	f := make([]float64, len(ps))
	for k, s := range settings {
		for i, p := range ps {
			if s.Covers(p) {
				f[i] += w[k] / total
			}
		}
	}
	best := 0.0
	for k, s := range settings {
		if w[k] == 0 {
			continue
		}
		sum := 0.0
		for i, p := range ps {
			if s.Covers(p) && f[i] > 0 {
				sum += math.Abs(terms[i]) / f[i]
			}
		}
		best = max(best, 2*sum)
	}
	return best
}

func TestIIDWidthExact(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	for c := range 20 {
		h := randomH(t, rng, 6, 25, 3)
		settings, shots := randomPlan(rng, 6, 12, 5)
		w := make([]float64, len(shots))
		for k, m := range shots {
			w[k] = float64(m)
		}
		w[0]++ // at least one positive weight
		d, err := NewIID(h, settings, w)
		if err != nil {
			t.Fatal(err)
		}
		var ps []pauli.String
		for i := range h.Len() {
			ps = append(ps, h.Pauli(i))
		}
		want := referenceWidth(h.Coeffs(), ps, settings, w)
		if !near(d.Dist.Width, want, 1e-12) {
			t.Errorf("case %d: Width = %v, want %v (letter-level maximum over the support)", c, d.Dist.Width, want)
		}
		// Every single-shot value of every outcome lies in the range,
		// and some setting reaches its end (the maximum is attained by
		// the all-agreeing outcome only when signs allow, so check the
		// bound only).
		lo, hi := d.Range()
		for k := range d.Settings {
			for range 20 {
				b := pauli.Bits{rng.Uint64() & (1<<6 - 1)}
				if x := d.Value(k, b); x < lo-1e-9 || x > hi+1e-9 {
					t.Fatalf("case %d: Value = %v outside [%v, %v]", c, x, lo, hi)
				}
			}
		}
	}
}

// TestIIDUnbiased checks E[X] = E exactly (MATH.md §4.1) by summing over
// settings and outcomes with the Born probabilities, and Var(X) against
// IID.Variance with exact expectation values.
func TestIIDUnbiased(t *testing.T) {
	for _, sys := range anytimeSystems(t)[:1] {
		p, d := greedyIID(t, sys.h, 40)
		sim, err := estimate.NewSimulator(sys.state, 1, nil)
		if err != nil {
			t.Fatal(err)
		}
		// π(Q) = m_Q/N from the plan.
		settings, shots := p.Distinct()
		for k, s := range settings {
			j, ok := d.Index(s)
			if !ok || !near(d.Prob[j], float64(shots[k])/float64(p.TotalShots()), 1e-12) {
				t.Errorf("Prob of %s = %v, want m_Q/N = %v", s, d.Prob[j], float64(shots[k])/float64(p.TotalShots()))
			}
		}
		m1, m2 := 0.0, 0.0
		for k, s := range d.Settings {
			probs := sim.Probabilities(nil, s)
			for a, pr := range probs {
				x := d.Value(k, pauli.Bits{uint64(a)})
				m1 += d.Prob[k] * pr * x
				m2 += d.Prob[k] * pr * x * x
			}
		}
		if math.Abs(m1-sys.energy) > 1e-10 {
			t.Errorf("%s: E[X] = %.12f, want the ground energy %.12f (tolerance 1e-10)", sys.name, m1, sys.energy)
		}
		mean, second := exactMoments(sys.h, sys.state)
		if got, want := d.Variance(mean, second), m2-m1*m1; math.Abs(got-want) > 1e-9 {
			t.Errorf("%s: Variance = %v, want %v by enumeration (tolerance 1e-9)", sys.name, got, want)
		}
	}
}

// TestIIDDraw checks the draw frequencies. Each count is within 5 standard
// deviations of its expectation except with probability about 6e-7 per
// setting.
func TestIIDDraw(t *testing.T) {
	h := mustH(t, 3, 0, 1.0, "ZII", 0.5, "XXI", 0.25, "IIY")
	d, err := NewIID(h, []pauli.Setting{pauli.MustParseSetting("ZZZ"), pauli.MustParseSetting("XXY"), pauli.MustParseSetting("ZZZ")},
		[]float64{1, 2, 1})
	if err != nil {
		t.Fatal(err)
	}
	if len(d.Settings) != 2 || d.Prob[0] != 0.5 || d.Prob[1] != 0.5 {
		t.Fatalf("merged support %v with %v, want ZZZ, XXY with 1/2 each", d.Settings, d.Prob)
	}
	rng := rand.New(rand.NewPCG(1, 2))
	const n = 100000
	counts := make([]int, 2)
	for range n {
		counts[d.Draw(rng)]++
	}
	for k, c := range counts {
		want := n * d.Prob[k]
		if sd := math.Sqrt(n * d.Prob[k] * (1 - d.Prob[k])); math.Abs(float64(c)-want) > 5*sd {
			t.Errorf("setting %s drawn %d times in %d, want %v ± 5·%.0f", d.Settings[k], c, n, want, sd)
		}
	}
}

// TestIIDGroupedOnSameData runs the anytime driver on the state-vector
// simulator and then the grouped estimator and the randomised data bound on
// the same records.
func TestIIDGroupedOnSameData(t *testing.T) {
	sys := anytimeSystems(t)[0]
	_, d := greedyIID(t, sys.h, 40)
	sim, err := estimate.NewSimulator(sys.state, 11, nil)
	if err != nil {
		t.Fatal(err)
	}
	res, err := Anytime(sys.h, sim, &AnytimeOptions{Plan: d, Delta: 0.05, MaxShots: 20000, Seed: 3})
	if err != nil {
		t.Fatal(err)
	}
	if res.Records.Len() != res.Shots || res.Shots != 20000 {
		t.Fatalf("records hold %d shots, result says %d, want 20000", res.Records.Len(), res.Shots)
	}
	g, err := estimate.Grouped(sys.h, res.Records, nil)
	if err != nil {
		t.Fatal(err)
	}
	// Six standard errors: a false failure has probability about 2e-9
	// under the normal approximation.
	if math.Abs(g.Energy-sys.energy) > 6*g.StdErr {
		t.Errorf("grouped estimate %v ± %v on the anytime records, exact %v", g.Energy, g.StdErr, sys.energy)
	}
	if sys.energy < res.Interval[0] || sys.energy > res.Interval[1] {
		t.Errorf("exact %v outside the certified interval %v (probability ≤ 0.05)", sys.energy, res.Interval)
	}
	b, err := RandomizedBound(sys.h, res.Records, res.Plan.Dist, 0.05, nil)
	if err != nil {
		t.Fatalf("RandomizedBound on the anytime records: %v", err)
	}
	if math.Abs(b.Energy-res.Mean) > 1e-9*math.Max(1, math.Abs(res.Mean)) {
		t.Errorf("RandomizedBound estimate %v, want the mean of the single-shot values %v", b.Energy, res.Mean)
	}
}

func TestIIDErrors(t *testing.T) {
	h := mustH(t, 2, 0, 1.0, "ZI", 1.0, "IX")
	zz := pauli.MustParseSetting("ZZ")
	for _, c := range []struct {
		name     string
		settings []pauli.Setting
		w        []float64
		want     string
	}{
		{"lengths", []pauli.Setting{zz}, []float64{1, 2}, "1 settings but 2 weights"},
		{"negative", []pauli.Setting{zz}, []float64{-1}, "weight -1"},
		{"all zero", []pauli.Setting{zz}, []float64{0}, "positive total"},
		{"width", []pauli.Setting{pauli.MustParseSetting("ZZZ")}, []float64{1}, "has 3 qubits"},
	} {
		_, err := NewIID(h, c.settings, c.w)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: NewIID error = %v, want one containing %q", c.name, err, c.want)
		}
	}
	d, err := NewIID(h, []pauli.Setting{zz}, []float64{1})
	if err != nil {
		t.Fatal(err)
	}
	// IX is never covered: its |h| is the bias.
	if d.Bias != 1 || d.Dist.Width != 2 {
		t.Errorf("Bias, Width = %v, %v, want 1, 2", d.Bias, d.Dist.Width)
	}
}
