package guarantee

import (
	"fmt"
	"math"
)

// ConfSeq is a confidence sequence for the mean μ of i.i.d. samples in a
// known interval [Lo, Hi]: after every Add, Interval returns [l_t, u_t]
// such that, with probability at least 1 − δ, μ lies in every interval at
// once, t = 1, 2, .... The intervals therefore stay valid at any stopping
// time, also one chosen by looking at the data (stopping once the interval
// is narrow enough). Both implementations return running intersections, so
// the intervals never widen.
type ConfSeq interface {
	// Add feeds the next sample. It returns an error, and changes
	// nothing, if x lies outside the interval the sequence was made for.
	Add(x float64) error
	// Interval returns the current interval; before any sample it is the
	// whole range.
	Interval() (lo, hi float64)
	// Len returns the number of samples added.
	Len() int
}

// checkRange validates the range and δ of a confidence sequence.
func checkRange(lo, hi, delta float64) error {
	switch {
	case !(hi > lo) || math.IsInf(lo, 0) || math.IsInf(hi, 0):
		return fmt.Errorf("guarantee: range [%v, %v], want finite lo < hi", lo, hi)
	case !validDelta(delta):
		return fmt.Errorf("guarantee: confidence parameter δ = %v is not in [1e-300, 1) (MinDelta ≤ δ < 1)", delta)
	}
	return nil
}

// rangeSlack is the relative tolerance for samples just outside the
// range, left by the rounding of sums of many terms.
const rangeSlack = 1e-9

// BernsteinCS is the empirical Bernstein bound of Maurer & Pontil (COLT
// 2009, Theorem 4; see [EmpiricalBernsteinMP]) applied at fixed checking
// times with a union bound over them, which makes it a confidence sequence.
//
// # The union
//
// Checks happen at the epochs t_1 = 2 and t_{k+1} = max(t_k + 1,
// ⌈Growth·t_k⌉), fixed before any sample. Check k spends
// δ_k = [StoppingSchedule]{Delta: δ, P}.At(k) = δ(P−1)/(P k^P), split δ_k/2
// per side of the one-sided Theorem 4, so Σ_k δ_k ≤ δ (Mnih, Szepesvári &
// Audibert 2008) and all checks hold at once with probability at least
// 1 − δ. Between checks the interval is the intersection of the intervals
// of the checks so far, which is valid at every time. With geometric epochs
// the number of checks by time t grows like log t, so the union costs
// ln(2/δ_k) = ln(2/δ) + O(ln ln t) instead of the O(ln t) of checking after
// every sample.
type BernsteinCS struct {
	lo, width float64
	delta     float64
	sched     StoppingSchedule
	growth    float64

	t    int
	k    int // checks done
	next int // time of the next check
	mean float64
	m2   float64 // Welford's sum of squared deviations
	l, u float64
}

// NewBernsteinCS returns an empirical Bernstein confidence sequence at level
// 1 − delta for samples in [lo, hi], with epochs growing by growth (zero
// means 1.2; it must be above 1) and schedule exponent p (zero means 1.5;
// it must be above 1).
func NewBernsteinCS(lo, hi, delta, growth, p float64) (*BernsteinCS, error) {
	if err := checkRange(lo, hi, delta); err != nil {
		return nil, err
	}
	if growth == 0 {
		growth = 1.2
	}
	if p == 0 {
		p = 1.5
	}
	if !(growth > 1) || math.IsInf(growth, 0) {
		return nil, fmt.Errorf("guarantee: epoch growth %v, want more than 1", growth)
	}
	if !(p > 1) || math.IsInf(p, 0) {
		return nil, fmt.Errorf("guarantee: schedule exponent %v, want more than 1", p)
	}
	return &BernsteinCS{lo: lo, width: hi - lo, delta: delta, sched: StoppingSchedule{Delta: delta, P: p},
		growth: growth, next: 2, l: lo, u: hi}, nil
}

// Add feeds the next sample.
func (c *BernsteinCS) Add(x float64) error {
	x, err := clampSample(x, c.lo, c.width)
	if err != nil {
		return err
	}
	c.t++
	d := x - c.mean
	c.mean += d / float64(c.t)
	c.m2 += d * (x - c.mean)
	if c.t == c.next {
		c.k++
		dk := c.sched.At(c.k)
		v := max(0, c.m2/float64(c.t-1))
		r := EmpiricalBernsteinMP(c.t, v, c.width, dk/2)
		c.l = max(c.l, c.mean-r)
		c.u = min(c.u, c.mean+r)
		if c.l > c.u {
			// The intersection is empty only on the failure event of
			// probability at most δ; report the latest mean as a point.
			c.l, c.u = c.mean, c.mean
		}
		c.next = max(c.t+1, int(math.Ceil(c.growth*float64(c.t))))
	}
	return nil
}

// Interval returns the current interval.
func (c *BernsteinCS) Interval() (lo, hi float64) { return c.l, c.u }

// Len returns the number of samples added.
func (c *BernsteinCS) Len() int { return c.t }

// clampSample checks that x lies in [lo, lo+width] up to rounding and
// returns it clamped into the range.
func clampSample(x, lo, width float64) (float64, error) {
	slack := rangeSlack * max(width, math.Abs(lo), math.Abs(lo+width))
	if !(x >= lo-slack && x <= lo+width+slack) {
		return 0, fmt.Errorf("guarantee: sample %v outside the range [%v, %v]", x, lo, lo+width)
	}
	return min(max(x, lo), lo+width), nil
}
