package guarantee

import (
	"fmt"
	"math"

	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// SequentialOptions describes a sequential measurement for [Sequential].
type SequentialOptions struct {
	// Settings and Shots are the base plan: one copy of it is
	// Σ Shots shots. Every round measures whole copies.
	Settings []pauli.Setting
	Shots    []int
	// Target is the accuracy ε to certify, Delta the total failure
	// probability over all rounds.
	Target, Delta float64
	// MaxShots caps the shots measured; a round that would pass it is not
	// run. It must be at least one copy of the base plan.
	MaxShots int
	// Growth sets the round sizes: round k measures ⌈Growth^(k−1)⌉ copies
	// of the base plan. Zero or 1 means one copy per round; a Growth above
	// 1 makes the rounds geometric, which spends the confidence over fewer
	// checks.
	Growth float64
	// P is the exponent of the [StoppingSchedule]; zero means 2.
	P float64
	// Exclude and Form are as in [EmpiricalOptions].
	Exclude []bool
	Form    EmpiricalForm
	// DriftLevel is the level of the stationarity test run on all rounds
	// at the end ([DriftTest]); zero means [DefaultDriftLevel]. Its result
	// is SequentialResult.Drift.
	DriftLevel float64
}

// SequentialResult is the outcome of [Sequential].
type SequentialResult struct {
	// Certified reports that the bound reached Target before the cap.
	Certified bool
	// Rounds is the number of rounds run and Copies the number of copies
	// of the base plan measured.
	Rounds, Copies int
	// Bound is the bound after the last round, at that round's δ_k; its
	// Delta field holds δ_k. With probability at least 1 − Delta (the
	// settings' total), every round's bound holds at once, so the bound at
	// whatever round the run stopped holds too.
	Bound *DataBound
	// History[k] is Bound.Bound, the data bound, after round k+1.
	History []float64
	// Records holds every shot.
	Records *estimate.Records
	// Drift is the stationarity test of the rounds run, at DriftLevel:
	// Drift.Rejected reports that some setting's outcome parity changed
	// across rounds, so the rounds were not copies of one experiment and
	// the bound, which assumes they were, is not to be trusted.
	Drift DriftResult
}

// Sequential measures a base plan in rounds on dev and stops as soon as the
// data certify Target: the empirical Bernstein stopping rule of Mnih,
// Szepesvári & Audibert (2008) applied to the grouped estimate. After round
// k, with R_k copies measured, the estimate is the grouped estimate of all
// shots (MATH.md §2); each setting Q's shots give i.i.d. values
// w = Σ_{i◁Q} (h_i/N_i^base) s_i, and the estimate's error is bounded as in
// [Empirical] at δ_k = Delta (P−1)/(P k^P) ([StoppingSchedule]). Because Σ_k
// δ_k ≤ Delta and the round sizes are fixed in advance, all the rounds'
// bounds hold together with probability at least 1 − Delta, and so does
// the one the run stops at.
//
// Sequential returns an error for invalid settings (naming the field), a
// device failure (with the round), or records that do not hold the shots
// the device was asked for.
func Sequential(h *hamiltonian.Hamiltonian, dev estimate.Device, s *SequentialOptions) (*SequentialResult, error) {
	if h == nil || dev == nil || s == nil {
		return nil, fmt.Errorf("guarantee: nil Hamiltonian, device or settings")
	}
	switch {
	case !validDelta(s.Delta):
		return nil, fmt.Errorf("guarantee: Delta = %v is not in [1e-300, 1) (MinDelta ≤ δ < 1)", s.Delta)
	case !(s.Target > 0) || math.IsInf(s.Target, 0):
		return nil, fmt.Errorf("guarantee: Target = %v, want a positive number", s.Target)
	case s.Growth != 0 && !(s.Growth >= 1):
		return nil, fmt.Errorf("guarantee: Growth = %v, want 0 or at least 1", s.Growth)
	case s.P != 0 && !(s.P > 1):
		return nil, fmt.Errorf("guarantee: P = %v, want 0 or more than 1", s.P)
	case s.Form < Pooled || s.Form > PerGroupMP:
		return nil, fmt.Errorf("guarantee: unknown empirical form %d", int(s.Form))
	case s.DriftLevel != 0 && !(s.DriftLevel > 0 && s.DriftLevel < 1):
		return nil, fmt.Errorf("guarantee: DriftLevel = %v, want 0 or a level in (0, 1)", s.DriftLevel)
	}
	if err := checkExclude(h, s.Exclude); err != nil {
		return nil, err
	}
	c, err := newCoverage(h, s.Settings, s.Shots)
	if err != nil {
		return nil, err
	}
	if c.shots == 0 {
		return nil, fmt.Errorf("guarantee: the base plan has no shots")
	}
	if s.MaxShots < c.shots {
		return nil, fmt.Errorf("guarantee: MaxShots = %d is less than one copy of the base plan (%d shots)", s.MaxShots, c.shots)
	}
	growth := s.Growth
	if growth == 0 {
		growth = 1
	}
	sched := StoppingSchedule{Delta: s.Delta, P: s.P}

	coef, bias := estimatorWeights(h, c.cover, 1, s.Exclude)
	gs, rowsOf := prepareGroups(c, coef)
	for q, g := range gs {
		g.weight = float64(c.mult[q])
	}
	rec := estimate.NewRecords(h.Qubits())
	res := &SequentialResult{Records: rec}
	roundShots := make([]int, len(c.mult))
	var buf []int8
	drift := newDriftTracker()
	for k := 1; ; k++ {
		f := math.Ceil(math.Pow(growth, float64(k-1)) - 1e-9)
		if f > float64(s.MaxShots/c.shots) {
			break
		}
		copies := max(1, int(f))
		if res.Copies+copies > s.MaxShots/c.shots {
			break
		}
		for q, m := range c.mult {
			roundShots[q] = copies * m
		}
		groups, first, err := measure(dev, c.settings, roundShots, rec)
		if err != nil {
			return nil, fmt.Errorf("guarantee: round %d: %w", k, err)
		}
		drift.nextRound()
		for q, st := range c.settings {
			drift.add(st, rec, groups[q], first[q], roundShots[q])
		}
		for q, g := range gs {
			rows, cf, half := rowsOf(q)
			g.half = half
			buf = g.addOutcomes(h.Table(), rows, cf, func(j int) pauli.Bits { return rec.Outcome(groups[q], first[q]+j) }, roundShots[q], buf)
		}
		res.Rounds, res.Copies = k, res.Copies+copies
		res.Bound = finishBound(h, gs, bias, rec.Len(), sched.At(k), s.Form, nil)
		res.History = append(res.History, res.Bound.Bound)
		if res.Bound.Bound <= s.Target {
			res.Certified = true
			break
		}
	}
	if res.Drift, err = drift.result(s.DriftLevel); err != nil {
		return nil, fmt.Errorf("guarantee: %w", err)
	}
	return res, nil
}

// measure runs settings on dev into rec and checks that the device recorded
// exactly shots[k] new outcomes of settings[k]. It returns the group of each
// setting in rec and the position of its first new outcome there.
func measure(dev estimate.Device, settings []pauli.Setting, shots []int, rec *estimate.Records) (groups, first []int, err error) {
	first = make([]int, len(settings))
	for k, s := range settings {
		if g, ok := rec.Group(s); ok {
			first[k] = rec.GroupLen(g)
		}
	}
	if err := dev.Run(settings, shots, rec); err != nil {
		return nil, nil, err
	}
	groups = make([]int, len(settings))
	for k, s := range settings {
		g, ok := rec.Group(s)
		if !ok || rec.GroupLen(g)-first[k] != shots[k] {
			return nil, nil, fmt.Errorf("device did not record %d shots of %s", shots[k], s)
		}
		groups[k] = g
	}
	return groups, first, nil
}
