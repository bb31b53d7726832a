package guarantee

import "math"

// The functions in this file are tail bounds for the mean of independent
// bounded samples. They are pure formulas: an argument outside its domain
// (n too small, δ outside [MinDelta, 1), a negative width or variance) gives NaN,
// as math.Log does for a negative number. The certificate functions of this
// package check their input and return errors instead.

// MinDelta is the smallest confidence parameter δ the package accepts: the
// valid range is MinDelta ≤ δ < 1. Below about 1e-308, 2/δ overflows and
// ln(2/δ) is +Inf, so a smaller δ would give an infinite bound rather than
// an error; 1e-300 leaves room for the schedules that split δ over rounds.
const MinDelta = 1e-300

// validDelta reports whether δ is in [MinDelta, 1).
func validDelta(delta float64) bool { return delta >= MinDelta && delta < 1 }

// HoeffdingRadius returns ε such that the mean of n independent samples, each
// in an interval of the given width, lies within ε of its expectation with
// probability at least 1 − δ:
//
//	ε = width · sqrt(ln(2/δ) / (2n))
//
// (Hoeffding 1963, Theorem 2, two-sided). For samples in [−1, 1] (width 2)
// this is sqrt(2 ln(2/δ)/n).
func HoeffdingRadius(n int, width, delta float64) float64 {
	if n < 1 || !(width >= 0) || !validDelta(delta) {
		return math.NaN()
	}
	return width * math.Sqrt(math.Log(2/delta)/(2*float64(n)))
}

// HoeffdingShots returns the smallest n for which [HoeffdingRadius] is at most
// ε: n = ⌈width² ln(2/δ) / (2ε²)⌉. It returns −1 for an argument outside the
// domain (ε ≤ 0 or infinite, negative width, δ outside [MinDelta, 1), any
// of them NaN), 0 for width 0, and math.MaxInt when n would exceed half of it.
func HoeffdingShots(eps, width, delta float64) int {
	if !(eps > 0) || !(width >= 0) || !validDelta(delta) || math.IsInf(eps, 0) {
		return -1
	}
	x := width * width * math.Log(2/delta) / (2 * eps * eps)
	if x > float64(math.MaxInt/2) {
		return math.MaxInt
	}
	n := int(math.Ceil(x))
	// Guard the rounding of the division: the result must satisfy the bound
	// as HoeffdingRadius computes it.
	for n > 0 && HoeffdingRadius(n-1, width, delta) <= eps {
		n--
	}
	for n > 0 && HoeffdingRadius(n, width, delta) > eps {
		n++
	}
	return n
}

// ShotwiseRadius returns sqrt(2 v ln(2/δ)), the radius of MATH.md §3.1 for a
// plan whose shot-wise Hoeffding variance proxy is v (the sum over shots of
// the squared half-widths of the shots' contributions): the error of the
// grouped estimator, less its bias, exceeds it with probability at most δ.
func ShotwiseRadius(v, delta float64) float64 {
	if v < 0 || !validDelta(delta) {
		return math.NaN()
	}
	return math.Sqrt(2 * v * math.Log(2/delta))
}

// BernsteinRadius returns the t that solves
//
//	2 exp(−n t² / (2σ² + 2bt/3)) = δ,
//
// the two-sided Bernstein radius for the mean of n independent samples with
// |X − μ| ≤ b and variance at most σ² (Bernstein's inequality; e.g.
// Boucheron, Lugosi & Massart, Concentration Inequalities, 2013, §2.8). The
// positive root of n t² − (2bL/3) t − 2σ²L = 0 with L = ln(2/δ) is
// t = (bL/3 + sqrt((bL/3)² + 2nσ²L)) / n.
func BernsteinRadius(n int, variance, bound, delta float64) float64 {
	if n < 1 || variance < 0 || bound < 0 || !validDelta(delta) {
		return math.NaN()
	}
	l := math.Log(2 / delta)
	a := bound * l / 3
	return (a + math.Sqrt(a*a+2*float64(n)*variance*l)) / float64(n)
}

// EmpiricalBernsteinMP returns the one-sided empirical Bernstein radius of
// Maurer & Pontil, "Empirical Bernstein bounds and sample variance
// penalization" (COLT 2009), Theorem 4, rescaled from [0, 1] to samples in
// an interval of the given width:
//
//	sqrt(2 V ln(2/δ) / n) + 7 · width · ln(2/δ) / (3(n − 1)),
//
// where V is the unbiased sample variance (divisor n − 1) of the n samples.
// With probability at least 1 − δ the expectation exceeds the sample mean by
// at most this radius; the same holds for the other side, so a two-sided
// statement at confidence 1 − δ uses δ/2 here. It needs n ≥ 2.
func EmpiricalBernsteinMP(n int, variance, width, delta float64) float64 {
	if n < 2 || variance < 0 || width < 0 || !validDelta(delta) {
		return math.NaN()
	}
	l := math.Log(2 / delta)
	return math.Sqrt(2*variance*l/float64(n)) + 7*width*l/(3*float64(n-1))
}

// EmpiricalBernsteinAMS returns the two-sided empirical Bernstein radius of
// Audibert, Munos & Szepesvári, "Exploration–exploitation tradeoff using
// variance estimates in multi-armed bandits" (Theor. Comput. Sci. 410, 2009),
// Theorem 1, for t i.i.d. samples in an interval of the given width R:
//
//	sqrt(2 V ln(3/δ) / t) + 3 R ln(3/δ) / t,
//
// where V is the biased sample variance (divisor t). The sample mean lies
// within this radius of the expectation with probability at least 1 − δ.
func EmpiricalBernsteinAMS(t int, variance, width, delta float64) float64 {
	if t < 1 || variance < 0 || width < 0 || !validDelta(delta) {
		return math.NaN()
	}
	l := math.Log(3 / delta)
	return math.Sqrt(2*variance*l/float64(t)) + 3*width*l/float64(t)
}

// StoppingSchedule spends a total confidence budget Delta over the checks
// t = 1, 2, 3, ... of a sequential test, as in the empirical Bernstein
// stopping rule of Mnih, Szepesvári & Audibert, "Empirical Bernstein
// stopping" (ICML 2008): check t uses
//
//	δ_t = Delta (P − 1) / (P t^P),
//
// and Σ_{t≥1} δ_t ≤ Delta (P−1)/P · (1 + ∫_1^∞ t^{−P} dt) = Delta, so bounds
// that each hold with probability 1 − δ_t hold at every check at once with
// probability at least 1 − Delta, whatever rule decides when to stop.
type StoppingSchedule struct {
	// Delta is the total probability of any failure, in (0, 1).
	Delta float64
	// P is the exponent, greater than 1. Zero means 2: with few checks (a
	// geometric or a short schedule of rounds) it spends more of Delta
	// early than the P close to 1 that suits very many checks. (Our choice,
	// not the paper's.)
	P float64
}

// At returns δ_t for check t ≥ 1, or NaN for t < 1, an exponent P ≤ 1 other
// than zero, or Delta outside (0, 1).
func (s StoppingSchedule) At(t int) float64 {
	p := s.P
	if p == 0 {
		p = 2
	}
	if t < 1 || !(p > 1) || !validDelta(s.Delta) {
		return math.NaN()
	}
	return s.Delta * (p - 1) / (p * math.Pow(float64(t), p))
}
