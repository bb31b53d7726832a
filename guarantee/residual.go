package guarantee

import (
	"math"

	"github.com/shotplan/shotplan/pauli"
)

// residualFolds is the number of folds of the Residual form: shot n of the
// records (counted through the groups in order) belongs to fold n mod
// residualFolds, an assignment fixed by the plan before any outcome.
const residualFolds = 2

// residualClasses is the number of classes of shots by their range: a
// shot of per-shot half-range s' falls in class c when (2s')² lies in
// (M/4^(c+1), M/4^c], M the largest (2s')² of the plan, the last class
// taking everything below. The classes depend on the plan only.
const residualClasses = 8

// residualStats holds what the data bound of a fixed plan learns from the
// residuals of its shots about the other shots' term means (MATH.md §4.7).
type residualStats struct {
	// loo is the approximate variance of the estimate: the within-setting
	// part of the groups with two or more shots is added by the caller;
	// loo holds Σ R_g² over the one-shot groups, R_g the leave-one-out
	// residual, plus coef_i² for every term covered by a single shot.
	loo float64
	// sq[k][c] is Σ over the shots of fold k and class c of (w_n − c_n)²,
	// c_n the shot's prediction from the term means of the other folds,
	// big[k][c] the largest (2 s'_n)² there and worst[k][c] = Σ s'_n², the
	// variance bound that holds for every state.
	sq, big, worst [residualFolds][residualClasses]float64
}

// class returns the class of a shot whose (2s')² is m, top being the
// largest (2s')² of the plan.
func class(m, top float64) int {
	c := 0
	for c < residualClasses-1 && m <= top/4 {
		m *= 4
		c++
	}
	return c
}

// residuals makes two passes over the shots of the groups (out(g, j) is
// outcome j of group g): term sums per fold, then every shot's residuals.
// coef holds the weights h_i/N_i of the terms in the estimate, zero for
// the others.
func residuals(tab *pauli.Table, gs []*groupStat, coef []float64, out func(g, j int) pauli.Bits) residualStats {
	m := len(coef)
	var sum, cnt [residualFolds][]float64
	for k := range residualFolds {
		sum[k], cnt[k] = make([]float64, m), make([]float64, m)
	}
	var buf []int8
	samples := func(g *groupStat, gi, j int) []int8 {
		if cap(buf) < len(g.rows) {
			buf = make([]int8, len(g.rows))
		}
		buf = buf[:len(g.rows)]
		if g.setting.IsLocal() {
			tab.Samples(buf, g.rows, out(gi, j))
		} else {
			tab.SettingSamples(buf, g.rows, g.setting, out(gi, j))
		}
		return buf
	}
	n := 0
	top := 0.0
	for _, g := range gs {
		if g.t > 0 {
			top = max(top, 4*g.half*g.half)
		}
	}
	for gi, g := range gs {
		for j := range g.t {
			k := n % residualFolds
			for a, s := range samples(g, gi, j) {
				sum[k][g.rows[a]] += float64(s)
				cnt[k][g.rows[a]]++
			}
			n++
		}
	}
	tot, tcnt := make([]float64, m), make([]float64, m)
	for i := range m {
		for k := range residualFolds {
			tot[i] += sum[k][i]
			tcnt[i] += cnt[k][i]
		}
	}
	var st residualStats
	for i, c := range coef {
		if c != 0 && tcnt[i] == 1 {
			st.loo += c * c // no other sample: the largest variance of ±1
		}
	}
	n = 0
	for gi, g := range gs {
		for j := range g.t {
			k := n % residualFolds
			n++
			y, r := 0.0, 0.0
			for a, s := range samples(g, gi, j) {
				i, v := g.rows[a], float64(s)
				if c := cnt[k][i]; tcnt[i] > c {
					y += g.coef[a] * (v - (tot[i]-sum[k][i])/(tcnt[i]-c))
				} else {
					y += g.coef[a] * v // no other fold's sample: predict 0
				}
				if g.t == 1 && tcnt[i] > 1 {
					r += g.coef[a] * (v - (tot[i]-v)/(tcnt[i]-1))
				}
			}
			m := 4 * g.half * g.half
			c := class(m, top)
			st.sq[k][c] += y * y
			st.big[k][c] = max(st.big[k][c], m)
			st.worst[k][c] += m / 4
			if g.t == 1 {
				st.loo += r * r
			}
		}
	}
	return st
}

// residualRadius is the Residual form's statistical radius at confidence
// 1 − δ for an estimate Σ_n (w_n − E w_n) whose shot terms lie within ±b:
// with probability 1 − δ/2 the variance is at most Σ_{k,c} U_kc, U_kc the
// smaller of the worst case and the bound of fold k and class c at
// δ/(2KC), and Bernstein's inequality at δ/2 bounds the sum (MATH.md §4.7).
func residualRadius(st residualStats, b, delta float64) float64 {
	l := math.Log(2 * residualFolds * residualClasses / delta)
	v := 0.0
	for k := range residualFolds {
		for c := range residualClasses {
			a := st.big[k][c] * l / 2
			u := math.Sqrt(a) + math.Sqrt(a+st.sq[k][c])
			v += min(u*u, st.worst[k][c])
		}
	}
	if b == 0 {
		return 0
	}
	return BernsteinRadius(1, v, b, delta/2)
}
