package guarantee

import (
	"fmt"
	"math"
	"math/bits"
)

// Truncation is a choice of terms to leave out of the estimator (MATH.md
// §3.3) and the bound it gives: dropping term i adds at most |h_i| of bias
// and removes its a_i = |h_i|/N_i from every s_Q (with a coefficient split,
// its |h_i| α_{iQ}/m_Q from each s_Q, MATH.md §2.5), while the weights of
// the kept terms are unchanged.
type Truncation struct {
	// Drop[i] reports whether term i is left out; it always includes the
	// terms with N_i = 0. Pass it as the estimator's exclusion list.
	Drop []bool
	// Dropped is the number of true entries of Drop.
	Dropped int
	// Bias is Σ_{i dropped} |h_i|.
	Bias float64
	// Variance is V_kept = Σ_n (Σ_{i◁Q_n, i kept} a_i)² (with a split,
	// Σ_Q (Σ_{i◁Q, i kept} |h_i| α_{iQ})²/m_Q) and Radius is
	// sqrt(2 V_kept ln(2/δ)).
	Variance, Radius float64
	// RelaxedRadius is sqrt(2 ln(2/δ)) Σ_{i kept} |h_i|/sqrt(N_i) (with a
	// split, |h_i| r_i in place of |h_i|/sqrt(N_i); see CertifyPlan).
	RelaxedRadius float64
	// Bound is Bias + Radius: the guaranteed error at confidence 1 − δ of
	// the estimator without the dropped terms.
	Bound float64
	// Lower is a lower bound on Bias + Radius over every possible dropped
	// set, and Exact reports that Bound attains the minimum (Lower = Bound).
	// For the threshold rule, Lower and Exact are those of the optimal
	// search, for comparison.
	Lower float64
	Exact bool
	// Method says how the set was chosen.
	Method string
}

// evaluate fills the bound of a dropped set; full are the loads with
// nothing dropped, which are reused when every dropped term has a_i = 0.
func evaluate(c *coverage, a, full []float64, drop []bool, delta float64, method string) Truncation {
	l := math.Log(2 / delta)
	t := Truncation{Drop: drop, Method: method}
	for i, d := range drop {
		abs := math.Abs(c.h.Coeff(i))
		if d {
			t.Dropped++
			t.Bias += abs
			continue
		}
		t.RelaxedRadius += abs / math.Sqrt(float64(c.cover[i]))
	}
	t.RelaxedRadius *= math.Sqrt(2 * l)
	// Dropping terms of weight zero leaves every load as it is: the loads
	// are sums of non-negative weights a_i = |h_i|/N_i, and adding +0
	// changes none.
	same := full != nil
	for i, d := range drop {
		if d && a[i] != 0 {
			same = false
			break
		}
	}
	if same {
		t.Variance = c.variance(full)
	} else {
		t.Variance = c.variance(c.loads(a, drop))
	}
	t.Radius = math.Sqrt(2 * t.Variance * l)
	t.Bound = t.Bias + t.Radius
	return t
}

// thresholdTruncation applies the δ-only rule of MATH.md §3.3: drop term i
// when N_i < c(δ)² = 2 ln(2/δ), which is where its relaxed share
// c |h_i|/sqrt(N_i) exceeds its bias |h_i|.
func thresholdTruncation(c *coverage, a, full []float64, delta float64) Truncation {
	c2 := 2 * math.Log(2/delta)
	drop := make([]bool, len(c.cover))
	for i, n := range c.cover {
		drop[i] = float64(n) < c2
	}
	return evaluate(c, a, full, drop, delta, fmt.Sprintf("threshold: drop terms with N_i < 2 ln(2/δ) = %.4g", c2))
}

// optimalTruncation minimises F(D) = Σ_{i∈D} |h_i| + c sqrt(V(kept)) over the
// dropped sets D, with c = sqrt(2 ln(2/δ)), for the coverage's weights:
// a_i = |h_i|/N_i on every setting covering term i, or with a coefficient
// split |h_i| α_{iQ}/m_Q on setting Q (MATH.md §2.5). s are the loads s_Q
// with nothing dropped, thr the threshold rule's dropped set (its covered
// terms are the candidates; what states their condition for Method), and
// eval returns the bound of a dropped set.
//
// # Reduction to few candidates
//
// V(K) = ‖B x_K‖² for the nonnegative matrix B with rows sqrt(m_Q)·(w_{iQ}
// [i◁Q])_i, w_{iQ} term i's weight in s_Q, so sqrt V is a norm of the
// kept-indicator. By the triangle inequality, sqrt V(K) − sqrt V(K∖{i}) ≤
// ‖B e_i‖, which is a_i sqrt(N_i) = |h_i|/sqrt(N_i) without a split and
// |h_i| r_i, r_i² = Σ_Q α_{iQ}²/m_Q, with one; hence dropping i from any
// kept set changes F by at least |h_i| (1 − c‖B e_i‖/|h_i|), which is ≥ 0
// when N_i ≥ c² (c r_i ≤ 1 with a split). Starting from any optimum and
// re-adding such terms one by one never increases F, so some optimum keeps
// every such term; uncovered terms are dropped by definition. Only the
// other covered terms are searched — the terms the threshold rule drops.
//
// # Search
//
// With at most enumerate candidates, every subset is tried in Gray-code order
// (each step moves one term and updates the s_Q of its settings), which is
// exact. With more, a local search (single moves until none improves F)
// starts from "drop none" and from "drop all candidates", and its better
// result seeds a depth-first branch and bound (see branchAndBound), which is
// exact when it completes within budget steps. If it does not, the best
// set found is reported with a lower bound: the smallest bound of the open
// nodes, or, if larger, one from the convex relaxation — F extended to kept
// fractions x ∈ [0, 1] is linear plus a norm, hence convex, and a Frank–Wolfe
// run gives F(x) + min_y ∇F(x)·(y − x) ≤ min F. The general problem (a
// linear term plus the norm of a nonnegative combination, over subsets) has
// no known polynomial algorithm, so a search this size can fail to finish;
// Exact says whether it did.
func optimalTruncation(c *coverage, s []float64, thr []bool, what string, eval func(drop []bool, method string) Truncation, delta float64, enumerate, budget int) Truncation {
	l := math.Log(2 / delta)
	cc := math.Sqrt(2 * l)
	m := len(c.cover)

	// Candidates and, for each, the distinct settings that cover it.
	cand := make([]int, 0)
	pos := make([]int32, m)
	for i := range pos {
		pos[i] = -1
	}
	drop := make([]bool, m)
	bias0 := 0.0
	for i, n := range c.cover {
		switch {
		case n == 0:
			drop[i] = true
			bias0 += math.Abs(c.h.Coeff(i))
		case thr[i]:
			pos[i] = int32(len(cand))
			cand = append(cand, i)
		}
	}
	if len(cand) == 0 {
		t := eval(drop, "exact: no term has "+what)
		t.Lower, t.Exact = t.Bound, true
		return t
	}
	cnt := make([]int, len(cand)+1)
	var rev []int32
	if c.letters != nil {
		for k, i := range cand {
			rev = c.letters.AppendCovering(rev, i)
			cnt[k+1] = len(rev)
		}
	} else {
		for q := range c.settings {
			for _, i := range c.terms(q) {
				if p := pos[i]; p >= 0 {
					cnt[p+1]++
				}
			}
		}
		for k := range cand {
			cnt[k+1] += cnt[k]
		}
		rev = make([]int32, cnt[len(cand)])
		fill := append([]int(nil), cnt[:len(cand)]...)
		for q := range c.settings {
			for _, i := range c.terms(q) {
				if p := pos[i]; p >= 0 {
					rev[fill[p]] = int32(q)
					fill[p]++
				}
			}
		}
	}
	fac, rel := c.dropWeights(cand, pos, cnt, rev)
	// Pairs of weight zero (a split's α_{iQ} = 0) change no load: leave
	// them out. Without a split there are none.
	w := 0
	for k := range cand {
		lo, hi := cnt[k], cnt[k+1]
		cnt[k] = w
		for j := lo; j < hi; j++ {
			if rel[j] != 0 {
				rev[w], rel[w] = rev[j], rel[j]
				w++
			}
		}
	}
	cnt[len(cand)] = w
	st := &dropState{c: c, fac: fac, rel: rel[:w], cand: cand, cnt: cnt, rev: rev[:w], cc: cc,
		sk: append([]float64(nil), s...), v: c.variance(s), bias: bias0,
		dropped: make([]bool, len(cand))}

	var best []bool
	var lower float64
	var exact bool
	var method string
	if len(cand) <= enumerate {
		bestF, bestCode := st.value(), uint64(0)
		for k := uint64(1); k < 1<<len(cand); k++ {
			st.flip(bits.TrailingZeros64(k))
			if f := st.value(); f < bestF {
				bestF, bestCode = f, k^(k>>1)
			}
		}
		best = make([]bool, len(cand))
		for k := range best {
			best[k] = bestCode>>k&1 == 1
		}
		exact = true
		method = fmt.Sprintf("exact: all %d subsets of the %d terms with %s", uint64(1)<<len(cand), len(cand), what)
	} else {
		fromNone := st.localSearch()
		fNone := st.value()
		for k := range cand {
			if !st.dropped[k] {
				st.flip(k)
			}
		}
		fromAll := st.localSearch()
		if st.value() <= fNone {
			best = fromAll
		} else {
			best = fromNone
		}
		var complete bool
		best, lower, complete = st.branchAndBound(best, budget)
		if complete {
			exact = true
			method = fmt.Sprintf("exact: branch and bound over the %d terms with %s", len(cand), what)
		} else {
			method = fmt.Sprintf("branch and bound over %d candidate terms stopped at its work limit; lower bound from the open nodes and Frank–Wolfe on the convex relaxation", len(cand))
			lower = max(lower, st.frankWolfeLower(best))
		}
	}
	for k, i := range cand {
		drop[i] = best[k]
	}
	t := eval(drop, method)
	if exact {
		t.Lower, t.Exact = t.Bound, true
	} else {
		t.Lower = min(lower, t.Bound)
		t.Exact = t.Bound-t.Lower <= 1e-12*t.Bound
	}
	return t
}

// dropWeights returns the weights of the candidate terms cand in the loads
// of the settings rev[cnt[k]:cnt[k+1]] that cover candidate k: candidate
// k's weight in setting rev[j] is fac[k]·rel[j]. Without a split fac[k] =
// a_i = |h_i|/N_i and rel[j] = 1, so that the products are a_i exactly;
// with one (MATH.md §2.5) see splitDropWeights. pos[i] is term i's place in
// cand, or −1.
func (c *coverage) dropWeights(cand []int, pos []int32, cnt []int, rev []int32) (fac, rel []float64) {
	if c.sp != nil {
		return c.splitDropWeights(cand, pos, cnt, rev)
	}
	fac = make([]float64, len(cand))
	for k, i := range cand {
		fac[k] = math.Abs(c.h.Coeff(i)) / float64(c.cover[i])
	}
	rel = make([]float64, len(rev))
	for j := range rel {
		rel[j] = 1
	}
	return fac, rel
}

// dropState tracks the kept loads s_Q, V and the bias while candidate terms
// move in and out of the dropped set.
type dropState struct {
	c       *coverage
	fac     []float64 // by candidate: see rel
	rel     []float64 // candidate k's weight in setting rev[j] is fac[k]·rel[j]
	cand    []int
	cnt     []int   // rev[cnt[k]:cnt[k+1]] are the settings covering cand[k]
	rev     []int32 // distinct setting indices
	cc      float64 // sqrt(2 ln(2/δ))
	sk      []float64
	v, bias float64
	dropped []bool
}

func (st *dropState) value() float64 { return st.bias + st.cc*math.Sqrt(max(st.v, 0)) }

// deltaV returns the change of V if candidate k moved.
func (st *dropState) deltaV(k int) float64 {
	ai := st.fac[k]
	if !st.dropped[k] {
		ai = -ai
	}
	dv := 0.0
	for j := st.cnt[k]; j < st.cnt[k+1]; j++ {
		q := st.rev[j]
		old := st.sk[q]
		nw := old + ai*st.rel[j]
		dv += float64(st.c.mult[q]) * (nw*nw - old*old)
	}
	return dv
}

func (st *dropState) flip(k int) {
	ai, abs := st.fac[k], math.Abs(st.c.h.Coeff(st.cand[k]))
	if st.dropped[k] {
		st.bias -= abs
	} else {
		ai = -ai
		st.bias += abs
	}
	for j := st.cnt[k]; j < st.cnt[k+1]; j++ {
		q := st.rev[j]
		old := st.sk[q]
		nw := old + ai*st.rel[j]
		st.v += float64(st.c.mult[q]) * (nw*nw - old*old)
		st.sk[q] = nw
	}
	st.dropped[k] = !st.dropped[k]
}

// localSearch moves single candidates while that lowers F by more than
// rounding, sweeping until a sweep changes nothing, and returns the final
// dropped candidates.
func (st *dropState) localSearch() []bool {
	for range 1000 {
		moved := false
		for k, i := range st.cand {
			abs := math.Abs(st.c.h.Coeff(i))
			db := abs
			if st.dropped[k] {
				db = -abs
			}
			f := st.value()
			nf := st.bias + db + st.cc*math.Sqrt(max(st.v+st.deltaV(k), 0))
			if nf < f-1e-13*f {
				st.flip(k)
				moved = true
			}
		}
		if !moved {
			break
		}
	}
	return append([]bool(nil), st.dropped...)
}

// frankWolfeLower returns a lower bound on min F over all dropped sets from
// Frank–Wolfe iterations on the convex relaxation, started at the dropped
// set start. The candidates' kept fractions are x_k ∈ [0, 1]; the other
// terms are fixed.
func (st *dropState) frankWolfeLower(start []bool) float64 {
	// Put the state at start so that sk, v and bias describe it.
	for k := range st.cand {
		if st.dropped[k] != start[k] {
			st.flip(k)
		}
	}
	n := len(st.cand)
	x := make([]float64, n)
	absH := make([]float64, n)
	fixedBias := st.bias
	for k, i := range st.cand {
		absH[k] = math.Abs(st.c.h.Coeff(i))
		if !start[k] {
			x[k] = 1
		} else {
			fixedBias -= absH[k]
		}
	}
	s := st.sk // loads at x; updated in place below
	mult := st.c.mult
	d := make([]float64, n)
	dq := make([]float64, len(s))
	g := make([]float64, n)
	best := math.Inf(-1)
	for range 500 {
		v := 0.0
		for q, sq := range s {
			v += float64(mult[q]) * sq * sq
		}
		f := fixedBias
		for k := range x {
			f += absH[k] * (1 - x[k])
		}
		root := math.Sqrt(max(v, 0))
		f += st.cc * root
		// Gradient; at V = 0 the zero vector is a subgradient of the norm.
		lb := f
		for k := range st.cand {
			lin := 0.0
			if root > 0 {
				for j := st.cnt[k]; j < st.cnt[k+1]; j++ {
					q := st.rev[j]
					lin += float64(mult[q]) * s[q] * st.rel[j]
				}
				lin *= st.cc * st.fac[k] / root
			}
			g[k] = lin - absH[k]
			if g[k] < 0 {
				d[k] = 1 - x[k]
			} else {
				d[k] = -x[k]
			}
			lb += g[k] * d[k]
		}
		best = max(best, lb)
		if f-lb <= 1e-12*f {
			break
		}
		// Exact line search on γ ∈ [0, 1]: along d the function is
		// α + βγ + c sqrt(V + 2bγ + qγ²), convex; golden-section search.
		clear(dq)
		beta := 0.0
		for k := range st.cand {
			if d[k] == 0 {
				continue
			}
			beta -= absH[k] * d[k]
			for j := st.cnt[k]; j < st.cnt[k+1]; j++ {
				dq[st.rev[j]] += st.fac[k] * st.rel[j] * d[k]
			}
		}
		bq, qq := 0.0, 0.0
		for q, dd := range dq {
			if dd != 0 {
				bq += float64(mult[q]) * s[q] * dd
				qq += float64(mult[q]) * dd * dd
			}
		}
		phi := func(gm float64) float64 { return beta*gm + st.cc*math.Sqrt(max(v+2*bq*gm+qq*gm*gm, 0)) }
		lo, hi := 0.0, 1.0
		const r = 0.6180339887498949
		x1, x2 := hi-r*(hi-lo), lo+r*(hi-lo)
		f1, f2 := phi(x1), phi(x2)
		for range 60 {
			if f1 <= f2 {
				hi, x2, f2 = x2, x1, f1
				x1 = hi - r*(hi-lo)
				f1 = phi(x1)
			} else {
				lo, x1, f1 = x1, x2, f2
				x2 = lo + r*(hi-lo)
				f2 = phi(x2)
			}
		}
		gm := (lo + hi) / 2
		if phi(1) < phi(gm) {
			gm = 1
		}
		if phi(gm) >= phi(0) {
			break
		}
		for k := range x {
			x[k] += gm * d[k]
		}
		for q, dd := range dq {
			s[q] += gm * dd
		}
	}
	return best
}
