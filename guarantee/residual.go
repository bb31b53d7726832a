package guarantee

import (
	"math"

	"github.com/shotplan/shotplan/pauli"
)

// residualFolds is the number of folds of the Residual form: shot n of the
// records (counted through the groups in order) belongs to fold n mod
// residualFolds, an assignment fixed by the plan before any outcome.
const residualFolds = 2

// residualStats holds what the data bound of a fixed plan learns from the
// residuals of its shots about the other shots' term means (MATH.md §4.7).
type residualStats struct {
	// loo is the approximate variance of the estimate: the within-setting
	// part of the groups with two or more shots is added by the caller;
	// loo holds Σ R_g² over the one-shot groups, R_g the leave-one-out
	// residual, plus coef_i² for every term covered by a single shot.
	loo float64
	// sq[k] is Σ over the shots of fold k of (w_n − c_n)², c_n the shot's
	// prediction from the term means of the other folds, big[k] the
	// largest (2 s'_n)² there and worst[k] = Σ s'_n², the variance bound
	// that holds for every state.
	sq, big, worst [residualFolds]float64
}

// residuals makes two passes over the shots of the groups (out(g, j) is
// outcome j of group g): term sums per fold, then every shot's residuals.
// coef holds the weights h_i/N_i of the terms in the estimate, zero for
// the others; rowsOf gives each group's kept terms and their weights.
func residuals(tab *pauli.Table, gs []*groupStat, rowsOf groupRows, coef []float64, out func(g, j int) pauli.Bits) residualStats {
	m := len(coef)
	var sum, cnt [residualFolds][]float64
	for k := range residualFolds {
		sum[k], cnt[k] = make([]float64, m), make([]float64, m)
	}
	var buf []int8
	samples := func(g *groupStat, rows []int, gi, j int) []int8 {
		if cap(buf) < len(rows) {
			buf = make([]int8, len(rows))
		}
		buf = buf[:len(rows)]
		if g.setting.IsLocal() {
			tab.Samples(buf, rows, out(gi, j))
		} else {
			tab.SettingSamples(buf, rows, g.setting, out(gi, j))
		}
		return buf
	}
	n := 0
	for gi, g := range gs {
		rows, _, _ := rowsOf(gi)
		for j := range g.t {
			k := n % residualFolds
			for a, s := range samples(g, rows, gi, j) {
				sum[k][rows[a]] += float64(s)
				cnt[k][rows[a]]++
			}
			n++
		}
	}
	tot, tcnt, st := foldTotals(&sum, &cnt, coef)
	n = 0
	for gi, g := range gs {
		rows, gcoef, _ := rowsOf(gi)
		for j := range g.t {
			k := n % residualFolds
			n++
			y, r := 0.0, 0.0
			for a, s := range samples(g, rows, gi, j) {
				i, v := rows[a], float64(s)
				if c := cnt[k][i]; tcnt[i] > c {
					y += gcoef[a] * (v - (tot[i]-sum[k][i])/(tcnt[i]-c))
				} else {
					y += gcoef[a] * v // no other fold's sample: predict 0
				}
				if g.t == 1 && tcnt[i] > 1 {
					r += gcoef[a] * (v - (tot[i]-v)/(tcnt[i]-1))
				}
			}
			st.sq[k] += y * y
			st.big[k] = max(st.big[k], 4*g.half*g.half)
			st.worst[k] += g.half * g.half
			if g.t == 1 {
				st.loo += r * r
			}
		}
	}
	return st
}

// foldTotals adds each term's per-fold sums and sample counts over the
// folds, and starts the statistics with the leave-one-out part of the terms
// in the estimate that have a single sample.
func foldTotals(sum, cnt *[residualFolds][]float64, coef []float64) (tot, tcnt []float64, st residualStats) {
	m := len(sum[0])
	tot, tcnt = make([]float64, m), make([]float64, m)
	for i := range m {
		for k := range residualFolds {
			tot[i] += sum[k][i]
			tcnt[i] += cnt[k][i]
		}
	}
	for i, c := range coef {
		if c != 0 && tcnt[i] == 1 {
			st.loo += c * c // no other sample: the largest variance of ±1
		}
	}
	return tot, tcnt, st
}

// residualRadius is the Residual form's statistical radius at confidence
// 1 − δ for an estimate Σ_n (w_n − E w_n) whose shot terms lie within ±b:
// with probability 1 − δ/2 the variance is at most Σ_k U_k, U_k the
// smaller of the worst case and the bound of fold k at δ/(2K), and
// Bernstein's inequality at δ/2 bounds the sum (MATH.md §4.7).
func residualRadius(st residualStats, b, delta float64) float64 {
	l := math.Log(2 * residualFolds / delta)
	v := 0.0
	for k := range residualFolds {
		a := st.big[k] * l / 2
		u := math.Sqrt(a) + math.Sqrt(a+st.sq[k])
		v += min(u*u, st.worst[k])
	}
	if b == 0 {
		return 0
	}
	return BernsteinRadius(1, v, b, delta/2)
}
