package guarantee

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/pauli"
)

// TestDriftTestWorked checks a 2×2 table worked by hand. Round 1: 30 odd of
// 100; round 2: 50 of 100. The pooled fraction is 0.4, expected 40 odd per
// round, and Pearson's statistic is (−10)²/(100·0.4·0.6) + 10²/24 = 25/3
// with one degree of freedom, whose tail is erfc(√(x/2)) (the chi-square
// distribution with one degree of freedom is that of a squared standard
// normal; common practice). A second, stationary setting (20 of 100 both
// rounds, statistic 0, p-value 1) doubles the Bonferroni-adjusted p-value.
func TestDriftTestWorked(t *testing.T) {
	s1, s2 := pauli.MustParseSetting("ZZ"), pauli.MustParseSetting("XX")
	counts := []DriftCounts{
		{Setting: s2, Shots: []int{100, 100}, Odd: []int{20, 20}},
		{Setting: s1, Shots: []int{100, 100}, Odd: []int{30, 50}},
	}
	res, err := DriftTest(counts, 0.01)
	if err != nil {
		t.Fatal(err)
	}
	p := math.Erfc(math.Sqrt(25.0 / 3 / 2))
	if res.Tested != 2 || res.Setting != 1 || math.Abs(res.PValue-2*p) > 1e-12 || !res.Rejected {
		t.Errorf("DriftTest = %+v, want 2 tested, setting 1, p-value 2·%.6g = %.6g, rejected at 0.01", res, p, 2*p)
	}
	if res, _ := DriftTest(counts, 0.005); res.Rejected {
		t.Errorf("rejected at level 0.005 with p-value %v", res.PValue)
	}
	// Too few expected outcomes (4 odd expected in round 1) and a single
	// round are not tested.
	res, err = DriftTest([]DriftCounts{
		{Setting: s1, Shots: []int{10, 100}, Odd: []int{0, 44}},
		{Setting: s2, Shots: []int{0, 100}, Odd: []int{0, 50}},
	}, 0.01)
	if err != nil || res.Tested != 0 || res.PValue != 1 || res.Setting != -1 || res.Rejected {
		t.Errorf("untestable counts: %+v, %v", res, err)
	}
	for _, bad := range [][]DriftCounts{
		{{Setting: s1, Shots: []int{10}, Odd: []int{11}}},
		{{Setting: s1, Shots: []int{10, 10}, Odd: []int{1}}},
		{{Setting: s1, Shots: []int{-1}, Odd: []int{0}}},
	} {
		if _, err := DriftTest(bad, 0.01); err == nil {
			t.Errorf("DriftTest(%+v): no error", bad)
		}
	}
	if _, err := DriftTest(counts, 0); err == nil {
		t.Error("level 0: no error")
	}
}

// TestDriftTestLevel checks the false rejection rate on stationary data:
// 400 seeded experiments of 5 settings × 8 rounds × 120 shots, each
// setting's parity odd with a fixed probability (0.1 to 0.5), tested at
// level 0.05. If the test holds its level, the rejections are at most
// Binomial(400, 0.05); the test fails only beyond the count k with
// P(Binomial(400, 0.05) ≥ k) ≤ 1e-6 (false-failure rate ≤ 1e-6 per run
// when the level holds).
func TestDriftTestLevel(t *testing.T) {
	const trials, level = 400, 0.05
	rng := rand.New(rand.NewPCG(5, 9))
	probs := []float64{0.1, 0.2, 0.3, 0.4, 0.5}
	rejected := 0
	for range trials {
		counts := make([]DriftCounts, len(probs))
		for k, p := range probs {
			c := DriftCounts{Shots: make([]int, 8), Odd: make([]int, 8)}
			for r := range c.Shots {
				c.Shots[r] = 120
				for range 120 {
					if rng.Float64() < p {
						c.Odd[r]++
					}
				}
			}
			counts[k] = c
		}
		res, err := DriftTest(counts, level)
		if err != nil {
			t.Fatal(err)
		}
		if res.Rejected {
			rejected++
		}
	}
	b := distuv.Binomial{N: trials, P: level}
	limit := 0
	for b.Survival(float64(limit)-0.5) > 1e-6 { // P(X ≥ limit)
		limit++
	}
	if rejected >= limit {
		t.Errorf("%d of %d stationary experiments rejected at level %v; P(Bin ≥ %d) ≤ 1e-6", rejected, trials, level, limit)
	}
	t.Logf("%d of %d rejected (limit %d)", rejected, trials, limit)
}

// TestSequentialDrift runs Sequential on the H2 ground state twice: with
// stationary readout error the drift test at level 1e-6 does not reject
// (false-failure rate ≤ 1e-6 up to the chi-square approximation); with the
// readout rates of every qubit rising by 0.02 a round (0 to 0.18 over ten
// rounds, which moves every Z parity by far more than its standard error of
// about 0.02 per round) it rejects at the same level.
func TestSequentialDrift(t *testing.T) {
	h := h2JW(t)
	base, err := allocate.Run(h, 400, &allocate.Greedy{}, nil)
	if err != nil {
		t.Fatal(err)
	}
	ro := make([]estimate.Readout, h.Qubits())
	drift := make([]estimate.Readout, h.Qubits())
	for q := range ro {
		ro[q] = estimate.Readout{P01: 0.02, P10: 0.03}
		drift[q] = estimate.Readout{P01: 0.02, P10: 0.02}
	}
	for _, tc := range []struct {
		drift  []estimate.Readout
		reject bool
	}{{nil, false}, {drift, true}} {
		sim, _, err := estimate.GroundStateSimulator(h, 3, &estimate.SimulatorOptions{Readout: ro, ReadoutDrift: tc.drift})
		if err != nil {
			t.Fatal(err)
		}
		s := &SequentialOptions{Settings: base.Settings, Shots: base.Shots, Target: 1e-6, Delta: 0.05, MaxShots: 4000, DriftLevel: 1e-6}
		res, err := Sequential(h, sim, s)
		if err != nil {
			t.Fatal(err)
		}
		if res.Rounds != 10 || res.Drift.Tested == 0 {
			t.Fatalf("drift %v: %d rounds, %d settings tested", tc.drift != nil, res.Rounds, res.Drift.Tested)
		}
		if res.Drift.Rejected != tc.reject {
			t.Errorf("drift %v: %+v, want rejected %v", tc.drift != nil, res.Drift, tc.reject)
		}
		t.Logf("drift %v: %+v", tc.drift != nil, res.Drift)
	}
}

// TestAnytimeDrift does the same with Anytime: equal rounds of 400 shots
// drawn from the plan's distribution.
func TestAnytimeDrift(t *testing.T) {
	h := h2JW(t)
	base, err := allocate.Run(h, 400, &allocate.Greedy{}, nil)
	if err != nil {
		t.Fatal(err)
	}
	d, err := IIDOf(h, base)
	if err != nil {
		t.Fatal(err)
	}
	ro := make([]estimate.Readout, h.Qubits())
	drift := make([]estimate.Readout, h.Qubits())
	for q := range ro {
		ro[q] = estimate.Readout{P01: 0.02, P10: 0.03}
		drift[q] = estimate.Readout{P01: 0.02, P10: 0.02}
	}
	for _, tc := range []struct {
		drift  []estimate.Readout
		reject bool
	}{{nil, false}, {drift, true}} {
		sim, _, err := estimate.GroundStateSimulator(h, 4, &estimate.SimulatorOptions{Readout: ro, ReadoutDrift: tc.drift})
		if err != nil {
			t.Fatal(err)
		}
		res, err := Anytime(h, sim, &AnytimeOptions{Plan: d, Delta: 0.05, MaxShots: 4000, FirstRound: 400, Growth: 1, Seed: 2, DriftLevel: 1e-6})
		if err != nil {
			t.Fatal(err)
		}
		if res.Rounds != 10 || res.Drift.Tested == 0 {
			t.Fatalf("drift %v: %d rounds, %d settings tested", tc.drift != nil, res.Rounds, res.Drift.Tested)
		}
		if res.Drift.Rejected != tc.reject {
			t.Errorf("drift %v: %+v, want rejected %v", tc.drift != nil, res.Drift, tc.reject)
		}
		t.Logf("drift %v: %+v", tc.drift != nil, res.Drift)
	}
}
