package allocate

import (
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// OverlapGC is [Overlap]'s overlapped grouping with coefficient splitting
// on generally commuting groups measured by entangled settings
// ([pauli.NewFamilySetting]); MATH.md §2.5. The construction follows
// [Overlap] with general commutation in place of qubit-wise commutation;
// the combination is ours.
//
// # Groups
//
// The groups start as those of [SortedGC] (terms by |h_i| descending, ties
// by index, each into the first group all of whose members it commutes
// with). Each group is then extended: every term, in the same order and
// whatever its own group, joins it when it commutes with every member so
// far, so a group ends as a maximal commuting set of terms. Each group is
// measured by the setting of its members; the setting covers every term in
// the stabilizer group its members generate, which includes every member
// and may include more. Groups whose settings cover the same terms are
// merged into the first. A term may be covered by several groups, and its
// coefficient is split among the measured groups that cover it.
//
// # Splitting and shots
//
// Exactly as [Overlap]: the weights start at sorted-gc's partition (each
// term wholly in its first group), shares and weights are optimised
// alternately for the model of the covariances (with Proxy nil, the worst
// case Var(O_g) ≤ (Σ_i |h_i| α_{ig})², which makes the objective the
// certified variance V of MATH.md §3.1 and leaves nothing to alternate
// before the rounding, see [Overlap]; with a Proxy,
// (1 − Floor)·Var_φ(O_g) + Floor·Σ_i h_i² α_{ig}²), the budget is rounded by largest remainder
// after one shot per group when the budget allows, and the weights are then
// optimised once more for the rounded counts, with the per-term step of
// [Overlap] (the exact minimiser over the simplex). For two terms P_i, P_j
// of a group, which commute, P_i P_j = ±P_k with a real sign, and
// ⟨P_i P_j⟩ = ±⟨P_k⟩ is asked of the proxy (cached by P_k).
//
// # Cost
//
// For M terms on n qubits and G groups, the extension is O(G·M·n·⌈n/64⌉)
// word operations, the groups shared among GOMAXPROCS goroutines, and the
// covers of the G settings cost one diagonality test per term and setting.
// Every pair (term, covering group) is stored with its weight, P pairs in
// all, and a round costs O(P) without a proxy. With a proxy each group's
// covariance matrix is kept, Σ_g k_g² numbers for groups covering k_g terms
// (at most 2^23, else Init fails), each from one proxy expectation per
// distinct product. OverlapGC implements [Batcher] and [Splitter] and uses
// no randomness.
type OverlapGC struct {
	// Proxy, if not nil, is the classical state whose covariances the
	// variances are computed from (MATH.md §2.4); nil means the worst case
	// over states.
	Proxy Proxy
	// Floor is the weight of the state-free model in the covariances when
	// Proxy is set, in (0, 1]; zero means 0.01, as for [Overlap].
	Floor float64
	// Rounds is the largest number of alternating rounds; zero means 50.
	Rounds int

	groupQueue
	split hamiltonian.Split
}

// String returns "overlap-gc".
func (o *OverlapGC) String() string { return "overlap-gc" }

// Split implements [Splitter]: the split of the last Init.
func (o *OverlapGC) Split() hamiltonian.Split { return o.split }

// Init implements [Allocator]: it forms the groups, optimises the split and
// the shares, and rounds the budget.
func (o *OverlapGC) Init(h *hamiltonian.Hamiltonian, budget int) error {
	const name = "overlap-gc"
	floor := o.Floor
	switch {
	case floor == 0:
		floor = 0.01
	case !(floor > 0 && floor <= 1):
		return fmt.Errorf("%s: floor %v is not in (0, 1]", name, o.Floor)
	}
	rounds := o.Rounds
	switch {
	case rounds == 0:
		rounds = 50
	case rounds < 0:
		return fmt.Errorf("%s: negative round count %d", name, rounds)
	}
	if budget < 0 {
		return fmt.Errorf("%s: negative budget %d", name, budget)
	}
	if err := checkProxyWidth(o.Proxy, h.Qubits()); err != nil {
		return fmt.Errorf("%s: %w", name, err)
	}
	o.split = nil
	settings, covers, home, err := overlapGCGroups(h)
	if err != nil {
		return fmt.Errorf("%s: %w", name, err)
	}
	md, err := newGCSplitModel(h, settings, covers, home, o.Proxy, floor)
	if err != nil {
		return fmt.Errorf("%s: %w", name, err)
	}
	// The alternation, skipped in the worst-case model (MATH.md §2.5), the
	// rounding, and the weights for the rounded counts, as in Overlap.
	f := md.optimise(rounds)
	shots := roundShares(budget, f)
	for g, k := range shots {
		f[g] = float64(k) / float64(max(budget, 1))
	}
	md.optimiseSplit(f, rounds)
	o.reset(name, shots)
	for _, st := range settings {
		o.add(st)
	}
	o.split = md.splitOf(settings, shots)
	return nil
}

// overlapGCGroups returns the settings of the extended groups of
// [OverlapGC], without repeats, the terms each covers (increasing), and
// each term's home group: the group sorted-gc placed it in, or the group
// that group was merged into.
func overlapGCGroups(h *hamiltonian.Hamiltonian) ([]pauli.Setting, [][]int, []int, error) {
	m := h.Len()
	home := make([]int, m)
	for i := range home {
		home[i] = -1
	}
	if m == 0 {
		return nil, nil, home, nil
	}
	rk := newRanked(h)
	order := make([]int32, len(rk.order))
	fillIota(order)
	gs := newCommutingGroups(rk.w)
	groupOf := gs.assign(rk, order)
	var ranks [][]int32
	for r, k := range groupOf {
		if int(k) == len(ranks) {
			ranks = append(ranks, nil)
		}
		ranks[k] = append(ranks[k], int32(r))
	}
	settings := make([]pauli.Setting, len(ranks))
	errs := make([]error, len(ranks))
	splitEach(len(ranks), func(k int) {
		// The group's own basis, extended by every rank that commutes with
		// all of its members so far, in rank order.
		lc := newCommutingGroups(rk.w)
		lc.basis = [][]uint64{slices.Clone(gs.basis[k])}
		lc.pivot = [][]int32{slices.Clone(gs.pivot[k])}
		fam := make([]pauli.String, 0, len(ranks[k]))
		for _, r := range ranks[k] {
			x, z := rk.row(int(r))
			fam = append(fam, pauli.FromWords(rk.n, x, z))
		}
		for r := range rk.order {
			if int(groupOf[r]) == k {
				continue
			}
			x, z := rk.row(r)
			if lc.fits(0, x, z) {
				lc.add(0, x, z)
				fam = append(fam, pauli.FromWords(rk.n, x, z))
			}
		}
		settings[k], errs[k] = pauli.NewFamilySetting(fam)
	})
	for k, err := range errs {
		if err != nil {
			return nil, nil, nil, fmt.Errorf("group %d: %w", k, err)
		}
	}
	// Merge the groups whose settings cover the same terms into the first.
	tab := h.Table()
	covers := make([][]int, len(settings))
	splitEach(len(settings), func(k int) { covers[k] = tab.Covered(nil, settings[k]) })
	first := make(map[string]int, len(settings))
	into := make([]int, len(settings))
	var out []pauli.Setting
	var outCovers [][]int
	var b strings.Builder
	for k, c := range covers {
		b.Reset()
		for _, i := range c {
			b.WriteString(strconv.Itoa(i))
			b.WriteByte(',')
		}
		key := b.String()
		if j, ok := first[key]; ok {
			into[k] = j
			continue
		}
		first[key] = len(out)
		into[k] = len(out)
		out = append(out, settings[k])
		outCovers = append(outCovers, c)
	}
	for r, k := range groupOf {
		home[rk.order[r]] = into[k]
	}
	return out, outCovers, home, nil
}

// newGCSplitModel builds [Overlap]'s model ([splitModel], MATH.md §2.5)
// from the terms every group covers (increasing): one block of every pair
// (term, covering group), term-major, the weights at the home partition,
// and with a proxy the covariances of each group's terms.
func newGCSplitModel(h *hamiltonian.Hamiltonian, settings []pauli.Setting, covers [][]int, home []int, px Proxy, floor float64) (*splitModel, error) {
	m, G := h.Len(), len(settings)
	tab := h.Table()
	coef := h.Coeffs()
	md := &splitModel{h: h, settings: settings, abs: make([]float64, m)}
	for i, c := range coef {
		md.abs[i] = math.Abs(c)
	}
	one := overlapBlock{off: make([]int32, m+1)}
	for _, c := range covers {
		for _, i := range c {
			one.off[i+1]++
		}
	}
	for i := range m {
		one.off[i+1] += one.off[i]
	}
	one.grp = make([]int32, one.off[m])
	one.alpha = make([]float64, one.off[m])
	next := slices.Clone(one.off[:m])
	for g, c := range covers { // g increasing: each term's groups increase
		for _, i := range c {
			e := next[i]
			next[i]++
			one.grp[e] = int32(g)
			if home[i] == g {
				one.alpha[e] = 1
			}
		}
	}
	md.blocks = []overlapBlock{one}
	if px == nil {
		md.load = make([]float64, G)
		md.refresh()
		return md, nil
	}
	entries := 0
	for _, c := range covers {
		entries += len(c) * len(c)
		if entries > maxSplitEntries {
			return nil, fmt.Errorf("the proxy's covariances of the %d groups need more than %d numbers; plan without a proxy (the worst-case model)", G, maxSplitEntries)
		}
	}
	md.indexPairs(G)
	ex := newProxyExpect(px, h.Qubits())
	w := pauli.Words(h.Qubits())
	px2, pz2 := make([]uint64, w), make([]uint64, w)
	md.cov = make([][]float64, G)
	md.y = make([][]float64, G)
	var mean []float64
	for g, terms := range covers {
		k := len(terms)
		a := make([]float64, k*k)
		mean = mean[:0]
		for _, i := range terms {
			v, err := ex.of(tab.Words(i))
			if err != nil {
				return nil, err
			}
			mean = append(mean, v)
		}
		for r, i := range terms {
			xi, zi := tab.Words(i)
			a[r*k+r] = coef[i] * coef[i] * ((1-floor)*(1-mean[r]*mean[r]) + floor)
			for c := r + 1; c < k; c++ {
				j := terms[c]
				xj, zj := tab.Words(j)
				// P_i and P_j commute, so their product is ±P_k: the
				// phase is 0 (+1) or 2 (−1).
				ph := pauli.MulWords(px2, pz2, xi, zi, xj, zj)
				v, err := ex.of(px2, pz2)
				if err != nil {
					return nil, err
				}
				if ph == 2 {
					v = -v
				}
				cv := (1 - floor) * coef[i] * coef[j] * (v - mean[r]*mean[c])
				a[r*k+c], a[c*k+r] = cv, cv
			}
		}
		md.cov[g] = a
		md.y[g] = make([]float64, k)
	}
	md.refresh()
	return md, nil
}
