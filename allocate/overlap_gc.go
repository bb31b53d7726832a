package allocate

import (
	"encoding/binary"
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/internal/inputcap"
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
	f := make([]float64, len(settings))
	prev := md.shares(f)
	// In the worst-case model the alternation has nothing to gain before
	// the rounding, as in Overlap (MATH.md §2.5).
	for r := 0; r < rounds && o.Proxy != nil; r++ {
		md.sweep(f)
		j := md.shares(f)
		if !(prev-j > 1e-10*prev) {
			break
		}
		prev = j
	}
	shots := roundShares(budget, f)
	for g, k := range shots {
		f[g] = float64(k) / float64(max(budget, 1))
	}
	md.restrict(f)
	prev = md.objective(f)
	for range rounds {
		md.sweep(f)
		j := md.objective(f)
		if !(prev-j > 1e-10*prev) {
			break
		}
		prev = j
	}
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

// gcSplitModel is the model of [OverlapGC]: every pair (term, covering
// group), term-major, with its weight α, and the covariances of [Overlap]'s
// model (MATH.md §2.5).
type gcSplitModel struct {
	abs   []float64
	off   []int32   // term i's pairs are off[i] to off[i+1]−1
	grp   []int32   // the group of each pair, increasing within a term
	alpha []float64 // the weight of each pair
	// The worst-case model (cov == nil): load[g] = Σ_i |h_i| α_{ig}.
	load []float64
	// The proxy's model: gpair[g] are the pairs of group g in term order,
	// pos[e] the place of pair e there, cov[g] the k_g × k_g matrix A_g
	// (row-major) with Var(O_g) = α_gᵀ A_g α_g, and y[g] = A_g α_g.
	gpair   [][]int32
	pos     []int32
	cov, y  [][]float64
	d, e, a []float64
	idx     []int32
	simplex simplexScratch
}

// newGCSplitModel builds the model from the terms every group covers
// (increasing), the weights at the home partition.
func newGCSplitModel(h *hamiltonian.Hamiltonian, settings []pauli.Setting, covers [][]int, home []int, px Proxy, floor float64) (*gcSplitModel, error) {
	m, G := h.Len(), len(settings)
	tab := h.Table()
	coef := h.Coeffs()
	md := &gcSplitModel{abs: make([]float64, m), off: make([]int32, m+1)}
	for i, c := range coef {
		md.abs[i] = math.Abs(c)
	}
	count := make([]int32, m)
	for _, c := range covers {
		for _, i := range c {
			count[i]++
		}
	}
	for i := range m {
		md.off[i+1] = md.off[i] + count[i]
	}
	md.grp = make([]int32, md.off[m])
	md.alpha = make([]float64, md.off[m])
	next := slices.Clone(md.off[:m])
	for g, c := range covers { // g increasing: each term's groups increase
		for _, i := range c {
			e := next[i]
			next[i]++
			md.grp[e] = int32(g)
			if home[i] == g {
				md.alpha[e] = 1
			}
		}
	}
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
	md.gpair = make([][]int32, G)
	md.pos = make([]int32, len(md.grp))
	for i := range m {
		for e := md.off[i]; e < md.off[i+1]; e++ {
			g := md.grp[e]
			md.pos[e] = int32(len(md.gpair[g]))
			md.gpair[g] = append(md.gpair[g], e)
		}
	}
	// Expectations are cached by the string's words, written into key;
	// a string is built only on a miss.
	n, w := h.Qubits(), pauli.Words(h.Qubits())
	cache := make(map[string]float64)
	key := make([]byte, 16*w)
	px2, pz2 := make([]uint64, w), make([]uint64, w)
	expect := func(x, z []uint64) (float64, error) {
		for t := range w {
			binary.LittleEndian.PutUint64(key[16*t:], x[t])
			binary.LittleEndian.PutUint64(key[16*t+8:], z[t])
		}
		if v, ok := cache[string(key)]; ok {
			return v, nil
		}
		p := pauli.FromWords(n, x, z)
		v := px.Expect(p)
		if !(math.Abs(v) <= 1+1e-9) {
			return 0, fmt.Errorf("the proxy gives ⟨%s⟩ = %v, outside [−1, 1]", inputcap.Clip(p.String()), v)
		}
		cache[string(key)] = v
		return v, nil
	}
	md.cov = make([][]float64, G)
	md.y = make([][]float64, G)
	var mean []float64
	for g, terms := range covers {
		k := len(terms)
		a := make([]float64, k*k)
		mean = mean[:0]
		for _, i := range terms {
			v, err := expect(tab.Words(i))
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
				v, err := expect(px2, pz2)
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

// refresh recomputes load or y from the weights.
func (md *gcSplitModel) refresh() {
	if md.cov == nil {
		clear(md.load)
		for i, a := range md.abs {
			for e := md.off[i]; e < md.off[i+1]; e++ {
				md.load[md.grp[e]] += a * md.alpha[e]
			}
		}
		return
	}
	for g, pairs := range md.gpair {
		k, a, y := len(pairs), md.cov[g], md.y[g]
		for r := range k {
			s := 0.0
			for c, v := range a[r*k : (r+1)*k] {
				s += v * md.alpha[pairs[c]]
			}
			y[r] = s
		}
	}
}

// variance returns the model's Var(O_g).
func (md *gcSplitModel) variance(g int) float64 {
	if md.cov == nil {
		return md.load[g] * md.load[g]
	}
	s := 0.0
	for r, e := range md.gpair[g] {
		s += md.alpha[e] * md.y[g][r]
	}
	return max(s, 0)
}

// shares sets f_g ∝ sqrt(Var(O_g)) and returns (Σ_g sqrt(Var(O_g)))², the
// objective at those shares.
func (md *gcSplitModel) shares(f []float64) float64 { return sdShares(f, md.variance) }

// objective returns Σ_g Var(O_g)/f_g over the groups with f_g > 0.
func (md *gcSplitModel) objective(f []float64) float64 { return splitObjective(f, md.variance) }

// restrict moves the weights off the groups with f_g = 0: a term's
// remaining weights are rescaled to add up to one, or made equal if they
// were all zero.
func (md *gcSplitModel) restrict(f []float64) {
	for i := range md.abs {
		lo, hi := md.off[i], md.off[i+1]
		restrictTerm(md.alpha[lo:hi], md.grp[lo:hi], f)
	}
	md.refresh()
}

// sweep replaces, term by term, the weights of every term covered by two
// or more groups with f_g > 0 by their exact minimiser with the others
// fixed, as [splitModel.sweep] does.
func (md *gcSplitModel) sweep(f []float64) {
	md.refresh()
	for i, abs := range md.abs {
		lo, hi := md.off[i], md.off[i+1]
		if hi-lo < 2 {
			continue
		}
		md.d, md.e, md.idx = md.d[:0], md.e[:0], md.idx[:0]
		for e := lo; e < hi; e++ {
			g := md.grp[e]
			fg := f[g]
			if fg == 0 {
				continue
			}
			al := md.alpha[e]
			var a, b float64
			if md.cov == nil {
				a = abs * abs
				b = abs * (md.load[g] - abs*al)
			} else {
				k, p := len(md.gpair[g]), int(md.pos[e])
				a = md.cov[g][p*k+p]
				b = md.y[g][p] - a*al
			}
			md.d = append(md.d, a/fg)
			md.e = append(md.e, b/fg)
			md.idx = append(md.idx, e)
		}
		if len(md.idx) < 2 {
			continue
		}
		md.a = slices.Grow(md.a[:0], len(md.idx))[:len(md.idx)]
		md.simplex.solve(md.d, md.e, nil, md.a)
		if !finiteWeights(md.a) {
			continue // a coefficient near zero, as in [splitModel.sweep]
		}
		for s, e := range md.idx {
			dv := md.a[s] - md.alpha[e]
			if dv == 0 {
				continue
			}
			md.alpha[e] = md.a[s]
			g := md.grp[e]
			if md.cov == nil {
				md.load[g] += abs * dv
				continue
			}
			k, p := len(md.gpair[g]), int(md.pos[e])
			a, y := md.cov[g], md.y[g]
			for row := range k {
				y[row] += dv * a[row*k+p]
			}
		}
	}
}

// splitOf returns the split of the measured groups: every term that two or
// more of them cover, with its weights there (those with α > 0),
// normalised to add up to one.
func (md *gcSplitModel) splitOf(settings []pauli.Setting, shots []int) hamiltonian.Split {
	groups := make([]hamiltonian.SplitGroup, len(settings))
	for i := range md.abs {
		lo, hi := md.off[i], md.off[i+1]
		act, sum := 0, 0.0
		for e := lo; e < hi; e++ {
			if shots[md.grp[e]] > 0 {
				act++
				sum += md.alpha[e]
			}
		}
		if act < 2 || !(sum > 0) {
			continue
		}
		for e := lo; e < hi; e++ {
			if g, v := md.grp[e], md.alpha[e]; shots[g] > 0 && v > 0 {
				groups[g].Terms = append(groups[g].Terms, i)
				groups[g].Weights = append(groups[g].Weights, v/sum)
			}
		}
	}
	var out hamiltonian.Split
	for g, gr := range groups {
		if len(gr.Terms) > 0 {
			gr.Setting = settings[g]
			out = append(out, gr)
		}
	}
	return out
}
