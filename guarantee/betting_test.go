package guarantee

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"
)

// directCS keeps the hedged capitals of BettingCS's doc comment on a fine
// fixed grid, written directly from the formulas, and the running
// intersection of {m : K±_t(m) < 1/δ} over that grid: the slow reference.
// It repeats the bet formula of the doc comment, so it checks the grid,
// regrid and exclusion machinery only; the bets are checked independently of
// the code by the miss rate (TestBettingCoverageStopped, the Ville bound)
// and the width against the normal approximation (TestBettingNormalRatio).
type directCS struct {
	m, kp, km []float64
	out       []bool
	delta     float64
	t         int
	ssq, sum  float64
	horizon   int
	aim       float64
}

func newDirectCS(points int, delta float64) *directCS {
	d := &directCS{delta: delta}
	for j := range points {
		d.m = append(d.m, (float64(j)+0.5)/float64(points))
	}
	d.kp = make([]float64, points)
	d.km = make([]float64, points)
	d.out = make([]bool, points)
	for j := range d.kp {
		d.kp[j], d.km[j] = 1, 1
	}
	return d
}

func (d *directCS) add(y float64) {
	d.t++
	t := float64(d.t)
	sigma2 := (0.25 + d.ssq) / t
	scale := t * math.Log(1+t)
	if d.horizon > 0 {
		scale = float64(d.horizon)
	}
	lam := math.Sqrt(2 * math.Log(2/d.delta) / (sigma2 * scale))
	if d.aim > 0 {
		lam = d.aim / sigma2
	}
	d.sum += y
	mu := (0.5 + d.sum) / (t + 1)
	d.ssq += (y - mu) * (y - mu)
	for j, m := range d.m {
		d.kp[j] *= 1 + math.Min(lam, 0.5/m)*(y-m)
		d.km[j] *= 1 - math.Min(lam, 0.5/(1-m))*(y-m)
		if math.Max(0.5*d.kp[j], 0.5*d.km[j]) >= 1/d.delta {
			d.out[j] = true
		}
	}
}

// hull returns the smallest and largest grid points never excluded.
func (d *directCS) hull() (lo, hi float64) {
	lo, hi = math.NaN(), math.NaN()
	for j, o := range d.out {
		if !o {
			if math.IsNaN(lo) {
				lo = d.m[j]
			}
			hi = d.m[j]
		}
	}
	return lo, hi
}

// TestBettingMatchesDirect checks the grid-and-regrid interval against the
// capitals computed from the formulas on a fixed grid of 4000 points: the
// interval must contain every point the direct sequence keeps and be at
// most a few of its own grid steps wider. It also checks the monotonicity
// in m that the interval computation relies on.
func TestBettingMatchesDirect(t *testing.T) {
	for _, c := range []struct {
		name    string
		horizon int
		aim     float64
		draw    func(r *rand.Rand) float64
	}{
		{"bernoulli 0.3", 0, 0, func(r *rand.Rand) float64 { return float64(bool2int(r.Float64() < 0.3)) }},
		{"uniform on [0.4, 0.6]", 0, 0, func(r *rand.Rand) float64 { return 0.4 + 0.2*r.Float64() }},
		{"three points, horizon 500", 500, 0, func(r *rand.Rand) float64 { return []float64{0, 0.5, 0.9}[r.IntN(3)] }},
		{"three points, aim 0.02", 0, 0.02, func(r *rand.Rand) float64 { return []float64{0, 0.5, 0.9}[r.IntN(3)] }},
	} {
		t.Run(c.name, func(t *testing.T) {
			rng := rand.New(rand.NewPCG(9, 10))
			cs, err := NewBettingCS(0, 1, 0.05, &BettingOptions{Horizon: c.horizon, Aim: c.aim})
			if err != nil {
				t.Fatal(err)
			}
			ref := newDirectCS(4000, 0.05)
			ref.horizon, ref.aim = c.horizon, c.aim
			for step := 1; step <= 3000; step++ {
				y := c.draw(rng)
				if err := cs.Add(y); err != nil {
					t.Fatal(err)
				}
				ref.add(y)
				if step%250 != 0 {
					continue
				}
				lo, hi := cs.Interval()
				rlo, rhi := ref.hull()
				if lo > rlo || hi < rhi {
					t.Fatalf("t = %d: interval [%v, %v] does not contain the direct sequence's points [%v, %v]", step, lo, hi, rlo, rhi)
				}
				// Slack: 2 direct grid steps plus 4 of our own (the
				// interval spans at most 2·Grid of them after a regrid).
				slack := 2.0/4000 + 4*(hi-lo)/64
				if (rlo-lo)+(hi-rhi) > slack {
					t.Errorf("t = %d: interval [%v, %v] wider than the direct [%v, %v] by more than %v", step, lo, hi, rlo, rhi, slack)
				}
			}
			for j := 1; j < len(ref.m); j++ {
				if ref.kp[j] > ref.kp[j-1]*(1+1e-12) || ref.km[j] < ref.km[j-1]*(1-1e-12) {
					t.Fatalf("capitals not monotone at m = %v: K⁺ %v → %v, K⁻ %v → %v", ref.m[j], ref.kp[j-1], ref.kp[j], ref.km[j-1], ref.km[j])
				}
			}
		})
	}
}

func bool2int(b bool) int {
	if b {
		return 1
	}
	return 0
}

// TestBettingCoverageStopped checks the miss rate with data-dependent
// stopping on Bernoulli(0.3) samples: each run stops as soon as the interval
// is narrower than 0.08. At δ = 0.05 with 400 runs, the miss fraction must
// not exceed δ + 3·sqrt(δ(1−δ)/400) ≈ 0.083 (a false failure has probability
// below 0.2%; the true miss rate of a confidence sequence is usually far
// below δ).
func TestBettingCoverageStopped(t *testing.T) {
	runs := 400
	if testing.Short() {
		runs = 60
	}
	rng := rand.New(rand.NewPCG(21, 22))
	miss := 0
	for range runs {
		cs, err := NewBettingCS(0, 1, 0.05, nil)
		if err != nil {
			t.Fatal(err)
		}
		for {
			if err := cs.Add(float64(bool2int(rng.Float64() < 0.3))); err != nil {
				t.Fatal(err)
			}
			if lo, hi := cs.Interval(); hi-lo < 0.08 || cs.Len() > 20000 {
				if lo > 0.3 || hi < 0.3 {
					miss++
				}
				break
			}
		}
	}
	limit := 0.05 + 3*math.Sqrt(0.05*0.95/float64(runs))
	if f := float64(miss) / float64(runs); f > limit {
		t.Errorf("missed the mean in %d of %d stopped runs (%.3f), want at most %.3f", miss, runs, f, limit)
	}
}

// TestBettingNormalRatio compares the width at n = 10^5 samples, with bets
// tuned for that horizon, to the normal-approximation width 2·1.96·σ/sqrt(n)
// of the same data. An anytime-valid width cannot beat it; the WSR bets
// should stay within a small factor (we measured about 1.3; the test
// allows up to 1.6).
func TestBettingNormalRatio(t *testing.T) {
	n := 100000
	if testing.Short() {
		n = 10000
	}
	rng := rand.New(rand.NewPCG(3, 4))
	cs, err := NewBettingCS(0, 1, 0.05, &BettingOptions{Horizon: n})
	if err != nil {
		t.Fatal(err)
	}
	sum, ssq := 0.0, 0.0
	for range n {
		y := 0.5 + 0.1*rng.NormFloat64()
		y = min(max(y, 0), 1)
		sum += y
		ssq += y * y
		if err := cs.Add(y); err != nil {
			t.Fatal(err)
		}
	}
	mean := sum / float64(n)
	sd := math.Sqrt(ssq/float64(n) - mean*mean)
	lo, hi := cs.Interval()
	normal := 2 * 1.959963984540054 * sd / math.Sqrt(float64(n))
	r := (hi - lo) / normal
	t.Logf("betting width / normal width at n = %d: %.3f", n, r)
	if r > 1.6 || r < 1 {
		t.Errorf("betting width / normal width at n = %d = %.3f, want in [1, 1.6]", n, r)
	}
}

func TestConfSeqErrors(t *testing.T) {
	for _, c := range []struct {
		name string
		make func() error
		want string
	}{
		{"betting empty range", func() error { _, err := NewBettingCS(1, 1, 0.05, nil); return err }, "want finite lo < hi"},
		{"betting δ", func() error { _, err := NewBettingCS(0, 1, 1, nil); return err }, "δ = 1"},
		{"betting grid", func() error { _, err := NewBettingCS(0, 1, 0.1, &BettingOptions{Grid: 3}); return err }, "grid of 3"},
		{"betting horizon", func() error { _, err := NewBettingCS(0, 1, 0.1, &BettingOptions{Horizon: -1}); return err }, "horizon -1"},
		{"betting aim", func() error { _, err := NewBettingCS(0, 1, 0.1, &BettingOptions{Aim: math.Inf(1)}); return err }, "aim +Inf"},
		{"bernstein growth", func() error { _, err := NewBernsteinCS(0, 1, 0.1, 0.5, 0); return err }, "growth 0.5"},
		{"bernstein exponent", func() error { _, err := NewBernsteinCS(0, 1, 0.1, 0, 1); return err }, "exponent 1"},
		{"betting sample outside", func() error {
			cs, _ := NewBettingCS(0, 1, 0.1, nil)
			return cs.Add(1.5)
		}, "sample 1.5 outside"},
		{"bernstein sample outside", func() error {
			cs, _ := NewBernsteinCS(-1, 1, 0.1, 0, 0)
			return cs.Add(math.NaN())
		}, "outside the range"},
	} {
		err := c.make()
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error = %v, want one containing %q", c.name, err, c.want)
		}
	}
}
