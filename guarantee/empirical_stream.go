package guarantee

import (
	"fmt"

	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/internal/shotsum"
)

// EmpiricalStream is [Empirical] for shots fed to an [estimate.Stream]: the
// same forms, computed from the stream's running sums instead of the
// records (MATH.md §4.10), in memory that does not grow with the number of
// shots. The groups are the stream's settings in the order their first shot
// arrived, as the groups of records read from the same shots. The terms
// left out are the stream's (estimate.Options.Exclude), and so is the
// coefficient split (estimate.Options.Split): the bound is then that of
// Empirical with the same split; opts.Exclude and opts.Split must be nil.
// Entangled settings are read through their circuits as by Empirical.
//
// It equals Empirical on the same shots to the last bit for the pooled and
// per-group forms and for DataBound.ApproxRadius; the Residual form expands
// each fold's sum of squared residuals algebraically, which changes its
// rounding (MATH.md §4.10). It returns an error for the errors of
// Empirical, a stream whose shots differ from its plan's, and a stream with
// readout mitigation (Empirical bounds unmitigated estimates).
func EmpiricalStream(st *estimate.Stream, delta float64, opts *EmpiricalOptions) (*DataBound, error) {
	var o EmpiricalOptions
	if opts != nil {
		o = *opts
	}
	if st == nil {
		return nil, fmt.Errorf("guarantee: nil stream")
	}
	if !validDelta(delta) {
		return nil, fmt.Errorf("guarantee: confidence parameter δ = %v is not in [1e-300, 1) (MinDelta ≤ δ < 1)", delta)
	}
	if err := st.Check(); err != nil {
		return nil, err
	}
	if st.Len() == 0 {
		return nil, fmt.Errorf("guarantee: no shots in the stream")
	}
	if o.Split != nil {
		return nil, fmt.Errorf("guarantee: EmpiricalOptions.Split is set: a stream's coefficient split is that of its estimate.Options")
	}
	if o.Exclude != nil {
		return nil, fmt.Errorf("guarantee: EmpiricalOptions.Exclude is set: a stream's terms left out are those of its estimate.Options")
	}
	sm := st.Sums()
	if sm.Mitigated {
		return nil, fmt.Errorf("guarantee: the stream's estimate is readout-mitigated; data bounds are for unmitigated estimates")
	}
	if err := checkShares(o.Shares, len(sm.Order)); err != nil {
		return nil, err
	}
	if o.Form < Pooled || o.Form > Residual {
		return nil, fmt.Errorf("guarantee: unknown empirical form %d", int(o.Form))
	}
	h := sm.H
	// The weights are those of Empirical: h_i/N_i for the terms in the
	// estimate, and the bias of the others.
	bias := 0.0
	for i, n := range sm.Cover {
		if n == 0 || (sm.Exclude != nil && sm.Exclude[i]) {
			bias += abs(h.Coeff(i))
		}
	}
	gs := make([]*groupStat, len(sm.Order))
	for k, gi := range sm.Order {
		g := sm.Groups[gi]
		gs[k] = &groupStat{setting: g.Setting, weight: float64(g.T), half: g.Half, t: g.T, sum: g.Sum, ssq: g.SumSq, shift: g.Shift}
	}
	b := finishBound(h, gs, bias, sm.Shots, delta, o.Form, o.Shares)
	rs := streamResiduals(sm)
	b.ApproxRadius = approxRadiusLOO(gs, delta, rs.loo)
	if o.Form == Residual {
		w := 0.0
		for k, g := range gs {
			w = max(w, 2*g.half)
			b.Groups[k].Delta = 0
		}
		b.Radius = residualRadius(rs, w, delta)
		b.Bound = b.Radius + b.Bias
	}
	return b, nil
}

func abs(x float64) float64 {
	if x < 0 {
		return -x
	}
	return x
}

// streamResiduals is residuals from running sums. For the shots of fold k
// of a group, the prediction ĉ = Σ_i c_i ô_i^{(−k)} is one number, so
// Σ (w_n − ĉ)² = Σ d_n² + 2e Σ d_n + t e² with d_n = w_n − shift and
// e = shift − ĉ (MATH.md §4.10). The one-shot groups' leave-one-out
// residuals and the worst-case sums are computed as residuals does.
func streamResiduals(sm *shotsum.Sums) residualStats {
	m := len(sm.A)
	var sum, cnt [residualFolds][]float64
	for k := range residualFolds {
		sum[k], cnt[k] = make([]float64, m), make([]float64, m)
		for i := range m {
			cnt[k][i] = float64(sm.FoldCnt[k][i])
			sum[k][i] = cnt[k][i] - 2*float64(sm.FoldOnes[k][i])
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
	for i, c := range sm.A {
		if c != 0 && tcnt[i] == 1 {
			st.loo += c * c
		}
	}
	for _, gi := range sm.Order {
		g := sm.Groups[gi]
		_, kept, coef := sm.Lists(g)
		for k := range residualFolds {
			if g.FoldT[k] == 0 {
				continue
			}
			pred := 0.0
			for a, i := range kept {
				if c := cnt[k][i]; tcnt[i] > c {
					pred += coef[a] * ((tot[i] - sum[k][i]) / (tcnt[i] - c))
				}
			}
			e := g.Shift - pred
			st.sq[k] += g.FoldSq[k] + 2*e*g.FoldSum[k] + float64(g.FoldT[k])*e*e
		}
		// The worst-case sums: residuals adds Half² shot by shot to the
		// sum of the shot's fold. The folds' sums are apart, so adding
		// fold by fold (FoldT[k] shots each) is the same additions in the
		// same order for every sum.
		x := g.Half * g.Half
		for k := range residualFolds {
			if g.FoldT[k] > 0 {
				st.big[k] = max(st.big[k], 4*x)
			}
			w := st.worst[k]
			for range g.FoldT[k] {
				w += x
			}
			st.worst[k] = w
		}
		if g.T == 1 {
			r := 0.0
			for a, i := range kept {
				if tcnt[i] > 1 {
					v := -1.0
					if !sm.Odd(g, i, g.One) {
						v = 1
					}
					r += coef[a] * (v - (tot[i]-v)/(tcnt[i]-1))
				}
			}
			st.loo += r * r
		}
	}
	return st
}
