package guarantee

import (
	"errors"
	"math"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

func TestSequentialStops(t *testing.T) {
	h := h2JW(t)
	base, err := allocate.Run(h, 40, &allocate.Greedy{}, nil)
	if err != nil {
		t.Fatal(err)
	}
	sim, ev, err := estimate.GroundStateSimulator(h, 7, nil)
	if err != nil {
		t.Fatal(err)
	}
	for _, growth := range []float64{0, 1.5} {
		s := &SequentialOptions{Settings: base.Settings, Shots: base.Shots, Target: 0.1, Delta: 0.05, MaxShots: 200_000, Growth: growth}
		res, err := Sequential(h, sim, s)
		if err != nil {
			t.Fatal(err)
		}
		if !res.Certified || res.Bound.Bound > s.Target {
			t.Fatalf("Sequential(growth %g) certified %v with bound %g, want ≤ %g", growth, res.Certified, res.Bound.Bound, s.Target)
		}
		if got, want := res.Records.Len(), res.Copies*40; got != want {
			t.Errorf("Sequential(growth %g): %d shots recorded, want %d copies × 40 = %d", growth, got, res.Copies, want)
		}
		if want := (StoppingSchedule{Delta: 0.05}).At(res.Rounds); res.Bound.Delta != want {
			t.Errorf("Sequential(growth %g): last bound at δ = %g, want δ_%d = %g", growth, res.Bound.Delta, res.Rounds, want)
		}
		for k := 0; k+1 < len(res.History); k++ {
			if res.History[k] <= s.Target {
				t.Errorf("Sequential(growth %g) did not stop at round %d with bound %g ≤ target", growth, k+1, res.History[k])
			}
		}
		g, err := estimate.Grouped(h, res.Records, nil)
		if err != nil {
			t.Fatal(err)
		}
		if !near(res.Bound.Energy, g.Energy, 1e-12) {
			t.Errorf("Sequential(growth %g) energy %.15g, estimate.Grouped on its records %.15g", growth, res.Bound.Energy, g.Energy)
		}
		// A single seeded run: the bound holds with probability ≥ 95%;
		// this seed's outcome is fixed.
		if math.Abs(res.Bound.Energy-ev.Energy) > res.Bound.Bound {
			t.Errorf("Sequential(growth %g): |%g − %g| exceeds the bound %g", growth, res.Bound.Energy, ev.Energy, res.Bound.Bound)
		}
		t.Logf("growth %g: %d rounds, %d shots, bound %.4g", growth, res.Rounds, res.Records.Len(), res.Bound.Bound)
	}
}

func TestSequentialCap(t *testing.T) {
	h := h2JW(t)
	base, err := allocate.Run(h, 40, &allocate.Greedy{}, nil)
	if err != nil {
		t.Fatal(err)
	}
	sim, _, err := estimate.GroundStateSimulator(h, 8, nil)
	if err != nil {
		t.Fatal(err)
	}
	res, err := Sequential(h, sim, &SequentialOptions{Settings: base.Settings, Shots: base.Shots, Target: 1e-4, Delta: 0.05, MaxShots: 1000})
	if err != nil {
		t.Fatal(err)
	}
	if res.Certified || res.Records.Len() > 1000 || res.Rounds != 25 {
		t.Errorf("Sequential(unreachable target, cap 1000) = certified %v, %d shots, %d rounds; want false, ≤ 1000, 25", res.Certified, res.Records.Len(), res.Rounds)
	}
}

type failingDevice struct{}

var errHardware = errors.New("hardware offline")

func (failingDevice) Run([]pauli.Setting, []int, *estimate.Records) error { return errHardware }

// lazyDevice records one shot too few of every setting.
type lazyDevice struct{}

func (lazyDevice) Run(settings []pauli.Setting, shots []int, rec *estimate.Records) error {
	for k, s := range settings {
		for range shots[k] - 1 {
			if err := rec.Add(s, pauli.NewBits(s.Qubits())); err != nil {
				return err
			}
		}
	}
	return nil
}

func TestSequentialErrors(t *testing.T) {
	h := mustH(t, 2, 0, 1.0, "ZI")
	ok := SequentialOptions{Settings: settingsOf("ZZ"), Shots: []int{5}, Target: 0.1, Delta: 0.1, MaxShots: 100}
	mod := func(f func(*SequentialOptions)) *SequentialOptions { s := ok; f(&s); return &s }
	cases := []struct {
		name string
		dev  estimate.Device
		s    *SequentialOptions
		want string
	}{
		{"device error", failingDevice{}, &ok, "round 1: hardware offline"},
		{"missing shots", lazyDevice{}, &ok, "round 1: device did not record 5 shots of ZZ"},
		{"delta", failingDevice{}, mod(func(s *SequentialOptions) { s.Delta = 0 }), "Delta = 0"},
		{"target", failingDevice{}, mod(func(s *SequentialOptions) { s.Target = -1 }), "Target = -1"},
		{"growth", failingDevice{}, mod(func(s *SequentialOptions) { s.Growth = 0.5 }), "Growth = 0.5"},
		{"cap", failingDevice{}, mod(func(s *SequentialOptions) { s.MaxShots = 4 }), "MaxShots = 4 is less than one copy"},
		{"empty plan", failingDevice{}, mod(func(s *SequentialOptions) { s.Shots = []int{0} }), "no shots"},
	}
	for _, c := range cases {
		_, err := Sequential(h, c.dev, c.s)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %v, want one containing %q", c.name, err, c.want)
		}
	}
	if _, err := Sequential(h, failingDevice{}, &ok); !errors.Is(err, errHardware) {
		t.Errorf("Sequential(failing device) error %v does not wrap the device's error", err)
	}
}

// Optional stopping does not break the bound: over 2000 seeded sequential
// runs (200 under -short) on the H2 ground state, the final bound fails at
// most δ + 3σ of the time (binomial allowance; a correct bound fails this
// check with probability about 0.1%).
func TestSequentialCoverage(t *testing.T) {
	reps := 2000
	if testing.Short() {
		reps = 200
	}
	h := h2JW(t)
	base, err := allocate.Run(h, 40, &allocate.Greedy{}, nil)
	if err != nil {
		t.Fatal(err)
	}
	ev, err := hamiltonian.GroundState(h, nil)
	if err != nil {
		t.Fatal(err)
	}
	const delta = 0.2
	fail := 0
	for r := range reps {
		sim, err := estimate.NewSimulator(ev.State, uint64(r), nil)
		if err != nil {
			t.Fatal(err)
		}
		res, err := Sequential(h, sim, &SequentialOptions{Settings: base.Settings, Shots: base.Shots,
			Target: 0.15, Delta: delta, MaxShots: 100_000, Growth: 1.5})
		if err != nil {
			t.Fatal(err)
		}
		if !res.Certified {
			t.Fatalf("run %d: not certified within the cap", r)
		}
		if math.Abs(res.Bound.Energy-ev.Energy) > res.Bound.Bound {
			fail++
		}
	}
	t.Logf("final bound exceeded in %d of %d runs (δ = %g)", fail, reps, delta)
	if allow := delta + 3*math.Sqrt(delta*(1-delta)/float64(reps)); float64(fail)/float64(reps) > allow {
		t.Errorf("sequential bound failed in %d of %d runs, more than δ + 3σ = %.3f", fail, reps, allow)
	}
}
