package guarantee

import (
	"fmt"
	"math"
)

// BettingCS is the hedged betting confidence sequence of Waudby-Smith &
// Ramdas, "Estimating means of bounded random variables by betting" (JRSS B
// 86(1), 2024; arXiv:2010.09686), with their predictable plug-in bets,
// implemented from the paper's description. The construction is stated in
// full so that it can be checked, and its validity is derived in MATH.md
// §4.5 (the martingale property and Ville's inequality), so no numbered
// result of the paper is relied on.
//
// # The method
//
// Samples x are rescaled to y = (x − Lo)/(Hi − Lo) ∈ [0, 1], mean m* =
// (μ − Lo)/(Hi − Lo). For every candidate mean m ∈ [0, 1] two capital
// processes bet on y_t − m (the paper's "hedged capital process"):
//
//	K⁺_t(m) = Π_{i≤t} (1 + λ⁺_i(m) (y_i − m)),   λ⁺_i(m) = min(λ̇_i, c/m),
//	K⁻_t(m) = Π_{i≤t} (1 − λ⁻_i(m) (y_i − m)),   λ⁻_i(m) = min(λ̇_i, c/(1−m)),
//	K±_t(m) = max(θ K⁺_t(m), (1 − θ) K⁻_t(m)),
//
// with c = 1/2 and θ = 1/2 (the paper's defaults), and the predictable
// plug-in bet (the paper's "PrPl" choice)
//
//	λ̇_t = sqrt(2 ln(2/δ) / (σ̂²_{t−1} t ln(1 + t))),
//	σ̂²_t = (1/4 + Σ_{i≤t} (y_i − μ̂_i)²) / (t + 1),   μ̂_t = (1/2 + Σ_{i≤t} y_i) / (t + 1).
//
// With a horizon n* (BettingOptions.Horizon) the bet is instead
//
//	λ̇_t = sqrt(2 ln(2/δ) / (σ̂²_{t−1} n*)),
//
// the plug-in bet the paper tunes for a fixed sample size n* (its betting
// confidence intervals); the sequence stays valid at every time, and is
// narrowest near t = n*. With an aim instead (BettingOptions.Aim), n* is
// re-estimated from the past samples before every bet.
//
// The confidence sequence is C_t = {m : K±_t(m) < 1/δ} (MATH.md §4.5).
//
// # Why it is valid (checkable without the paper)
//
// λ̇_t depends on y_1..y_{t−1} only, and the truncations keep every factor
// at least 1 − c > 0 for y ∈ [0, 1]. At the true mean m*, E[y_t − m* |
// past] = 0, so K⁺_t(m*) and K⁻_t(m*) are non-negative martingales that
// start at 1, and so is M_t = θK⁺_t(m*) + (1−θ)K⁻_t(m*) ≥ K±_t(m*). Ville's
// inequality gives P(∃t: M_t ≥ 1/δ) ≤ δ. Hence m* ∈ C_t for all t at once
// with probability at least 1 − δ, for any predictable bets: the plug-in
// choice affects the width only, never the validity.
//
// # How the interval is computed
//
// Each factor of K⁺_t(m) is non-increasing in m (for y ≥ m the bet and the
// gain both shrink as m grows; for y < m the factor is 1 + min(λ̇, c/m)(y−m),
// which decreases too), so K⁺_t is non-increasing and K⁻_t non-decreasing
// in m; K±_t is quasi-convex, and C_t is an interval: every m below a point
// where θK⁺ ≥ 1/δ is excluded, and every m above a point where
// (1−θ)K⁻ ≥ 1/δ. BettingCS keeps both capitals on a grid of G points
// (Grid) spanning the current interval and updates them in O(G) per sample.
// The reported lower end is the largest grid point excluded by K⁺ (or the
// previous lower end), the upper end the smallest excluded by K⁻: by the
// monotonicity the true C_t lies inside, so the reported interval contains
// it and is conservative by at most one grid step. Intervals are
// intersected over time (valid, since C_t holds at all t at once). When
// fewer than G/2 grid points remain inside the interval, and at least a
// quarter more samples have come since the last regrid, a new grid of G
// points is laid over it and its capitals are recomputed from the stored
// samples and bets, O(t·G). The regrids thus come at geometrically spaced
// times and cost at most O(5G) per sample amortised. Memory is two floats per sample.
type BettingCS struct {
	lo, width float64
	delta     float64
	thresh    float64 // 1/δ
	g         int

	t          int
	sum        float64 // Σ y
	ssq        float64 // Σ (y_i − μ̂_i)²
	ys, lams   []float64
	grid       []float64
	kp, km     []float64
	ip, im     []float64 // c/m and c/(1−m) per grid point
	first, end int       // active grid points [first, end)
	l, u       float64   // current interval in [0, 1]
	tRegrid    int       // t at the last regrid
	horizon    int
	aim        float64 // ρ, in [0, 1] units
}

// bettingC and bettingTheta are the truncation c and the hedging weight θ.
const (
	bettingC     = 0.5
	bettingTheta = 0.5
)

// BettingOptions tunes a [BettingCS]. A nil pointer means the defaults.
type BettingOptions struct {
	// Grid is the number of grid points laid over the interval; zero
	// means 128, and it must be at least 8. The interval is conservative by
	// at most about 2/Grid of its width on each side.
	Grid int
	// Horizon, if positive, is the sample size the bets are tuned for;
	// zero means the time-uniform bets of the paper's confidence sequence.
	Horizon int
	// Aim, if positive and Horizon is zero, is a target radius in the
	// samples' units: the bets are tuned for the horizon at which a
	// sample of the variance seen so far would reach it,
	// n*_t = 2 ln(2/δ) σ̂²_{t−1}/ρ² with ρ = Aim/(Hi − Lo), which gives
	// λ̇_t = ρ/σ̂²_{t−1}. The horizon is estimated from past samples only,
	// so the bets stay predictable and the sequence valid (our choice, not
	// the paper's).
	Aim float64
}

// NewBettingCS returns the betting confidence sequence at level 1 − delta
// for samples in [lo, hi]. It returns an error for an empty or infinite
// range, δ outside (0, 1), or bad options.
func NewBettingCS(lo, hi, delta float64, o *BettingOptions) (*BettingCS, error) {
	if err := checkRange(lo, hi, delta); err != nil {
		return nil, err
	}
	var opt BettingOptions
	if o != nil {
		opt = *o
	}
	g := opt.Grid
	if g == 0 {
		g = 128
	}
	if g < 8 {
		return nil, fmt.Errorf("guarantee: betting grid of %d points, want at least 8", g)
	}
	if opt.Horizon < 0 {
		return nil, fmt.Errorf("guarantee: betting horizon %d, want zero or a positive number", opt.Horizon)
	}
	if opt.Aim < 0 || math.IsNaN(opt.Aim) || math.IsInf(opt.Aim, 0) {
		return nil, fmt.Errorf("guarantee: betting aim %v, want zero or a positive number", opt.Aim)
	}
	c := &BettingCS{lo: lo, width: hi - lo, delta: delta, thresh: 1 / delta, g: g, l: 0, u: 1, horizon: opt.Horizon}
	if opt.Horizon == 0 {
		c.aim = opt.Aim / c.width
	}
	c.regrid()
	return c, nil
}

// Add feeds the next sample.
func (c *BettingCS) Add(x float64) error {
	x, err := clampSample(x, c.lo, c.width)
	if err != nil {
		return err
	}
	y := min(max((x-c.lo)/c.width, 0), 1)
	c.t++
	t := float64(c.t)
	// σ̂²_{t−1} from the samples before this one.
	sigma2 := (0.25 + c.ssq) / t
	scale := t * math.Log(1+t)
	if c.horizon > 0 {
		scale = float64(c.horizon)
	}
	lam := math.Sqrt(2 * math.Log(2/c.delta) / (sigma2 * scale))
	if c.aim > 0 {
		lam = c.aim / sigma2
	}
	c.ys, c.lams = append(c.ys, y), append(c.lams, lam)
	c.sum += y
	muHat := (0.5 + c.sum) / (t + 1)
	c.ssq += (y - muHat) * (y - muHat)

	for j := c.first; j < c.end; j++ {
		d := y - c.grid[j]
		c.kp[j] *= 1 + min(lam, c.ip[j])*d
		c.km[j] *= 1 - min(lam, c.im[j])*d
	}
	c.exclude()
	if c.end-c.first < c.g/2 && c.t >= c.tRegrid+c.tRegrid/4+1 && c.u-c.l > 1e-12 {
		c.regrid()
	}
	return nil
}

// exclude moves the interval ends past the grid points the capitals
// exclude.
func (c *BettingCS) exclude() {
	for c.first < c.end && bettingTheta*c.kp[c.first] >= c.thresh {
		c.l = max(c.l, c.grid[c.first])
		c.first++
	}
	for c.end > c.first && (1-bettingTheta)*c.km[c.end-1] >= c.thresh {
		c.u = min(c.u, c.grid[c.end-1])
		c.end--
	}
	if c.first == c.end && c.u < c.l {
		c.u = c.l
	}
}

// regrid lays G points strictly inside (l, u) and recomputes their
// capitals from the stored samples and bets.
func (c *BettingCS) regrid() {
	if c.grid == nil {
		c.grid = make([]float64, c.g)
		c.kp, c.km = make([]float64, c.g), make([]float64, c.g)
		c.ip, c.im = make([]float64, c.g), make([]float64, c.g)
	}
	for j := range c.grid {
		m := c.l + (c.u-c.l)*float64(j+1)/float64(c.g+1)
		c.grid[j] = m
		c.kp[j], c.km[j] = 1, 1
		c.ip[j] = math.Inf(1)
		if m > 0 {
			c.ip[j] = bettingC / m
		}
		c.im[j] = math.Inf(1)
		if m < 1 {
			c.im[j] = bettingC / (1 - m)
		}
	}
	c.first, c.end, c.tRegrid = 0, c.g, c.t
	for i, y := range c.ys {
		lam := c.lams[i]
		for j, m := range c.grid {
			d := y - m
			c.kp[j] *= 1 + min(lam, c.ip[j])*d
			c.km[j] *= 1 - min(lam, c.im[j])*d
		}
	}
	c.exclude()
}

// Interval returns the current interval.
func (c *BettingCS) Interval() (lo, hi float64) {
	return c.lo + c.width*c.l, c.lo + c.width*c.u
}

// Len returns the number of samples added.
func (c *BettingCS) Len() int { return c.t }
