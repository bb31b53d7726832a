package guarantee

import (
	"math"
	"testing"
)

// The expected values below are copied from the "Statistics" section of
// ../shared/data/REFERENCE_VALUES.md, whose lines are quoted beside each case.
func TestTailBoundsReference(t *testing.T) {
	const tol = 1e-6
	cases := []struct {
		name string
		got  float64
		want float64
	}{
		// "Hoeffding (Hoeffding 1963, Thm 2), samples in [−1, 1] ...
		// the radius at N = 1000, δ = 0.05 is 0.08589388."
		{"HoeffdingRadius(1000, width 2, δ=0.05)", HoeffdingRadius(1000, 2, 0.05), 0.08589388},
		// §3.1 radius for the same sum: V = N·1² for N samples in [−1,1],
		// divided by N for the mean: sqrt(2·(1/1000)·ln 40).
		{"ShotwiseRadius(1/1000, δ=0.05)", ShotwiseRadius(1.0/1000, 0.05), 0.08589388},
		// "Bernstein, |X_i − μ| ≤ b, Var ≤ σ² ... N = 1000, σ² = 0.25,
		// b = 1, δ = 0.05: t = 0.04419417 (exact root)."
		{"BernsteinRadius(1000, 0.25, 1, 0.05)", BernsteinRadius(1000, 0.25, 1, 0.05), 0.04419417},
		// "Empirical Bernstein (Maurer & Pontil 2009, Thm 4), i.i.d. in
		// [0, 1], one-sided ... n = 1000, V = 0.25, δ = 0.05 → 0.05156294."
		{"EmpiricalBernsteinMP(1000, 0.25, 1, 0.05)", EmpiricalBernsteinMP(1000, 0.25, 1, 0.05), 0.05156294},
		// "Empirical Bernstein (Audibert, Munos & Szepesvári 2009), range R
		// ... t = 1000, V = 0.25, R = 1, δ = 0.05 → 0.05752872."
		{"EmpiricalBernsteinAMS(1000, 0.25, 1, 0.05)", EmpiricalBernsteinAMS(1000, 0.25, 1, 0.05), 0.05752872},
	}
	for _, c := range cases {
		if math.Abs(c.got-c.want) > tol {
			t.Errorf("%s = %.9f, want %.8f (±%g)", c.name, c.got, c.want, tol)
		}
	}
}

func TestHoeffdingShotsReference(t *testing.T) {
	// REFERENCE_VALUES.md: "ε = 0.1, δ = 0.05 needs N = 738" for samples in
	// [−1, 1] (width 2).
	if got := HoeffdingShots(0.1, 2, 0.05); got != 738 {
		t.Errorf("HoeffdingShots(0.1, width 2, 0.05) = %d, want 738", got)
	}
	// Smallest: the radius at n meets ε, at n−1 it does not.
	for _, eps := range []float64{0.3, 0.1, 0.0123, 1e-3} {
		for _, delta := range []float64{0.5, 0.05, 1e-6} {
			n := HoeffdingShots(eps, 2, delta)
			if HoeffdingRadius(n, 2, delta) > eps {
				t.Errorf("HoeffdingRadius(HoeffdingShots(%g, 2, %g) = %d) = %g > ε", eps, delta, n, HoeffdingRadius(n, 2, delta))
			}
			if n > 1 && HoeffdingRadius(n-1, 2, delta) <= eps {
				t.Errorf("HoeffdingShots(%g, 2, %g) = %d is not the smallest", eps, delta, n)
			}
		}
	}
}

// The scale rules: a radius for samples of width w is w times the radius for
// width 1 when the variance scales by w² (the bounds are homogeneous; a
// consequence of rescaling the samples, as in Maurer & Pontil's remark).
func TestTailBoundsScale(t *testing.T) {
	const w, tol = 3.7, 1e-12
	checks := []struct {
		name         string
		scaled, unit float64
	}{
		{"Hoeffding", HoeffdingRadius(50, w, 0.1), HoeffdingRadius(50, 1, 0.1)},
		{"Bernstein", BernsteinRadius(50, 0.2*w*w, w, 0.1), BernsteinRadius(50, 0.2, 1, 0.1)},
		{"MP", EmpiricalBernsteinMP(50, 0.2*w*w, w, 0.1), EmpiricalBernsteinMP(50, 0.2, 1, 0.1)},
		{"AMS", EmpiricalBernsteinAMS(50, 0.2*w*w, w, 0.1), EmpiricalBernsteinAMS(50, 0.2, 1, 0.1)},
	}
	for _, c := range checks {
		if math.Abs(c.scaled-w*c.unit) > tol*c.scaled {
			t.Errorf("%s radius at width %g = %g, want %g × %g", c.name, w, c.scaled, w, c.unit)
		}
	}
}

func TestTailBoundsDomain(t *testing.T) {
	cases := []struct {
		name string
		got  float64
	}{
		{"HoeffdingRadius(n=0)", HoeffdingRadius(0, 2, 0.05)},
		{"HoeffdingRadius(δ=1)", HoeffdingRadius(10, 2, 1)},
		{"HoeffdingRadius(δ=0)", HoeffdingRadius(10, 2, 0)},
		{"ShotwiseRadius(v<0)", ShotwiseRadius(-1, 0.05)},
		{"BernsteinRadius(σ²<0)", BernsteinRadius(10, -1, 1, 0.05)},
		{"EmpiricalBernsteinMP(n=1)", EmpiricalBernsteinMP(1, 0.1, 1, 0.05)},
		{"EmpiricalBernsteinAMS(t=0)", EmpiricalBernsteinAMS(0, 0.1, 1, 0.05)},
		{"StoppingSchedule{P=1}.At(1)", StoppingSchedule{Delta: 0.1, P: 1}.At(1)},
		{"StoppingSchedule{}.At(0)", StoppingSchedule{Delta: 0.1}.At(0)},
	}
	for _, c := range cases {
		if !math.IsNaN(c.got) {
			t.Errorf("%s = %g, want NaN", c.name, c.got)
		}
	}
	// HoeffdingShots documents −1 for every argument outside its domain,
	// NaN included (a NaN once converted to math.MinInt64).
	nan := math.NaN()
	for _, c := range []struct {
		name              string
		eps, width, delta float64
	}{
		{"ε=0", 0, 2, 0.05},
		{"ε=NaN", nan, 2, 0.05},
		{"ε=+Inf", math.Inf(1), 2, 0.05},
		{"width=NaN", 0.1, nan, 0.05},
		{"width<0", 0.1, -1, 0.05},
		{"δ=NaN", 0.1, 2, nan},
		{"δ=1", 0.1, 2, 1},
	} {
		if got := HoeffdingShots(c.eps, c.width, c.delta); got != -1 {
			t.Errorf("HoeffdingShots(%s) = %d, want -1", c.name, got)
		}
	}
	if got := HoeffdingRadius(10, nan, 0.05); !math.IsNaN(got) {
		t.Errorf("HoeffdingRadius(width=NaN) = %g, want NaN", got)
	}
}

// The schedule of Mnih, Szepesvári & Audibert (2008) spends at most δ in
// total; the partial sums approach δ from below (the integral bound of the
// doc comment).
func TestStoppingScheduleSum(t *testing.T) {
	for _, p := range []float64{1.1, 1.5, 2, 3} {
		s := StoppingSchedule{Delta: 0.05, P: p}
		sum := 0.0
		for k := 1; k <= 1_000_000; k++ {
			sum += s.At(k)
		}
		if sum > s.Delta {
			t.Errorf("Σ_{t≤1e6} StoppingSchedule{0.05, %g}.At(t) = %g, want ≤ 0.05", p, sum)
		}
	}
	// Exact first term: δ(p−1)/p at t = 1.
	if got, want := (StoppingSchedule{Delta: 0.1}).At(1), 0.05; math.Abs(got-want) > 1e-15 {
		t.Errorf("StoppingSchedule{Delta: 0.1}.At(1) = %g, want %g", got, want)
	}
}
