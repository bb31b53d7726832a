package allocate

import (
	"encoding/binary"
	"fmt"
	"math"
	"slices"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/internal/inputcap"
	"github.com/shotplan/shotplan/pauli"
)

// Overlap is overlapped grouping measurement (Wu et al., arXiv:2105.13091)
// with iterative coefficient splitting (Yen et al., arXiv:2201.01471), on
// local (qubit-wise) settings; MATH.md §2.5. Both are implemented from their
// methods as recalled from memory, not from the papers' text (the authors
// too are recalled, not checked): the group construction, the worst-case
// model, the floor and the order of the updates below are ours.
//
// # Groups
//
// The groups start as those of sorted insertion ([Sorted]: terms by |h_i|
// descending, ties by index, each into the first group whose letters it
// agrees with). Each group is then extended: every term, in the same order
// and whatever its own group, joins it when it commutes qubit-wise with the
// group's letters so far. A group is thus maximal (no further term fits its
// letters) and a term lies in every group whose setting covers it: the
// groups overlap. Free qubits get Fill, and a group whose setting repeats
// an earlier one is merged into it. The weights start at sorted insertion's
// partition (each term wholly in its first group), so the optimisation
// starts from sorted insertion's plan and, under the model, only improves
// on it.
//
// # Splitting and shots
//
// Term i's coefficient is split among the groups that cover it,
// h_i = Σ_g α_{ig} h_i with α_{ig} ≥ 0 and Σ_g α_{ig} = 1, group g estimates
// O_g = Σ_i α_{ig} h_i P_i from its own m_g = f_g·N shots, and the estimate
// has variance Σ_g Var(O_g)/m_g. The variances come from a model of the
// covariances (MATH.md §2.5): with Proxy nil, the worst case over states,
// Var(O_g) ≤ (Σ_i |h_i| α_{ig})², which makes the objective the certified
// variance V of MATH.md §3.1; with a Proxy, (1 − Floor)·Var_φ(O_g) +
// Floor·Σ_i h_i² α_{ig}², the proxy state's variance (MATH.md §2.4) mixed
// with the state-free model Var(P_i) = 1, Cov = 0. The alternating
// minimisation sets f_g ∝ sqrt(Var(O_g)) (exact for fixed α), then updates
// every split term's weights in turn to the exact minimiser over its groups
// for the others fixed (block coordinate descent on a convex quadratic, a
// non-negative simplex per term); neither step increases the objective. It
// stops after Rounds rounds or when a round lowers it by less than a part
// in 10^10. In the worst-case model the alternation is not run before the
// budget is rounded: at the optimal shares its objective is (Σ_i |h_i|)²
// whatever the split, and every split is already a minimiser of the
// weight step (MATH.md §2.5), so the shares are those of sorted
// insertion's partition, f_g ∝ Σ of |h_i| over the group's own terms.
// The budget is rounded as in [Sorted] (largest remainder), after
// one shot to every group when the budget allows, and the weights are then
// optimised once more for the rounded counts. A group left without shots
// is not measured.
//
// The plan carries the split ([Plan].Split, through [Splitter]), listing
// the terms that two or more measured groups cover; a term covered by one
// group has weight 1 there, which is also its implicit weight.
//
// # Cost
//
// For M terms on n qubits and G groups: sorted insertion's first fit reads
// conflict sets as [Sorted] does, its search shared among GOMAXPROCS
// goroutines. A group's extension reads the terms in rank order only until
// its qubits hold every qubit some term acts on (no later term can change
// it): O(R·n/64) for the rank R reached, at most M (about 10^3 on average
// on the molecular fixtures of the benchmarks); the groups are extended in
// parallel. The groups that cover a term are the intersection of its
// letter sets of the groups, at most G/64 words per term and set.
//
// Without a proxy only the P pairs (term, group with shots) are stored,
// once the budget is rounded, 28 bytes each, found by GOMAXPROCS
// goroutines; a round costs O(P). Memory is thus O(M + G·n/64 + P)
// however many pairs there are in all (1.7·10^8 on the 571 875-term
// fixture, against 8·10^6 with shots). With a proxy the model
// keeps every pair and each group's covariance matrix, Σ_g k_g² numbers for
// groups of k_g terms (at most 2^23, else Init fails), each from one proxy
// expectation per distinct product P_i P_j (cached; for a [StateProxy]
// 2^n operations each), and a round costs O(Σ_g k_g²). The plan does not
// depend on GOMAXPROCS. Overlap implements [Batcher] and [Splitter] and
// uses no randomness.
type Overlap struct {
	// Proxy, if not nil, is the classical state whose covariances the
	// variances are computed from (MATH.md §2.4); nil means the worst case
	// over states.
	Proxy Proxy
	// Floor is the weight of the state-free model in the covariances when
	// Proxy is set, in (0, 1]: it keeps every group that holds a term
	// measured and stands for the proxy's error. Zero means 0.01, the best
	// of 0.3, 0.1, 0.03, 0.01 for ε²M on LiH and H2O with the
	// Hartree–Fock proxy (BENCHMARKS.md); a larger floor trades ε²M for a
	// smaller certified bound.
	Floor float64
	// Rounds is the largest number of alternating rounds; zero means 50.
	Rounds int
	// Fill is the letter of qubits no member of a group touches; zero
	// (pauli.I) means Z.
	Fill pauli.Letter

	groupQueue
	split hamiltonian.Split
}

// maxSplitEntries bounds Σ_g k_g², the covariance entries a proxy needs.
const maxSplitEntries = 1 << 23

// String returns "overlap".
func (o *Overlap) String() string { return "overlap" }

// Split implements [Splitter]: the split of the last Init.
func (o *Overlap) Split() hamiltonian.Split { return o.split }

// Init implements [Allocator]: it forms the groups, optimises the split
// and the shares, and rounds the budget.
func (o *Overlap) Init(h *hamiltonian.Hamiltonian, budget int) error {
	fill, err := fillLetter("overlap", o.Fill)
	if err != nil {
		return err
	}
	floor := o.Floor
	switch {
	case floor == 0:
		floor = 0.01
	case !(floor > 0 && floor <= 1):
		return fmt.Errorf("overlap: floor %v is not in (0, 1]", o.Floor)
	}
	rounds := o.Rounds
	switch {
	case rounds == 0:
		rounds = 50
	case rounds < 0:
		return fmt.Errorf("overlap: negative round count %d", rounds)
	}
	if err := checkProxyWidth(o.Proxy, h.Qubits()); err != nil {
		return fmt.Errorf("overlap: %w", err)
	}
	o.split = nil
	settings, home := overlapGroups(h, fill)
	md, err := newSplitModel(h, settings, home, o.Proxy, floor)
	if err != nil {
		return fmt.Errorf("overlap: %w", err)
	}
	f := md.optimise(rounds)
	shots := roundShares(budget, f)
	total := float64(budget)
	for g, k := range shots {
		f[g] = float64(k) / total
	}
	md.optimiseSplit(f, rounds)
	o.reset("overlap", shots)
	for _, st := range settings {
		o.add(st)
	}
	o.split = md.splitOf(settings, shots)
	return nil
}

// checkProxyWidth returns an error when a proxy of a known kind does not
// fit n qubits.
func checkProxyWidth(px Proxy, n int) error {
	switch p := px.(type) {
	case *StateProxy:
		if p == nil {
			return fmt.Errorf("nil *StateProxy")
		}
		if p.Qubits() != n {
			return fmt.Errorf("proxy state has %d qubits, Hamiltonian has %d", p.Qubits(), n)
		}
	case BasisProxy:
		if len(p.Bits) < pauli.Words(n) {
			return fmt.Errorf("proxy basis state has %d words of bits, %d qubits need %d", len(p.Bits), n, pauli.Words(n))
		}
	}
	return nil
}

// splitModel holds the cover pairs of the overlapping groups, their
// weights α and the covariance model of [Overlap] and [OverlapGC] (MATH.md
// §2.5); the latter's pairs, found by commutation, are one block from the
// start (newGCSplitModel).
//
// In the worst-case model the pairs of all groups are never stored: the
// weights stay at sorted insertion's partition until the shots are
// rounded ([splitModel.optimise]); then the pairs of the groups with shots
// are stored term-major in blocks ([overlapBlock]), 12 bytes each.
// With a proxy every pair is stored, in one block, with every group's
// pairs listed in term order.
type splitModel struct {
	h        *hamiltonian.Hamiltonian
	settings []pauli.Setting
	abs      []float64 // |h_i|
	blocks   []overlapBlock
	// home, in the worst-case model before the shots are rounded, is
	// every term's group under sorted insertion, where its whole weight
	// lies (see [splitModel.optimise]); nil after, and with a proxy.
	home []int
	// glob, once the pairs of the groups with shots are stored, is the
	// number of each of those groups among all, increasing: the blocks,
	// load and the fractions of [splitModel.optimiseSplit] number them
	// 0, 1, ... in that order, so that the loads read in a sweep lie
	// close together in memory. Nil before, and with a proxy.
	glob []int32
	// The worst-case model (cov == nil): load[g] = Σ_i |h_i| α_{ig}, and
	// Var(O_g) ≤ load[g]².
	load []float64
	// The proxy's model: gpair[g] are the pairs of group g (indices into
	// blocks[0]) in term order and pos[e] the place of pair e there; cov[g]
	// is the k_g × k_g matrix A_g, row-major, with Var(O_g) = α_gᵀ A_g α_g,
	// and y[g] = A_g α_g.
	gpair  [][]int32
	pos    []int32
	cov, y [][]float64
	// next, when nextOK, holds what refresh would give for the weights
	// as they are: [splitModel.sweepFixed] adds it up as it goes.
	next   []float64
	nextOK bool
	// Scratch of the per-term solve.
	d, e, a, inv []float64
	idx          []int32
	simplex      simplexScratch
}

// newSplitModel finds the terms of every group and builds the model. The
// weights start at sorted insertion's partition: each term's whole
// coefficient in its home group.
func newSplitModel(h *hamiltonian.Hamiltonian, settings []pauli.Setting, home []int, px Proxy, floor float64) (*splitModel, error) {
	tab := h.Table()
	md := &splitModel{h: h, settings: settings, abs: make([]float64, h.Len())}
	for i, c := range h.Coeffs() {
		md.abs[i] = math.Abs(c)
	}
	if px == nil {
		md.home = home
		md.load = make([]float64, len(settings))
		md.refresh()
		return md, nil
	}
	md.blocks = newOverlapCover(h, settings).blocks(overlapBlockTerms)
	for b := range md.blocks {
		bl := &md.blocks[b]
		for t := range len(bl.off) - 1 {
			for e := bl.off[t]; e < bl.off[t+1]; e++ {
				if int(bl.grp[e]) == home[bl.lo+t] {
					bl.alpha[e] = 1
				}
			}
		}
	}
	count := make([]int, len(settings))
	for _, bl := range md.blocks {
		for _, g := range bl.grp {
			count[g]++
		}
	}
	entries := 0
	for _, k := range count {
		entries += k * k
	}
	if entries > maxSplitEntries {
		return nil, fmt.Errorf("the proxy's covariances of the %d groups need %d numbers, more than the limit %d; plan without a proxy (the worst-case model)", len(settings), entries, maxSplitEntries)
	}
	// One block, and every group's pairs in term order.
	one := overlapBlock{off: []int32{0}}
	for _, bl := range md.blocks {
		base := int32(len(one.grp))
		for _, o := range bl.off[1:] {
			one.off = append(one.off, base+o)
		}
		one.grp = append(one.grp, bl.grp...)
		one.alpha = append(one.alpha, bl.alpha...)
	}
	md.blocks = []overlapBlock{one}
	members := md.indexPairs(len(settings)) // the terms of group g, in table order
	// ⟨P_i P_j⟩ for two strings a local setting covers: they agree where
	// both act, so the product has the phase +1 and the words x_i ⊕ x_j,
	// z_i ⊕ z_j (MATH.md §2.5). A StateProxy gives every expectation of a
	// group at once from the Walsh–Hadamard transform of the setting's Born
	// probabilities, F[m] = ⟨P⟩ for the covered string P of support m
	// (MATH.md §2.3); another proxy is asked string by string, the
	// products cached by their words.
	w := pauli.Words(h.Qubits())
	ex := newProxyExpect(px, h.Qubits())
	sp, fast := px.(*StateProxy)
	var born *bornTransform
	var mean []float64
	if fast {
		born = newBornTransform(sp)
	} else {
		mean = make([]float64, h.Len())
		for i := range mean {
			if one.off[i+1] > one.off[i] {
				e, err := ex.of(tab.Words(i))
				if err != nil {
					return nil, err
				}
				mean[i] = e
			}
		}
	}
	px2, pz2 := make([]uint64, w), make([]uint64, w)
	coef := h.Coeffs()
	md.cov = make([][]float64, len(settings))
	md.y = make([][]float64, len(settings))
	var gm []float64 // the group's ⟨P_i⟩
	for g, terms := range members {
		k := len(terms)
		a := make([]float64, k*k)
		var f []float64
		gm = gm[:0]
		for _, i := range terms {
			if fast {
				if f == nil {
					f = born.of(settings[g])
				}
				x, z := tab.Words(i)
				gm = append(gm, f[x[0]|z[0]])
			} else {
				gm = append(gm, mean[i])
			}
		}
		for r, i := range terms {
			xi, zi := tab.Words(i)
			a[r*k+r] = coef[i] * coef[i] * ((1-floor)*(1-gm[r]*gm[r]) + floor)
			for c := r + 1; c < k; c++ {
				j := terms[c]
				xj, zj := tab.Words(j)
				var e float64
				if fast {
					e = f[(xi[0]|zi[0])^(xj[0]|zj[0])]
				} else {
					for t := range w {
						px2[t], pz2[t] = xi[t]^xj[t], zi[t]^zj[t]
					}
					var err error
					if e, err = ex.of(px2, pz2); err != nil {
						return nil, err
					}
				}
				v := (1 - floor) * coef[i] * coef[j] * (e - gm[r]*gm[c])
				a[r*k+c], a[c*k+r] = v, v
			}
		}
		md.cov[g] = a
		md.y[g] = make([]float64, k)
	}
	md.refresh()
	return md, nil
}

// indexPairs sets gpair and pos from the one block of the proxy's model
// (every pair, term-major) for the given number of groups, and returns the
// terms of every group in table order.
func (md *splitModel) indexPairs(groups int) [][]int {
	one := md.blocks[0]
	count := make([]int, groups)
	for _, g := range one.grp {
		count[g]++
	}
	md.gpair = make([][]int32, groups)
	md.pos = make([]int32, len(one.grp))
	members := make([][]int, groups)
	for g, k := range count {
		md.gpair[g] = make([]int32, 0, k)
		members[g] = make([]int, 0, k)
	}
	for t := range len(one.off) - 1 {
		for e := one.off[t]; e < one.off[t+1]; e++ {
			g := one.grp[e]
			md.pos[e] = int32(len(md.gpair[g]))
			md.gpair[g] = append(md.gpair[g], e)
			members[g] = append(members[g], one.lo+t)
		}
	}
	return members
}

// proxyExpect asks a proxy for expectations ⟨P⟩ of strings given by their
// words, each string once (the answers cached by the words), and refuses an
// answer outside [−1, 1]. Both overlap models use it.
type proxyExpect struct {
	px    Proxy
	n     int
	cache map[string]float64
	key   []byte
}

func newProxyExpect(px Proxy, n int) *proxyExpect {
	return &proxyExpect{px: px, n: n, cache: make(map[string]float64), key: make([]byte, 16*pauli.Words(n))}
}

// of returns ⟨P⟩ for the string with words x, z; a string is built only
// when the cache misses.
func (c *proxyExpect) of(x, z []uint64) (float64, error) {
	for t := range x {
		binary.LittleEndian.PutUint64(c.key[16*t:], x[t])
		binary.LittleEndian.PutUint64(c.key[16*t+8:], z[t])
	}
	if v, ok := c.cache[string(c.key)]; ok {
		return v, nil
	}
	p := pauli.FromWords(c.n, x, z)
	v := c.px.Expect(p)
	if !(math.Abs(v) <= 1+1e-9) {
		return 0, fmt.Errorf("the proxy gives ⟨%s⟩ = %v, outside [−1, 1]", inputcap.Clip(p.String()), v)
	}
	c.cache[string(c.key)] = v
	return v, nil
}

// groups returns the number of groups.
func (md *splitModel) groups() int {
	if md.cov == nil {
		return len(md.load)
	}
	return len(md.cov)
}

// refresh recomputes load or y from the weights. The loads add the terms
// in table order, term-major.
func (md *splitModel) refresh() {
	if md.home != nil {
		clear(md.load)
		for i, a := range md.abs {
			md.load[md.home[i]] += a
		}
		return
	}
	if md.cov == nil {
		clear(md.load)
		for _, bl := range md.blocks {
			for t := range len(bl.off) - 1 {
				a := md.abs[bl.lo+t]
				for e := bl.off[t]; e < bl.off[t+1]; e++ {
					md.load[bl.grp[e]] += a * bl.alpha[e]
				}
			}
		}
		return
	}
	alpha := md.blocks[0].alpha
	for g, pairs := range md.gpair {
		k, a, y := len(pairs), md.cov[g], md.y[g]
		for r := range k {
			s := 0.0
			for c, v := range a[r*k : (r+1)*k] {
				s += v * alpha[pairs[c]]
			}
			y[r] = s
		}
	}
}

// variance returns the model's Var(O_g).
func (md *splitModel) variance(g int) float64 {
	if md.cov == nil {
		return md.load[g] * md.load[g]
	}
	alpha := md.blocks[0].alpha
	s := 0.0
	for j, e := range md.gpair[g] {
		s += alpha[e] * md.y[g][j]
	}
	return max(s, 0)
}

// shares sets f_g = sd_g/Σ sd (the optimal fractions for fixed weights,
// MATH.md §2.3) and returns the objective there, (Σ_g sd_g)².
func (md *splitModel) shares(f []float64) float64 { return sdShares(f, md.variance) }

// objective returns Σ_g Var(O_g)/f_g over the groups with f_g > 0.
func (md *splitModel) objective(f []float64) float64 { return splitObjective(f, md.variance) }

// sdShares sets f_g = sd_g/Σ sd with sd_g = sqrt(variance(g)), equal
// shares when every sd_g is zero, and returns (Σ_g sd_g)², the objective
// Σ_g Var(O_g)/f_g at those shares (MATH.md §2.3). Both overlap models use
// it.
func sdShares(f []float64, variance func(g int) float64) float64 {
	sum := 0.0
	for g := range f {
		f[g] = math.Sqrt(variance(g))
		sum += f[g]
	}
	if sum == 0 {
		for g := range f {
			f[g] = 1 / float64(len(f))
		}
		return 0
	}
	for g := range f {
		f[g] /= sum
	}
	return sum * sum
}

// splitObjective returns Σ_g variance(g)/f_g over the groups with f_g > 0.
func splitObjective(f []float64, variance func(g int) float64) float64 {
	s := 0.0
	for g, fg := range f {
		if fg > 0 {
			s += variance(g) / fg
		}
	}
	return s
}

// restrictTerm moves one term's weights alpha (on the groups grp) off the
// groups with f_g = 0: the remaining weights are rescaled to add up to one,
// or made equal if they were all zero. Both overlap models use it.
func restrictTerm(alpha []float64, grp []int32, f []float64) {
	sum, act := 0.0, 0
	for e, g := range grp {
		if f[g] > 0 {
			sum += alpha[e]
			act++
		}
	}
	for e, g := range grp {
		switch {
		case f[g] == 0:
			alpha[e] = 0
		case sum > 0:
			alpha[e] /= sum
		default:
			alpha[e] = 1 / float64(act)
		}
	}
}

// optimise alternates shares and weights (MATH.md §2.5) for at most
// rounds rounds and returns the fractions f_g. In the worst-case model it
// returns the shares of the starting partition and leaves the weights
// there: at the optimal shares every split has the same objective,
// (Σ_i |h_i|)², and is already a minimiser of the weight step (MATH.md
// §2.5), so the alternation has nothing to gain.
func (md *splitModel) optimise(rounds int) []float64 {
	f := make([]float64, md.groups())
	prev := md.shares(f)
	if md.cov == nil {
		return f
	}
	for range rounds {
		md.sweep(f)
		j := md.shares(f)
		if !(prev-j > 1e-10*prev) {
			break
		}
		prev = j
	}
	return f
}

// optimiseSplit optimises the weights for fixed fractions f, of which
// some may be zero: those groups get no weight. In the worst-case model
// only the pairs of the other groups are stored from here on.
func (md *splitModel) optimiseSplit(f []float64, rounds int) {
	if md.home != nil {
		f = md.storeMeasured(f)
	}
	for _, bl := range md.blocks {
		for t := range len(bl.off) - 1 {
			restrictTerm(bl.alpha[bl.off[t]:bl.off[t+1]], bl.grp[bl.off[t]:bl.off[t+1]], f)
		}
	}
	md.fixShares(f)
	md.nextOK = false
	md.refresh()
	prev := md.objective(f)
	for range rounds {
		md.sweep(f)
		j := md.objective(f)
		if !(prev-j > 1e-10*prev) {
			break
		}
		prev = j
	}
}

// storeMeasured stores the pairs of the groups with f_g > 0, the only
// ones read from here on, numbered as in md.glob, with every term's whole
// weight in its home group if that is one of them, and returns their
// fractions in that numbering.
func (md *splitModel) storeMeasured(f []float64) []float64 {
	var glob []int32
	var sub []pauli.Setting
	var fc []float64
	for g, fg := range f {
		if fg > 0 {
			glob = append(glob, int32(g))
			sub = append(sub, md.settings[g])
			fc = append(fc, fg)
		}
	}
	md.blocks = newOverlapCover(md.h, sub).blocks(overlapBlockTerms)
	for _, bl := range md.blocks {
		for t := range len(bl.off) - 1 {
			home := int32(md.home[bl.lo+t])
			for e := bl.off[t]; e < bl.off[t+1]; e++ {
				if glob[bl.grp[e]] == home {
					bl.alpha[e] = 1
				}
			}
		}
	}
	md.home = nil
	md.glob, md.load = glob, make([]float64, len(glob))
	return fc
}

// fixShares stores, for the fractions f that stay fixed from here on,
// every pair's d = A_{g,ii}/f_g and 1/d of the per-term step (see sweep),
// computed as the step would: they no longer change between rounds.
func (md *splitModel) fixShares(f []float64) {
	for b := range md.blocks {
		bl := &md.blocks[b]
		bl.dq, bl.inv = make([]float64, len(bl.grp)), make([]float64, len(bl.grp))
		bl.sum1, bl.bad = make([]float64, len(bl.off)-1), make([]uint64, len(bl.off)-1)
		for t := range len(bl.off) - 1 {
			abs := md.abs[bl.lo+t]
			s1 := 0.0
			var bad uint64
			for e := bl.off[t]; e < bl.off[t+1]; e++ {
				g := bl.grp[e]
				fg := f[g]
				if fg == 0 {
					continue
				}
				a := abs * abs
				if md.cov != nil {
					k, p := len(md.gpair[g]), int(md.pos[e])
					a = md.cov[g][p*k+p]
				}
				bl.dq[e] = a / fg
				bl.inv[e] = 1 / bl.dq[e]
				s1 += bl.inv[e]
				bad |= badD(bl.dq[e])
			}
			// Read by sweepFixed only, where every f_g is positive: then
			// they are the sums of its first pass over every pair.
			bl.sum1[t], bl.bad[t] = s1, bad
		}
	}
}

// sweep replaces, term by term, the weights of every term covered by two
// or more groups with f_g > 0 by their exact minimiser with the other
// terms' weights fixed: with d_g = A_{g,ii}/f_g and
// e_g = (A_g α_g − A_{g,ii} α_{ig})_i / f_g, minimise Σ_g d_g α_g² + 2 e_g α_g
// over α ≥ 0, Σ α = 1 (MATH.md §2.5). It reads each cover pair a fixed
// number of times and allocates nothing once its scratch has grown.
func (md *splitModel) sweep(f []float64) {
	if md.cov == nil && md.fixed(f) {
		md.sweepFixed(f)
		return
	}
	md.refresh()
	for _, bl := range md.blocks {
		for t := range len(bl.off) - 1 {
			lo, hi := bl.off[t], bl.off[t+1]
			if hi-lo < 2 {
				continue
			}
			i := bl.lo + t
			abs := md.abs[i]
			md.d, md.e, md.inv, md.idx = md.d[:0], md.e[:0], md.inv[:0], md.idx[:0]
			if md.cov == nil && bl.dq != nil {
				// The worst-case model with the shares fixed: the same
				// numbers as below, written in place.
				k := int(hi - lo)
				md.d, md.e = slices.Grow(md.d, k)[:k], slices.Grow(md.e, k)[:k]
				md.inv, md.idx = slices.Grow(md.inv, k)[:k], slices.Grow(md.idx, k)[:k]
				n := 0
				for e := lo; e < hi; e++ {
					g := bl.grp[e]
					fg := f[g]
					if fg == 0 {
						continue
					}
					b := abs * (md.load[g] - abs*bl.alpha[e])
					md.d[n], md.inv[n], md.e[n], md.idx[n] = bl.dq[e], bl.inv[e], b/fg, e
					n++
				}
				md.d, md.e, md.inv, md.idx = md.d[:n], md.e[:n], md.inv[:n], md.idx[:n]
			} else {
				md.fill(f, bl, lo, hi, abs)
			}
			if len(md.idx) < 2 {
				continue
			}
			md.a = slices.Grow(md.a[:0], len(md.idx))[:len(md.idx)]
			inv := md.inv
			if bl.dq == nil {
				inv = nil
			}
			md.simplex.solve(md.d, md.e, inv, md.a)
			if !finiteWeights(md.a) {
				// Only for terms whose coefficient is near zero (1e-16 and
				// below in molecular Bravyi–Kitaev Hamiltonians): d_g ∝ h_i²
				// is then so far below e_g ∝ |h_i| that μ − e_g is lost to
				// rounding. Their weights keep the values they had, which
				// matter to nothing but that term.
				continue
			}
			if md.cov != nil {
				for s, e := range md.idx {
					md.set(i, bl, e, md.a[s])
				}
				continue
			}
			for s, e := range md.idx {
				if dv := md.a[s] - bl.alpha[e]; dv != 0 {
					bl.alpha[e] = md.a[s]
					md.load[bl.grp[e]] += abs * dv
				}
			}
		}
	}
}

// fixed reports whether the worst-case model's shares are fixed
// ([splitModel.fixShares]) and every stored pair's group has f_g > 0, as
// after [splitModel.storeMeasured].
func (md *splitModel) fixed(f []float64) bool {
	for _, bl := range md.blocks {
		if bl.dq == nil {
			return false
		}
	}
	for _, fg := range f {
		if !(fg > 0) {
			return false
		}
	}
	return true
}

// sweepFixed is [splitModel.sweep] in the worst-case model once the
// shares are fixed and every group has f_g > 0: the same steps on the same
// numbers, with d and 1/d read in place from the block, and the loads the
// next sweep starts from (those of refresh, added term after term in the
// same order) summed as each term is done rather than in a pass of their
// own.
func (md *splitModel) sweepFixed(f []float64) {
	if len(md.next) != len(md.load) {
		md.next = make([]float64, len(md.load))
	}
	if md.nextOK {
		md.load, md.next = md.next, md.load
	} else {
		md.refresh()
	}
	next := md.next
	clear(next)
	for _, bl := range md.blocks {
		for t := range len(bl.off) - 1 {
			lo, hi := int(bl.off[t]), int(bl.off[t+1])
			abs := md.abs[bl.lo+t]
			grp, alpha := bl.grp[lo:hi], bl.alpha[lo:hi]
			k := hi - lo
			if k < 2 {
				for s, g := range grp {
					next[g] += abs * alpha[s]
				}
				continue
			}
			// The first pass of the simplex step, with e_g computed in
			// it: the same numbers and sums as solve's.
			sx := &md.simplex
			md.e = slices.Grow(md.e[:0], k)[:k]
			sx.ed = slices.Grow(sx.ed[:0], k)[:k]
			e, ed := md.e, sx.ed[:k]
			d, inv := bl.dq[lo:hi], bl.inv[lo:hi]
			// Σ 1/d and the test of d, which do not change between
			// sweeps, were done once by fixShares.
			s1, bad := bl.sum1[t], bl.bad[t]
			s2 := 0.0
			for s, g := range grp {
				b := abs * (md.load[g] - abs*alpha[s])
				ev := b / f[g]
				e[s] = ev
				edv := ev / d[s]
				ed[s] = edv
				s2 += edv
			}
			md.a = slices.Grow(md.a[:0], k)[:k]
			sx.finish(d, e, inv, md.a, s1, s2, bad)
			// As in sweep, weights that are not finite numbers in [0, 1]
			// are not taken.
			if finiteWeights(md.a) {
				// Without a branch: where the weight stays, dv is +0 and
				// the load, a sum of products ≥ 0 that is never −0, is
				// left as it is by adding abs·dv = +0; the new weight,
				// equal to the old and not −0 (finish never gives −0),
				// has the same bits.
				for s, g := range grp {
					v := md.a[s]
					dv := v - alpha[s]
					alpha[s] = v
					md.load[g] += abs * dv
					next[g] += abs * v
				}
				continue
			}
			for s, g := range grp {
				next[g] += abs * alpha[s]
			}
		}
	}
	md.nextOK = true
}

// fill writes into md.d, md.e (and md.inv once the shares are fixed) the
// terms d_g, e_g of the per-term step of term i, whose pairs are lo to
// hi−1 of bl, for the groups with f_g > 0, and their pairs into md.idx.
func (md *splitModel) fill(f []float64, bl overlapBlock, lo, hi int32, abs float64) {
	for e := lo; e < hi; e++ {
		g := bl.grp[e]
		fg := f[g]
		if fg == 0 {
			continue
		}
		al := bl.alpha[e]
		var a, b float64
		if md.cov == nil {
			a = abs * abs
			b = abs * (md.load[g] - abs*al)
		} else {
			k, p := len(md.gpair[g]), int(md.pos[e])
			a = md.cov[g][p*k+p]
			b = md.y[g][p] - a*al
		}
		if bl.dq != nil {
			md.d = append(md.d, bl.dq[e])
			md.inv = append(md.inv, bl.inv[e])
		} else {
			md.d = append(md.d, a/fg)
		}
		md.e = append(md.e, b/fg)
		md.idx = append(md.idx, e)
	}
}

// finiteWeights reports whether every weight is a finite number in [0, 1].
func finiteWeights(a []float64) bool {
	for _, v := range a {
		if !(v >= 0 && v <= 1) {
			return false
		}
	}
	return true
}

// set changes α of term i at pair e of bl to v and updates load or y.
func (md *splitModel) set(i int, bl overlapBlock, e int32, v float64) {
	al := &bl.alpha[e]
	dv := v - *al
	if dv == 0 {
		return
	}
	*al = v
	g := bl.grp[e]
	if md.cov == nil {
		md.load[g] += md.abs[i] * dv
		return
	}
	k, p := len(md.gpair[g]), int(md.pos[e])
	a, y := md.cov[g], md.y[g]
	for row := range k {
		y[row] += dv * a[row*k+p]
	}
}

// simplexMin writes into out the minimiser of Σ_j d_j x_j² + 2 e_j x_j
// over x ≥ 0, Σ_j x_j = 1, for d_j > 0. By the KKT conditions
// x_j = max(0, (μ − e_j)/d_j) with μ such that the x_j add up to one, the
// positive ones being those with e_j < μ (MATH.md §2.5). μ is found by
// shrinking the active set (the method of projection onto the simplex
// attributed to Michelot, 1986, recalled from memory; the argument is
// ours): start with every j active, set μ = (1 + Σ_A e_j/d_j)/(Σ_A 1/d_j),
// drop the j with e_j ≥ μ, repeat until none is dropped. Dropping such a j
// does not raise μ (μ' ≤ μ exactly when e_j ≥ μ), so a dropped j stays out,
// the active j end with e_j < μ, the dropped with e_j ≥ μ: the KKT point.
// The j with the smallest e_j is never dropped (alone it gives
// μ = d_j + e_j > e_j). The first pass is O(k); each later one reads only
// the j still active, kept in a list in increasing order so that the sums
// are those of a pass over every j.
func simplexMin(d, e, out []float64) {
	var s simplexScratch
	s.solve(d, e, nil, out)
}

// simplexScratch holds the reusable storage of [simplexMin].
type simplexScratch struct {
	inv, ed []float64 // 1/d_j, e_j/d_j
	act     []int32   // the active j, increasing
}

// solve is [simplexMin] with s's storage.
func (s *simplexScratch) solve(d, e, inv, out []float64) {
	k := len(d)
	s.ed = slices.Grow(s.ed[:0], k)[:k]
	s.act = s.act[:0]
	// The first pass, over every j, also fills inv (unless given) and ed.
	s1, s2 := 0.0, 0.0
	var bad uint64
	if inv == nil {
		s.inv = slices.Grow(s.inv[:0], k)[:k]
		inv = s.inv
		for j := range k {
			inv[j] = 1 / d[j]
			s.ed[j] = e[j] / d[j]
			s1 += inv[j]
			s2 += s.ed[j]
			bad |= badD(d[j])
		}
	} else {
		for j := range k {
			s.ed[j] = e[j] / d[j]
			s1 += inv[j]
			s2 += s.ed[j]
			bad |= badD(d[j])
		}
	}
	s.finish(d, e, inv, out, s1, s2, bad)
}

// finish is [simplexScratch.solve] after its first pass, which left e_j/d_j
// in s.ed and the sums of 1/d_j and e_j/d_j over every j in s1 and s2.
func (s *simplexScratch) finish(d, e, inv, out []float64, s1, s2 float64, bad uint64) {
	k := len(d)
	low := math.Inf(1) // the least μ of the passes that dropped
	// Each later pass drops with the μ of the last and sums over the j it
	// keeps, in increasing order: the sums of the next pass. The passes
	// have no branch per j: every j is written to the list and counted
	// only when kept, and a dropped j adds +0 to the sums, which leaves
	// them as they are (they start at +0 and so are never −0).
	s.act = slices.Grow(s.act[:0], k)[:k]
	mu := (1 + s2) / s1
	s1, s2 = 0, 0
	n := 0
	for j := range k {
		m := keepMask(e[j], mu)
		s.act[n] = int32(j)
		n += int(m & 1)
		s1 += masked(inv[j], m)
		s2 += masked(s.ed[j], m)
	}
	for n < k {
		k = n
		low = min(low, mu)
		mu = (1 + s2) / s1
		s1, s2 = 0, 0
		n = 0
		for _, j := range s.act[:k] {
			m := keepMask(e[j], mu)
			s.act[n] = j
			n += int(m & 1)
			s1 += masked(inv[j], m)
			s2 += masked(s.ed[j], m)
		}
	}
	// x_j = max(0, (μ − e_j)/d_j), then x_j/Σ x. Where μ − e_j ≤ 0 over a
	// positive finite d_j, x_j is +0 without the division, and it stays +0
	// (0/Σ = 0 for Σ > 0): only the other j, listed without a branch, are
	// divided, and add to Σ (+0 would leave it as it is); with Σ not > 0
	// every x_j is divided. When every d_j is positive and finite (bad is
	// 0) and the last μ is at most each μ before it, a j dropped at some
	// μ' has e_j ≥ μ' ≥ μ, so μ − e_j ≤ 0 (a difference of floats has the
	// sign of the exact one): only the j still active need the test.
	clear(out)
	if bad == 0 && mu <= low {
		m := 0
		for _, j := range s.act[:n] {
			s.act[m] = j
			m += int(divideMask(e[j], mu, d[j]) & 1)
		}
		n = m
	} else {
		n = 0
		for j := range out {
			s.act[n] = int32(j)
			n += int(divideMask(e[j], mu, d[j]) & 1)
		}
	}
	sum := 0.0
	for _, j := range s.act[:n] {
		out[j] = max(0, (mu-e[j])/d[j])
		sum += out[j]
	}
	if !(sum > 0) {
		for j := range out {
			out[j] /= sum
		}
		return
	}
	for _, j := range s.act[:n] {
		out[j] /= sum
	}
}

// badD is 1 unless d is positive and finite, without a branch.
func badD(d float64) uint64 {
	var bad uint64
	if !(d > 0) {
		bad = 1
	}
	var big uint64
	if !(d <= math.MaxFloat64) {
		big = 1
	}
	return bad | big
}

// divideMask is all ones unless μ − e ≤ 0 and d is positive and finite
// (then x = max(0, (μ − e)/d) is +0), without a branch.
func divideMask(e, mu, d float64) uint64 {
	var k uint64
	if !(mu-e <= 0) {
		k = 1
	}
	return -(k | badD(d))
}

// keepMask is all ones when !(e >= mu) (j stays active: e < μ, or either
// is NaN), else zero, without a branch.
func keepMask(e, mu float64) uint64 {
	var k uint64
	if !(e >= mu) {
		k = 1
	}
	return -k
}

// masked is v where m is all ones and +0 where m is zero.
func masked(v float64, m uint64) float64 {
	return math.Float64frombits(math.Float64bits(v) & m)
}

// roundShares rounds budget among the fractions f by largest remainder,
// after one shot to every group with f_g > 0 when the budget allows.
func roundShares(budget int, f []float64) []int {
	act := 0
	for _, v := range f {
		if v > 0 {
			act++
		}
	}
	if budget < act {
		return largestRemainder(budget, f)
	}
	out := largestRemainder(budget-act, f)
	for g, v := range f {
		if v > 0 {
			out[g]++
		}
	}
	return out
}

// splitOf returns the split of the measured groups: every term that two
// or more of them cover, with its weights there (those with α > 0),
// normalised to add up to one.
func (md *splitModel) splitOf(settings []pauli.Setting, shots []int) hamiltonian.Split {
	if md.glob != nil {
		for _, bl := range md.blocks {
			for e, g := range bl.grp {
				bl.grp[e] = md.glob[g]
			}
		}
		md.glob = nil
	}
	sum := make([]float64, len(md.abs))
	split := make([]bool, len(md.abs))
	count := make([]int, len(settings))
	for _, bl := range md.blocks {
		for t := range len(bl.off) - 1 {
			i, act := bl.lo+t, 0
			for e := bl.off[t]; e < bl.off[t+1]; e++ {
				if shots[bl.grp[e]] > 0 {
					act++
					sum[i] += bl.alpha[e]
				}
			}
			split[i] = act >= 2 && sum[i] > 0
			if !split[i] {
				continue
			}
			for e := bl.off[t]; e < bl.off[t+1]; e++ {
				if shots[bl.grp[e]] > 0 && bl.alpha[e] > 0 {
					count[bl.grp[e]]++
				}
			}
		}
	}
	at := make([]int, len(settings)) // group g's place in the split, or −1
	var out hamiltonian.Split
	for g, k := range count {
		at[g] = -1
		if k > 0 {
			at[g] = len(out)
			out = append(out, hamiltonian.SplitGroup{Setting: settings[g], Terms: make([]int, 0, k), Weights: make([]float64, 0, k)})
		}
	}
	for _, bl := range md.blocks {
		for t := range len(bl.off) - 1 {
			i := bl.lo + t
			if !split[i] {
				continue
			}
			for e := bl.off[t]; e < bl.off[t+1]; e++ {
				if v := bl.alpha[e]; shots[bl.grp[e]] > 0 && v > 0 {
					gr := &out[at[bl.grp[e]]]
					gr.Terms = append(gr.Terms, i)
					gr.Weights = append(gr.Weights, v/sum[i])
				}
			}
		}
	}
	return out
}

// bornTransform computes, for a local setting, the Walsh–Hadamard transform
// F[m] = Σ_b p(b)(−1)^{|b∧m|} of the Born probabilities of a StateProxy's
// state measured in the setting: F[m] is ⟨P⟩ for the string P of support m
// with the setting's letters there (MATH.md §2.3). Each qubit read in X is
// rotated by H, in Y by H·S†, which take the +1 eigenvector to |0⟩
// (textbook); the cost is n·2^n operations per setting.
type bornTransform struct {
	amp, buf []complex128
	n        int
	p        []float64
}

func newBornTransform(s *StateProxy) *bornTransform {
	return &bornTransform{amp: s.amp, n: s.n, buf: make([]complex128, len(s.amp)), p: make([]float64, len(s.amp))}
}

// of returns F for the setting st; the slice is reused by the next call.
func (b *bornTransform) of(st pauli.Setting) []float64 {
	copy(b.buf, b.amp)
	r := complex(1/math.Sqrt2, 0)
	for q := range b.n {
		l := st.At(q)
		if l == pauli.Z {
			continue
		}
		bit := 1 << q
		for i := range b.buf {
			if i&bit != 0 {
				continue
			}
			a0, a1 := b.buf[i], b.buf[i|bit]
			if l == pauli.X {
				b.buf[i], b.buf[i|bit] = r*(a0+a1), r*(a0-a1)
			} else {
				b.buf[i], b.buf[i|bit] = r*(a0-1i*a1), r*(a0+1i*a1)
			}
		}
	}
	for i, a := range b.buf {
		b.p[i] = real(a)*real(a) + imag(a)*imag(a)
	}
	// The butterfly of the fast Walsh–Hadamard transform (common practice).
	for h := 1; h < len(b.p); h <<= 1 {
		for i := 0; i < len(b.p); i += h << 1 {
			for j := i; j < i+h; j++ {
				x, y := b.p[j], b.p[j+h]
				b.p[j], b.p[j+h] = x+y, x-y
			}
		}
	}
	return b.p
}
