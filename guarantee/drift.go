package guarantee

import (
	"fmt"
	"math"
	"math/bits"

	"gonum.org/v1/gonum/stat/distuv"

	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/pauli"
)

// DefaultDriftLevel is the level of the stationarity test the drivers run
// when their options leave it zero.
const DefaultDriftLevel = 0.01

// minDriftExpected is the smallest expected count, odd or even, in every
// round for a setting to be tested: the chi-square approximation is
// trusted from 5 expected counts per cell (Cochran's rule; common
// practice).
const minDriftExpected = 5

// DriftCounts are one setting's outcome parities in each round: in round r
// it was measured Shots[r] times, and Odd[r] of those outcomes had an odd
// number of 1 bits. Rounds with no shots are allowed and skipped.
type DriftCounts struct {
	Setting    pauli.Setting
	Shots, Odd []int
}

// DriftResult is the outcome of [DriftTest].
type DriftResult struct {
	// Tested is the number of settings tested: those with shots in at least
	// two rounds, both parities seen, and at least 5 expected odd and even
	// outcomes in every round they were measured in.
	Tested int
	// PValue is the Bonferroni-adjusted p-value, min(1, Tested·p_min), with
	// p_min the smallest p-value of a tested setting; 1 when none was
	// tested.
	PValue float64
	// Setting is the index (in the counts given to DriftTest) of the
	// setting with p-value p_min, or −1 when none was tested.
	Setting int
	// Level is the level of the test and Rejected reports PValue ≤ Level:
	// some setting's outcome parity changed across rounds.
	Level    float64
	Rejected bool
}

// DriftTest tests whether the outcome distributions of repeated settings
// stayed the same across rounds (MATH.md §4.9). For every setting it
// compares the fraction of odd-parity outcomes across the rounds that
// measured it with Pearson's chi-square test of homogeneity, R − 1 degrees
// of freedom for R rounds; the smallest p-value, multiplied by the number
// of tested settings (Bonferroni), is compared with level. Under
// stationarity (every round of a setting draws from the same distribution)
// the probability of a rejection is at most level up to the chi-square
// approximation, which the test trusts only with at least 5 expected
// outcomes of each parity in every round; settings below that are not
// tested. Drifting readout rates move the parity of every setting whose
// parity expectation is not zero (symmetric rates scale it by
// ∏(1 − 2p_q); asymmetric rates also shift it), which is what the test is
// for; a drift that leaves every parity unchanged is not detected.
//
// It returns an error for a level outside (0, 1) or counts that disagree in
// length or exceed their shots.
func DriftTest(counts []DriftCounts, level float64) (DriftResult, error) {
	res := DriftResult{PValue: 1, Setting: -1, Level: level}
	if !(level > 0 && level < 1) {
		return res, fmt.Errorf("guarantee: level %v outside (0, 1)", level)
	}
	pmin := 1.0
	for k, c := range counts {
		if len(c.Shots) != len(c.Odd) {
			return res, fmt.Errorf("guarantee: setting %d (%s): %d shot counts, %d odd counts", k, c.Setting, len(c.Shots), len(c.Odd))
		}
		var n, o float64
		rounds := 0
		for r, m := range c.Shots {
			if m < 0 || c.Odd[r] < 0 || c.Odd[r] > m {
				return res, fmt.Errorf("guarantee: setting %d (%s): round %d: %d odd of %d shots", k, c.Setting, r+1, c.Odd[r], m)
			}
			if m > 0 {
				rounds++
				n += float64(m)
				o += float64(c.Odd[r])
			}
		}
		if rounds < 2 || o == 0 || o == n {
			continue
		}
		p := o / n
		chi2 := 0.0
		ok := true
		for r, m := range c.Shots {
			if m == 0 {
				continue
			}
			e := float64(m) * p
			if e < minDriftExpected || float64(m)-e < minDriftExpected {
				ok = false
				break
			}
			d := float64(c.Odd[r]) - e
			chi2 += d * d / (e * (1 - p))
		}
		if !ok {
			continue
		}
		res.Tested++
		pv := (distuv.ChiSquared{K: float64(rounds - 1)}).Survival(chi2)
		if res.Setting < 0 || pv < pmin {
			pmin, res.Setting = pv, k
		}
	}
	if res.Tested > 0 {
		res.PValue = math.Min(1, float64(res.Tested)*pmin)
	}
	res.Rejected = res.PValue <= level
	return res, nil
}

// driftTracker collects the parity counts of every setting round by round.
type driftTracker struct {
	index  map[string]int
	counts []DriftCounts
	round  int // rounds started
}

func newDriftTracker() *driftTracker { return &driftTracker{index: make(map[string]int)} }

// nextRound starts a round.
func (t *driftTracker) nextRound() {
	t.round++
	for k := range t.counts {
		t.counts[k].Shots = append(t.counts[k].Shots, 0)
		t.counts[k].Odd = append(t.counts[k].Odd, 0)
	}
}

// add counts the outcomes rec holds for group g from position first on,
// m of them, as the current round's shots of setting s.
func (t *driftTracker) add(s pauli.Setting, rec *estimate.Records, g, first, m int) {
	key := s.Key()
	k, ok := t.index[key]
	if !ok {
		k = len(t.counts)
		t.index[key] = k
		t.counts = append(t.counts, DriftCounts{Setting: s, Shots: make([]int, t.round), Odd: make([]int, t.round)})
	}
	odd := 0
	for j := first; j < first+m; j++ {
		w := 0
		for _, x := range rec.Outcome(g, j) {
			w += bits.OnesCount64(x)
		}
		odd += w & 1
	}
	c := &t.counts[k]
	c.Shots[t.round-1] += m
	c.Odd[t.round-1] += odd
}

// result runs DriftTest at level (DefaultDriftLevel if zero).
func (t *driftTracker) result(level float64) (DriftResult, error) {
	if level == 0 {
		level = DefaultDriftLevel
	}
	return DriftTest(t.counts, level)
}
