package guarantee

import (
	"cmp"
	"math"
	"slices"
)

// branchAndBound searches the dropped sets of the candidates exactly by
// depth-first branch and bound, starting from the incumbent best, and gives
// up after about budget elementary steps.
//
// A node fixes the first d candidates (in order of |h_i|, largest first) and
// leaves the rest free. With u = B x for the kept terms when every free
// candidate is dropped, any completion that also keeps a set S of free
// candidates has ‖u + Σ_{i∈S} B e_i‖ ≥ ‖u‖ + Σ_{i∈S} u·B e_i / ‖u‖
// (Cauchy–Schwarz: ‖u + v‖ ≥ u·(u + v)/‖u‖), so
//
//	F ≥ bias of the fixed drops + c‖u‖ + Σ_{free i} min(|h_i|, c u·B e_i/‖u‖),
//
// and a node whose bound reaches the incumbent is pruned. It returns the best
// set, a lower bound on the optimum (the smallest bound of the parts left
// unexplored, or the optimum itself), and whether the search completed.
func (st *dropState) branchAndBound(best []bool, budget int) ([]bool, float64, bool) {
	n := len(st.cand)
	// Root: every candidate dropped.
	for k := range st.cand {
		if !st.dropped[k] {
			st.flip(k)
		}
	}
	ord := make([]int, n)
	absH := make([]float64, n)
	for k, i := range st.cand {
		ord[k] = k
		absH[k] = math.Abs(st.c.h.Coeff(i))
	}
	slices.SortFunc(ord, func(x, y int) int {
		if d := cmp.Compare(absH[y], absH[x]); d != 0 {
			return d
		}
		return cmp.Compare(x, y)
	})
	b := &bnb{st: st, ord: ord, absH: absH, budget: budget, best: slices.Clone(best)}
	b.bestF = st.evaluateSet(best)
	lower := min(b.bestF, b.visit(0))
	return b.best, lower, !b.aborted
}

type bnb struct {
	st      *dropState
	ord     []int
	absH    []float64
	budget  int
	work    int
	aborted bool
	best    []bool
	bestF   float64
}

// bound returns the node's lower bound with ord[d:] free (and dropped in
// the state), and the gradient term of candidate ord[d].
func (b *bnb) bound(d int) (lb, gNext float64) {
	st := b.st
	root := math.Sqrt(max(st.v, 0))
	lb = st.value()
	for j := d; j < len(b.ord); j++ {
		k := b.ord[j]
		g := 0.0
		if root > 0 {
			dot := 0.0
			for p := st.cnt[k]; p < st.cnt[k+1]; p++ {
				q := st.rev[p]
				dot += float64(st.c.mult[q]) * st.sk[q] * st.rel[p]
			}
			g = st.cc * st.fac[k] * dot / root
			b.work += st.cnt[k+1] - st.cnt[k]
		}
		if j == d {
			gNext = g
		}
		lb += min(b.absH[k], g) - b.absH[k]
	}
	return lb, gNext
}

// visit explores the node at depth d and returns the smallest lower bound
// of the parts it left unexplored (+Inf if none).
func (b *bnb) visit(d int) float64 {
	b.work++
	lb, g := b.bound(d)
	if lb >= b.bestF-1e-12*math.Abs(b.bestF) {
		return math.Inf(1)
	}
	if d == len(b.ord) {
		b.bestF = b.st.value()
		copy(b.best, b.st.dropped)
		return math.Inf(1)
	}
	if b.work > b.budget {
		b.aborted = true
		return lb
	}
	k := b.ord[d]
	keepFirst := g < b.absH[k]
	left := math.Inf(1)
	for _, keep := range []bool{keepFirst, !keepFirst} {
		if keep {
			b.st.flip(k)
		}
		left = min(left, b.visit(d+1))
		if keep {
			b.st.flip(k)
		}
	}
	return left
}

// evaluateSet returns F of a dropped set of candidates without changing
// the state.
func (st *dropState) evaluateSet(drop []bool) float64 {
	var moved []int
	for k := range st.cand {
		if st.dropped[k] != drop[k] {
			st.flip(k)
			moved = append(moved, k)
		}
	}
	f := st.value()
	for _, k := range moved {
		st.flip(k)
	}
	return f
}
