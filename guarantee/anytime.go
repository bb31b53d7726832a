package guarantee

import (
	"fmt"
	"math"
	"math/rand/v2"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// AnytimeOptions describes a sequential measurement for [Anytime].
type AnytimeOptions struct {
	// Plan is the distribution the shots draw their settings from; see
	// [IIDOf] to make one from any plan. Required. A Plan with a baseline
	// ([IID.WithBaseline]) feeds the shifted single-shot values X_c to the
	// sequence (MATH.md §4.11), and a pilot re-weights for their variance.
	Plan *IID
	// Target is the bound ε to certify: the run stops once the certified
	// interval is at most 2ε wide (bias included). Zero means run to
	// MaxShots.
	Target float64
	// Delta is the probability that the interval ever misses the energy,
	// in (0, 1).
	Delta float64
	// MaxShots caps the shots, pilot included; the last round is cut to
	// fit. Required (positive).
	MaxShots int
	// FirstRound is the number of shots of round 1, zero meaning 100;
	// round k has ⌈FirstRound·Growth^(k−1)⌉ shots, Growth zero meaning 1.5
	// (1 gives equal rounds). The interval is updated after every shot and
	// the stopping rule is checked after every round; the round sizes only
	// set how often the device is called.
	FirstRound int
	Growth     float64
	// Method is the confidence sequence; the zero value is [Betting].
	Method AnytimeMethod
	// Betting tunes the betting sequence; nil means its defaults, except
	// with a Target and neither Horizon nor Aim set: after a pilot, Horizon
	// is set to the pilot's estimate of the shots needed,
	// 2 ln(2/δ) σ̂²/Target², with σ̂² the estimated single-shot variance of
	// the re-weighted distribution; without a pilot, Aim is set to Target
	// less the bias. Either is a choice of bets, which never affects
	// validity.
	Betting *BettingOptions
	// Seed seeds the draws of the settings.
	Seed uint64
	// Pilot, if positive, is the number of shots of a pilot batch drawn
	// from Plan before the certified rounds. Its outcomes estimate the
	// moments of the terms ([allocate.Moments]), the distribution over
	// Plan's settings is re-weighted to minimise the estimated variance of
	// the single-shot value ([allocate.Moments.Reweight], tuned by
	// Variance), and the certified rounds draw from the new distribution.
	// The pilot shots never enter the estimate or the interval (sample
	// splitting; see [Anytime]).
	Pilot    int
	Variance *allocate.VarianceOptions
	// DriftLevel is the level of the stationarity test run on the
	// certified rounds at the end ([DriftTest]); zero means
	// [DefaultDriftLevel]. Its result is AnytimeResult.Drift; a rejection
	// does not change the interval, which assumes stationary shots.
	DriftLevel float64
}

// AnytimeResult is the outcome of [Anytime].
type AnytimeResult struct {
	// Certified reports that Bound reached Target.
	Certified bool
	// Interval contains the energy E with probability at least 1 − Delta,
	// however the run was stopped; it includes Plan.Bias on each side.
	// Estimate is its midpoint and Bound its half-width, so
	// |Estimate − E| ≤ Bound at that confidence.
	Interval        [2]float64
	Estimate, Bound float64
	// Mean is the average single-shot value of the certified shots (the
	// §4.1 estimate); it lies in Interval except on the failure event.
	Mean float64
	// Shots is the number of certified shots, PilotShots those of the
	// pilot, Rounds the certified rounds run.
	Shots, PilotShots, Rounds int
	// Horizon is the sample size the betting sequence's bets were tuned
	// for, or 0.
	Horizon int
	// Plan is the distribution the certified shots were drawn from: the
	// settings' Plan, or its re-weighting after a pilot.
	Plan *IID
	// Records holds the certified shots (in the order of their draws
	// within each setting); Pilot holds the pilot's, or nil.
	Records, Pilot *estimate.Records
	// History[k] is Bound after round k+1.
	History []float64
	// Drift is the stationarity test of the certified rounds at
	// DriftLevel: Drift.Rejected reports that some setting's outcome
	// parity changed across rounds, so the shots were not i.i.d. and the
	// interval is not to be trusted.
	Drift DriftResult
}

// Anytime measures on dev in rounds of shots whose settings are drawn
// i.i.d. from a distribution (MATH.md §4.1), feeds every shot's single-shot
// value to an anytime-valid confidence sequence ([BettingCS] or
// [BernsteinCS] on the range [IID.Range]), and stops when the certified
// bound reaches Target or the shots reach MaxShots. Because a confidence
// sequence holds at all times at once, the interval at the data-dependent
// stopping time holds with probability at least 1 − Delta; no schedule of
// checks needs to be fixed in advance.
//
// Within a round the drawn settings are grouped into one device call, and
// the outcomes of each setting are then assigned back to the shots that drew
// it, in draw order. The shots are independent copies, so the resulting
// sequence of single-shot values is i.i.d. just as if each shot had been
// measured at its turn.
//
// # The pilot (sample splitting)
//
// With Pilot > 0 the distribution is chosen from the pilot's data, and the
// confidence sequence is created only after the pilot and fed only the
// later shots. Conditionally on the pilot, those shots are i.i.d. from a
// fixed distribution, so the sequence's guarantee holds conditionally, and
// hence unconditionally. This is enforced by construction: the pilot's
// outcomes reach the re-weighting and nothing else. We chose sample splitting
// over a sequence that stays valid under predictable changes of the
// distribution because the single-shot range (and so the rescaling to
// [0, 1] that both sequences need) depends on the distribution: it must be
// fixed before the certified shots. The pilot costs its shots, which is why
// it should be a small fraction of the expected total.
//
// Anytime returns an error for invalid options (naming the field), a
// device failure (with the round), or a device that does not record the
// shots it was asked for.
func Anytime(h *hamiltonian.Hamiltonian, dev estimate.Device, s *AnytimeOptions) (*AnytimeResult, error) {
	if h == nil || dev == nil || s == nil || s.Plan == nil {
		return nil, fmt.Errorf("guarantee: nil Hamiltonian, device, options or plan")
	}
	switch {
	case !validDelta(s.Delta):
		return nil, fmt.Errorf("guarantee: Delta = %v is not in [1e-300, 1) (MinDelta ≤ δ < 1)", s.Delta)
	case s.Target < 0 || math.IsNaN(s.Target) || math.IsInf(s.Target, 0):
		return nil, fmt.Errorf("guarantee: Target = %v, want zero or a positive number", s.Target)
	case s.MaxShots <= 0:
		return nil, fmt.Errorf("guarantee: MaxShots = %d, want a positive number", s.MaxShots)
	case s.Pilot < 0 || s.Pilot >= s.MaxShots:
		return nil, fmt.Errorf("guarantee: Pilot = %d, want 0 ≤ Pilot < MaxShots = %d", s.Pilot, s.MaxShots)
	case s.FirstRound < 0:
		return nil, fmt.Errorf("guarantee: FirstRound = %d, want a non-negative number", s.FirstRound)
	case s.Growth != 0 && !(s.Growth >= 1) || math.IsInf(s.Growth, 0):
		return nil, fmt.Errorf("guarantee: Growth = %v, want 0 or at least 1", s.Growth)
	case s.DriftLevel != 0 && !(s.DriftLevel > 0 && s.DriftLevel < 1):
		return nil, fmt.Errorf("guarantee: DriftLevel = %v, want 0 or a level in (0, 1)", s.DriftLevel)
	case s.Method != Betting && s.Method != BernsteinEpochs:
		return nil, fmt.Errorf("guarantee: unknown method %d", int(s.Method))
	case s.Plan.h == nil || s.Plan.Dist == nil || len(s.Plan.Settings) == 0:
		return nil, fmt.Errorf("guarantee: the plan was not made by NewIID or IIDOf")
	case s.Plan.fp != fingerprint(h) || s.Plan.h != h && !s.Plan.h.Equal(h):
		// By content, not by pointer: a Hamiltonian overwritten in place
		// since NewIID has the same pointer and other terms.
		return nil, fmt.Errorf("guarantee: the plan was made for another Hamiltonian (or its content changed since NewIID)")
	}
	rng := rand.New(rand.NewPCG(s.Seed, 0x616e7974696d65))
	var bopt BettingOptions
	if s.Betting != nil {
		bopt = *s.Betting
	}
	d := s.Plan
	res := &AnytimeResult{Plan: d}
	if s.Pilot > 0 {
		var err error
		if d, res.Pilot, err = anytimePilot(h, dev, s, rng, &bopt); err != nil {
			return nil, fmt.Errorf("guarantee: pilot: %w", err)
		}
		res.Plan, res.PilotShots = d, s.Pilot
	}
	cs, err := anytimeSequence(d, s, &bopt)
	if err != nil {
		return nil, fmt.Errorf("guarantee: %w", err)
	}
	if s.Method == Betting {
		res.Horizon = bopt.Horizon
	}
	if err := anytimeRounds(h.Qubits(), dev, d, rng, s, cs, res); err != nil {
		return nil, fmt.Errorf("guarantee: %w", err)
	}
	return res, nil
}

// anytimePilot measures the pilot's s.Pilot shots from s.Plan and returns
// the distribution re-weighted from their data (which nothing else sees)
// and the pilot's records. Aiming at a target without a horizon, it also
// sets bopt.Horizon to the shots the pilot's variance estimate predicts.
func anytimePilot(h *hamiltonian.Hamiltonian, dev estimate.Device, s *AnytimeOptions, rng *rand.Rand, bopt *BettingOptions) (*IID, *estimate.Records, error) {
	d := s.Plan
	pilot := estimate.NewRecords(h.Qubits())
	mo, err := allocate.NewMoments(h, d.Settings)
	if err != nil {
		return nil, nil, err
	}
	// With a baseline the moments are those of X_c less its constant
	// h_0 + Σ h_i c_i, which Range and Value of d put in.
	if err := mo.SetBaseline(d.base); err != nil {
		return nil, nil, err
	}
	center := d.Offset + d.center
	pilotSum := 0.0
	if err := drawRound(dev, d, rng, s.Pilot, pilot, nil, func(k int, b pauli.Bits) error {
		mo.Observe(d.Settings[k], b)
		pilotSum += d.Value(k, b) - center
		return nil
	}); err != nil {
		return nil, nil, err
	}
	w, err := mo.Reweight(d.Prob, s.Variance)
	if err != nil {
		return nil, nil, err
	}
	if d, err = NewIID(h, mo.Settings(), w); err != nil {
		return nil, nil, err
	}
	if s.Plan.base != nil {
		// The re-weighting keeps the covered terms (Reweight keeps zero
		// weights at zero), so the shifted mean is unchanged.
		if d, err = d.WithBaseline(s.Plan.base); err != nil {
			return nil, nil, err
		}
	}
	if s.Target > 0 && bopt.Horizon == 0 {
		// Var X = E[(X−h_0)²] − (E − h_0)², both estimated from the
		// pilot; the mean of X − h_0 does not depend on π (with a
		// baseline: X_c less h_0 + Σ h_i c_i, whose mean does not either).
		m2, err := mo.SecondMoment(w)
		if err != nil {
			return nil, nil, err
		}
		mu := pilotSum / float64(s.Pilot)
		v := max(m2-mu*mu, 0)
		if n := 2 * math.Log(2/s.Delta) * v / (s.Target * s.Target); n >= 1 && n < float64(s.MaxShots) {
			bopt.Horizon = int(math.Ceil(n))
		} else if n >= float64(s.MaxShots) {
			bopt.Horizon = s.MaxShots - s.Pilot
		}
	}
	return d, pilot, nil
}

// anytimeSequence builds the confidence sequence for the certified shots
// of d, once. Without a pilot's horizon, the betting sequence aims its bets
// at the target from the certified shots themselves (predictably).
func anytimeSequence(d *IID, s *AnytimeOptions, bopt *BettingOptions) (ConfSeq, error) {
	lo, hi := d.Range()
	switch {
	case d.Dist.Width == 0:
		// Every shot gives the same value (h_0 plus nothing measurable):
		// no confidence sequence is needed.
		return &constantSeq{x: lo}, nil
	case s.Method == BernsteinEpochs:
		return NewBernsteinCS(lo, hi, s.Delta, 0, 0)
	}
	if bopt.Horizon == 0 && bopt.Aim == 0 && s.Pilot == 0 && s.Target > d.Bias {
		bopt.Aim = s.Target - d.Bias
	}
	return NewBettingCS(lo, hi, s.Delta, bopt)
}

// anytimeRounds measures rounds of geometrically growing size from d on
// dev, feeds every shot to cs, and records the interval after each round in
// res, until the target radius is certified or the budget is spent.
func anytimeRounds(qubits int, dev estimate.Device, d *IID, rng *rand.Rand, s *AnytimeOptions, cs ConfSeq, res *AnytimeResult) error {
	first, growth := s.FirstRound, s.Growth
	if first == 0 {
		first = 100
	}
	if growth == 0 {
		growth = 1.5
	}
	rec := estimate.NewRecords(qubits)
	res.Records = rec
	sum := 0.0
	size := float64(first)
	budget := s.MaxShots - s.Pilot
	drift := newDriftTracker()
	for res.Shots < budget {
		n := min(int(math.Ceil(size-1e-9)), budget-res.Shots)
		size *= growth
		drift.nextRound()
		if err := drawRound(dev, d, rng, n, rec, drift, func(k int, b pauli.Bits) error {
			x := d.Value(k, b)
			sum += x
			return cs.Add(x)
		}); err != nil {
			return fmt.Errorf("round %d: %w", res.Rounds+1, err)
		}
		res.Rounds++
		res.Shots += n
		l, u := cs.Interval()
		res.Interval = [2]float64{l - d.Bias, u + d.Bias}
		res.Bound = (res.Interval[1] - res.Interval[0]) / 2
		res.History = append(res.History, res.Bound)
		if s.Target > 0 && res.Bound <= s.Target {
			res.Certified = true
			break
		}
	}
	res.Estimate = (res.Interval[0] + res.Interval[1]) / 2
	res.Mean = sum / float64(res.Shots)
	var err error
	res.Drift, err = drift.result(s.DriftLevel)
	return err
}

// drawRound draws n settings from d, measures them on dev into rec with
// one call, and calls use for every shot in draw order with the setting's
// index and outcome. A non-nil drift counts the round's parities.
func drawRound(dev estimate.Device, d *IID, rng *rand.Rand, n int, rec *estimate.Records, drift *driftTracker, use func(k int, b pauli.Bits) error) error {
	draws := make([]int, n)
	counts := make([]int, len(d.Settings))
	for j := range draws {
		k := d.Draw(rng)
		draws[j] = k
		counts[k]++
	}
	var settings []pauli.Setting
	var shots, which []int
	for k, c := range counts {
		if c > 0 {
			settings, shots, which = append(settings, d.Settings[k]), append(shots, c), append(which, k)
		}
	}
	gs, first, err := measure(dev, settings, shots, rec)
	if err != nil {
		return err
	}
	if drift != nil {
		for j, s := range settings {
			drift.add(s, rec, gs[j], first[j], shots[j])
		}
	}
	groups := make([]int, len(d.Settings))
	used := make([]int, len(d.Settings))
	for j, k := range which {
		groups[k], used[k] = gs[j], first[j]
	}
	for _, k := range draws {
		b := rec.Outcome(groups[k], used[k])
		used[k]++
		if err := use(k, b); err != nil {
			return err
		}
	}
	return nil
}

// constantSeq is the degenerate confidence sequence of samples that cannot
// vary.
type constantSeq struct {
	x float64
	t int
}

func (c *constantSeq) Add(float64) error          { c.t++; return nil }
func (c *constantSeq) Interval() (lo, hi float64) { return c.x, c.x }
func (c *constantSeq) Len() int                   { return c.t }
