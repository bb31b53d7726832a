package guarantee

import (
	"errors"
	"math"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/pauli"
)

// coverageTarget is, per system, a target radius that the betting sequence
// reaches after a few thousand shots of the greedy plan's distribution.
var coverageTarget = map[string]float64{"H2 (JW)": 0.1, "LiH (JW)": 0.2, "TFIM ring (10 qubits)": 0.5}

// TestAnytimeCoverage runs the anytime driver 1000 times per system and
// method at δ = 0.05, each run stopping as soon as its own interval is
// narrow enough (a data-dependent stopping time), and counts the runs whose
// certified interval misses the exact ground energy. The miss fraction
// must be at most δ + 3·sqrt(δ(1−δ)/1000) ≈ 0.071: if the true miss rate
// were δ, this fails with probability about 0.15% (binomial, 3-sigma);
// a confidence sequence's true rate is usually far below δ. Under -short,
// 40 runs on H2 only.
func TestAnytimeCoverage(t *testing.T) {
	systems := anytimeSystems(t)
	runs := 1000
	if testing.Short() {
		systems, runs = systems[:1], 40
	}
	const delta = 0.05
	for _, sys := range systems {
		_, d := greedyIID(t, sys.h, 1000)
		for _, c := range []struct {
			name   string
			method AnytimeMethod
			pilot  int
		}{
			{"betting aimed at the target", Betting, 0},
			{"bernstein epochs", BernsteinEpochs, 0},
			{"betting after a pilot", Betting, 300},
		} {
			if c.method == BernsteinEpochs && sys.h.Qubits() > 4 {
				// The epoch bound needs more shots for the same target;
				// one system keeps the check affordable.
				continue
			}
			if c.pilot > 0 && sys.h.Len() > 100 {
				// Re-weighting LiH's 841 settings after every pilot costs
				// about 0.4 s a run; the pilot's role is the same on
				// the smaller systems.
				continue
			}
			t.Run(sys.name+"/"+c.name, func(t *testing.T) {
				dev := newTableDevice(t, sys.state, 77)
				target := coverageTarget[sys.name]
				if c.method == BernsteinEpochs {
					target *= 1.5
				}
				miss, shots := 0, 0
				for r := range runs {
					res, err := Anytime(sys.h, dev, &AnytimeOptions{Plan: d, Delta: delta, Target: target,
						MaxShots: 200000, Method: c.method, Pilot: c.pilot, Seed: uint64(r), FirstRound: 50, Growth: 1.2})
					if err != nil {
						t.Fatal(err)
					}
					if !res.Certified {
						t.Fatalf("run %d: not certified after %d shots (bound %v)", r, res.Shots, res.Bound)
					}
					shots += res.Shots
					if sys.energy < res.Interval[0] || sys.energy > res.Interval[1] {
						miss++
					}
				}
				limit := delta + 3*math.Sqrt(delta*(1-delta)/float64(runs))
				t.Logf("%d of %d intervals missed E (limit %.3f); mean stopping time %d shots", miss, runs, limit, shots/runs)
				if f := float64(miss) / float64(runs); f > limit {
					t.Errorf("%s, %s: missed the exact energy in %d of %d runs (%.3f), want at most %.3f", sys.name, c.name, miss, runs, f, limit)
				}
			})
		}
	}
}

// TestAnytimeSimulator runs the driver on the state-vector simulator to a
// target, and checks that the same seeds give the same result.
func TestAnytimeSimulator(t *testing.T) {
	sys := anytimeSystems(t)[0]
	_, d := greedyIID(t, sys.h, 40)
	run := func() *AnytimeResult {
		sim, err := estimate.NewSimulator(sys.state, 5, nil)
		if err != nil {
			t.Fatal(err)
		}
		res, err := Anytime(sys.h, sim, &AnytimeOptions{Plan: d, Delta: 0.05, Target: 0.05, MaxShots: 1000000, Seed: 8, Pilot: 500})
		if err != nil {
			t.Fatal(err)
		}
		return res
	}
	res := run()
	if !res.Certified || res.Bound > 0.05 {
		t.Fatalf("Certified = %v with bound %v after %d shots, want certified at 0.05", res.Certified, res.Bound, res.Shots)
	}
	if res.Pilot.Len() != 500 || res.Records.Len() != res.Shots || res.PilotShots != 500 {
		t.Errorf("pilot records %d, certified records %d of %d shots, want 500 and all", res.Pilot.Len(), res.Records.Len(), res.Shots)
	}
	if math.Abs(res.Estimate-(res.Interval[0]+res.Interval[1])/2) > 1e-12 || res.Mean < res.Interval[0] || res.Mean > res.Interval[1] {
		t.Errorf("estimate %v, mean %v, interval %v: want the midpoint and a mean inside", res.Estimate, res.Mean, res.Interval)
	}
	if sys.energy < res.Interval[0] || sys.energy > res.Interval[1] {
		t.Errorf("exact %v outside the certified interval %v (probability ≤ 0.05)", sys.energy, res.Interval)
	}
	if again := run(); again.Shots != res.Shots || again.Interval != res.Interval {
		t.Errorf("same seeds gave %d shots and %v, then %d and %v", res.Shots, res.Interval, again.Shots, again.Interval)
	}
	for k := 1; k < len(res.History); k++ {
		if res.History[k] > res.History[k-1] {
			t.Errorf("radius grew from %v to %v at round %d; the intervals are intersected and must not widen", res.History[k-1], res.History[k], k+1)
		}
	}
}

// brokenDevice fails, or records too few shots.
type brokenDevice struct{ short bool }

func (f brokenDevice) Run(settings []pauli.Setting, shots []int, rec *estimate.Records) error {
	if !f.short {
		return errors.New("hardware offline")
	}
	return rec.Add(settings[0], pauli.NewBits(settings[0].Qubits()))
}

func TestAnytimeErrors(t *testing.T) {
	sys := anytimeSystems(t)[0]
	_, d := greedyIID(t, sys.h, 40)
	other := mustH(t, 4, 0, 1.0, "ZIII")
	good := AnytimeOptions{Plan: d, Delta: 0.05, Target: 0.1, MaxShots: 1000}
	sim, err := estimate.NewSimulator(sys.state, 1, nil)
	if err != nil {
		t.Fatal(err)
	}
	for _, c := range []struct {
		name string
		edit func(s *AnytimeOptions)
		dev  estimate.Device
		want string
	}{
		{"delta", func(s *AnytimeOptions) { s.Delta = 0 }, sim, "Delta = 0"},
		{"target", func(s *AnytimeOptions) { s.Target = -1 }, sim, "Target = -1"},
		{"max shots", func(s *AnytimeOptions) { s.MaxShots = 0 }, sim, "MaxShots = 0"},
		{"pilot", func(s *AnytimeOptions) { s.Pilot = 1000 }, sim, "Pilot = 1000"},
		{"growth", func(s *AnytimeOptions) { s.Growth = 0.5 }, sim, "Growth = 0.5"},
		{"method", func(s *AnytimeOptions) { s.Method = 7 }, sim, "unknown method 7"},
		{"plan", func(s *AnytimeOptions) { s.Plan = nil }, sim, "nil Hamiltonian, device, options or plan"},
		{"plan built by hand", func(s *AnytimeOptions) { s.Plan = &IID{} }, sim, "not made by NewIID"},
		{"device fails", func(s *AnytimeOptions) {}, brokenDevice{}, "round 1: hardware offline"},
		{"device records too few", func(s *AnytimeOptions) {}, brokenDevice{short: true}, "did not record"},
	} {
		s := good
		c.edit(&s)
		_, err := Anytime(sys.h, c.dev, &s)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: Anytime error = %v, want one containing %q", c.name, err, c.want)
		}
	}
	if _, err := Anytime(other, sim, &good); err == nil || !strings.Contains(err.Error(), "another Hamiltonian") {
		t.Errorf("plan for another Hamiltonian: error = %v", err)
	}
}
