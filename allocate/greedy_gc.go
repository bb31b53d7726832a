package allocate

import (
	"cmp"
	"encoding/binary"
	"errors"
	"math/bits"
	"runtime"
	"slices"
	"sort"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// GreedyGC is greedy one-norm descent (ShadowGrouping, arXiv:2301.03385;
// MATH §5.1) with settings grown as generally commuting families. Each round
// weighs the terms as [Greedy] does — the terms not yet covered first, by
// |h_i|, then by the marginal gain w_i = |h_i|(1/sqrt(N_i) − 1/sqrt(N_i+1)),
// ties by |h_i| and term index — and walks them from the largest weight
// down, accepting a term when it commutes (as an operator) with every term
// accepted so far. The walk stops when the accepted terms span a maximal
// commuting subspace (n independent generators: every further commuting
// term is a product of them) or the list ends. The setting is the accepted
// family's entangled setting ([pauli.NewFamilySetting]; a family that
// commutes qubit-wise gives a local setting with Z on untouched qubits). It
// gets one shot, and N_i grows by one for every term it covers (which
// includes every accepted term and may include more).
//
// # Cost
//
// The terms are kept in walk order; a round tests them in that order
// against a reduced basis of at most n accepted vectors. A walk that has
// read max(4096, M/48) entries narrows: it forms the set of terms that
// commute with every accepted term — the only ones it can still accept —
// and once that set holds at most 8192 terms it reads only those, in walk
// order, testing each in full. The set is
// formed through the terms grouped by X part (see xParts): the Z-strings
// in the span of the accepted terms rule out whole groups by their X part,
// 64 groups at a time, and the terms of the groups left are tested with
// two table lookups per term; if the span holds fewer than 4 independent
// Z-strings, from letter bit sets of the terms (as [Greedy] keeps them),
// word-wise. When the accepted terms reach rank n they span a maximal
// commuting subspace, its own commutant, so that set, less the terms that
// anticommute with a generator accepted since, is the set of terms the
// setting covers and no coverage scan is needed. The covered
// terms then leave the walk order for a second, short list in walk order
// at their new weights, which the walk merges as it reads; the two are
// joined when the short list exceeds M/16 terms, each of its terms placed
// by a galloping search and the runs between copied whole. A family seen
// before is looked up by its accepted terms; a new one costs one
// [pauli.Diagonalize] and, unless the walk narrowed to full rank, the
// coverage of its setting: through the groups by X part when the
// setting's group holds at least 4 independent Z-strings, otherwise a
// scan of the terms split in parts of 2^14 terms. The scans of groups
// and terms are split among GOMAXPROCS cores, with the same result on any
// number.
//
// GreedyGC is deterministic. It implements [Batcher] and [Counter]. The zero
// value is ready to use.
type GreedyGC struct {
	rk    *ranked
	parts []*pauli.Table // terms in rank order, gcPart ranks a table
	cnt   []int          // N per rank
	order []int32        // ranks in walk order, but for those in ovf (see reorder)
	key   []float64      // walk key of each rank
	spare []int32        // scratch of rebuild
	moved []keyRank
	ovf   []keyRank // ranks moved since the last rebuild, in walk order
	ovf2  []keyRank // scratch of reorder
	mark  []bool    // scratch of reorder
	out   []bool    // ranks in ovf rather than order
	acc   []int32
	kbuf  []byte
	cache map[string]gcFamily

	// Narrowed walks (see round).
	slot     []int32  // letter slot of each qubit, −1 if no term touches it
	lbits    []uint64 // letter bit sets (letterSets), word k of set t at k·stride+t
	stride   int
	limit    int       // entries a walk reads before it narrows; −1 never
	narrowAt int       // if > 0, narrowAt−1 replaces limit; if < 0, no narrowing (tests)
	mask     []uint64  // ranks commuting with every generator applied
	live     []int32   // words of mask that may be nonzero
	gens     []int32   // ranks of the independent accepted terms
	offs     []int     // scratch of restrict
	cand     []keyRank // scratch: candidates of a narrowed walk
	xq       *xQuery   // X-part buckets of the ranks (see startMask)
	gwords   []uint64  // scratch: the generators' words
	xbuf     []int32   // scratch of covered
}

// gcFamily is a setting the walk produced before, with the ranks it covers.
type gcFamily struct {
	s      pauli.Setting
	covers []int
}

// String returns "greedy-gc".
func (g *GreedyGC) String() string { return "greedy-gc" }

// Init implements [Allocator].
func (g *GreedyGC) Init(h *hamiltonian.Hamiltonian, budget int) error {
	g.rk = newRanked(h)
	m := len(g.rk.order)
	g.parts = g.parts[:0]
	for r := range m {
		if r%gcPart == 0 {
			g.parts = append(g.parts, pauli.NewTable(g.rk.n, min(gcPart, m-r)))
		}
		x, z := g.rk.row(r)
		g.parts[r/gcPart].Append(pauli.FromWords(g.rk.n, x, z))
	}
	g.cnt = make([]int, m)
	g.order = make([]int32, m)
	g.key = make([]float64, m)
	g.spare = make([]int32, 0, m)
	g.mark = make([]bool, m)
	g.out = make([]bool, m)
	g.ovf = g.ovf[:0]
	for r := range m {
		// Rank order: |h| descending, all uncovered, so already walk order.
		g.order[r] = int32(r)
		g.key[r] = g.keyOf(r)
	}
	g.cache = make(map[string]gcFamily)
	g.xq = nil
	if g.rk.n*g.rk.n <= m {
		// The buckets pay for a query's elimination (see xPartsFor).
		g.xq = newXParts(g.rk.n, m, g.rk.row).query()
		g.xq.split = true
	}
	g.initNarrow()
	return nil
}

// initNarrow prepares narrowed walks: the letter bit sets of the terms and
// the walk position of each rank.
func (g *GreedyGC) initNarrow() {
	rk := g.rk
	m, words := len(rk.order), (len(rk.order)+63)/64
	g.slot = make([]int32, rk.n)
	ns := 0
	for q := range rk.n {
		g.slot[q] = -1
		if rk.used[q>>6]>>(q&63)&1 != 0 {
			g.slot[q] = int32(ns)
			ns++
		}
	}
	g.limit = -1
	g.lbits = nil
	if 16*ns*words > narrowMaxBytes {
		return
	}
	g.limit = max(narrowMinRead, m/gcNarrowShare)
	switch {
	case g.narrowAt > 0:
		g.limit = g.narrowAt - 1
	case g.narrowAt < 0:
		g.limit = -1
	}
	// The letter bit sets word by word: word k of every set at
	// k·2ns, so that forming a word of mask reads one short stretch.
	sets := letterSets(rk, g.slot, ns)
	g.stride = 2 * ns
	g.lbits = make([]uint64, len(sets))
	for t := range 2 * ns {
		for k := range words {
			g.lbits[k*g.stride+t] = sets[t*words+k]
		}
	}
	g.mask = make([]uint64, words)
	g.live = make([]int32, 0, words)
}

// startMask sets mask to the ranks that commute with every generator so
// far. When the generators' span holds enough Z-strings, the X-part buckets
// find them (xQuery.commuting); otherwise the letter bit sets do, word by
// word: a word's generators are applied until it is empty.
func (g *GreedyGC) startMask() {
	m, words, st := len(g.rk.order), len(g.mask), g.stride
	if g.xq != nil && len(g.gens) <= 64 {
		w := g.rk.w
		g.gwords = g.gwords[:0]
		for _, r := range g.gens {
			g.gwords = append(g.gwords, g.rk.words[2*w*int(r):2*w*int(r)+2*w]...)
		}
		if g.xq.commuting(g.mask, g.gwords, len(g.gens), g.rk.words) {
			g.live = g.live[:0]
			for k, v := range g.mask {
				if v != 0 {
					g.live = append(g.live, int32(k))
				}
			}
			return
		}
	}
	g.offs = g.offs[:0]
	ends := make([]int, 0, len(g.gens))
	for _, r := range g.gens {
		g.offs = g.appendOffs(g.offs, r)
		ends = append(ends, len(g.offs))
	}
	g.live = g.live[:0]
	lb, offs := g.lbits, g.offs
	for k := range words {
		w := ^uint64(0)
		if k == words-1 && m%64 != 0 {
			w = 1<<(m%64) - 1
		}
		a := 0
		row := lb[k*st : (k+1)*st]
		for _, e := range ends {
			var v uint64
			for _, o := range offs[a:e] {
				v ^= row[o]
			}
			a = e
			if w &^= v; w == 0 {
				break
			}
		}
		g.mask[k] = w
		if w != 0 {
			g.live = append(g.live, int32(k))
		}
	}
}

// appendOffs appends the offsets in lbits of the letter bit sets whose XOR
// is the set of ranks anticommuting with rank a: the symplectic product of
// a term with a is the parity of its x bits on a's z qubits and its z bits
// on a's x qubits.
func (g *GreedyGC) appendOffs(dst []int, a int32) []int {
	x, z := g.rk.row(int(a))
	for q := range supportOf(x, z) {
		s := int(g.slot[q])
		if z[q>>6]>>(q&63)&1 != 0 {
			dst = append(dst, 2*s)
		}
		if x[q>>6]>>(q&63)&1 != 0 {
			dst = append(dst, 2*s+1)
		}
	}
	return dst
}

// restrict removes from mask the ranks that anticommute with rank a (see
// appendOffs), over the words of mask still nonzero.
func (g *GreedyGC) restrict(a int32) {
	g.offs = g.appendOffs(g.offs[:0], a)
	live := g.live[:0]
	lb, st := g.lbits, g.stride
	for _, k := range g.live {
		row := lb[int(k)*st : (int(k)+1)*st]
		var v uint64
		for _, o := range g.offs {
			v ^= row[o]
		}
		if w := g.mask[k] &^ v; w != 0 {
			g.mask[k] = w
			live = append(live, k)
		} else {
			g.mask[k] = 0
		}
	}
	g.live = live
}

// gcNarrowShare sets the entries a walk reads before it narrows,
// max(narrowMinRead, M/gcNarrowShare): earlier than [Greedy]'s walks, as
// the commuting set comes from the X-part groups at the cost of a fraction
// of a scan (on the 571 875-term molecule, 12 000 entries took about a
// fifth less CPU time over 10^4 rounds than 35 742).
const gcNarrowShare = 48

// candMax is the most candidates a narrowed walk sorts.
const candMax = 1 << 13

// maskCount returns the number of ranks in mask.
func (g *GreedyGC) maskCount() int {
	c := 0
	for _, k := range g.live {
		c += bits.OnesCount64(g.mask[k])
	}
	return c
}

// NextBatch implements [Batcher]: one setting with one shot.
func (g *GreedyGC) NextBatch(settings []pauli.Setting, shots []int, remaining int) ([]pauli.Setting, []int, error) {
	s, err := g.round()
	if err != nil {
		return settings, shots, err
	}
	return append(settings, s), append(shots, 1), nil
}

// Cover implements [Counter].
func (g *GreedyGC) Cover(dst []int) {
	for r, i := range g.rk.order {
		dst[i] = g.cnt[r]
	}
}

// round chooses the next setting and records its covers.
func (g *GreedyGC) round() (pauli.Setting, error) {
	rk := g.rk
	if rk == nil {
		return pauli.Setting{}, errors.New("Next before Init")
	}
	gs := newCommutingGroups(rk.w)
	g.acc = g.acc[:0]
	g.gens = g.gens[:0]
	masked, full := false, false
	// In a narrowed walk (from the generator narrowed on), mask is not
	// restricted by each new generator: the walk tests every candidate
	// in full anyway, and the mask is brought up to date once at the end.
	narrowed, since := false, 0
	// accept tests rank r as the sequential walk does and reports whether
	// the walk is over.
	accept := func(r int32) bool {
		x, z := rk.row(int(r))
		if gs.len() > 0 && !gs.fits(0, x, z) {
			return false
		}
		before := 0
		if gs.len() > 0 {
			before = gs.rank(0)
		}
		gs.add(0, x, z)
		g.acc = append(g.acc, r)
		if gs.rank(0) > before {
			g.gens = append(g.gens, r)
			if masked && !narrowed {
				g.restrict(r)
			}
		}
		full = gs.rank(0) == rk.n
		return full
	}
	// Past limit entries, the walk keeps the set of ranks that commute
	// with every accepted term (mask) and, once it holds at most candMax
	// ranks, reads only those (narrowWalk); the count is taken again
	// whenever a generator was added.
	counted := -1
	main, ovf := g.order, g.ovf
	i, j := 0, 0
	for p := 0; ; p++ {
		// The next rank in walk order: the earlier of the heads of
		// order (skipping ranks moved to ovf) and ovf.
		for i < len(main) && g.out[main[i]] {
			i++
		}
		var r int32
		if i < len(main) && (j == len(ovf) || g.walkBefore(main[i], ovf[j].r)) {
			r = main[i]
			i++
		} else if j < len(ovf) {
			r = ovf[j].r
			j++
		} else {
			break
		}
		if accept(r) {
			break
		}
		if g.limit >= 0 && p >= g.limit && counted != len(g.gens) {
			if !masked {
				g.startMask()
				masked = true
			}
			counted = len(g.gens)
			if g.maskCount() <= candMax {
				narrowed, since = true, len(g.gens)
				g.narrowWalk(r, accept)
				break
			}
		}
	}
	slices.Sort(g.acc)
	g.kbuf = g.kbuf[:0]
	for _, r := range g.acc {
		g.kbuf = binary.LittleEndian.AppendUint32(g.kbuf, uint32(r))
	}
	f, ok := g.cache[string(g.kbuf)]
	if !ok {
		// The setting depends only on the family's independent
		// generators, each the first member (in rank order) that is not
		// a product of earlier ones; those alone are passed.
		ind := newCommutingGroups(rk.w)
		var fam []pauli.String
		for _, r := range g.acc {
			x, z := rk.row(int(r))
			before := 0
			if ind.len() > 0 {
				before = ind.rank(0)
			}
			ind.add(0, x, z)
			if ind.rank(0) > before {
				fam = append(fam, g.parts[int(r)/gcPart].At(int(r)%gcPart))
			}
		}
		s, err := pauli.NewFamilySetting(fam)
		if err != nil {
			return pauli.Setting{}, err
		}
		var covers []int
		if masked && full {
			// The accepted terms span a maximal commuting subspace,
			// which is its own commutant: the terms the setting
			// covers are those commuting with every generator.
			if narrowed {
				g.keepCommuting(g.gens[since:])
			}
			covers = g.maskRanks()
		} else {
			covers = g.covered(s)
		}
		f = gcFamily{s: s, covers: covers}
		g.cache[string(g.kbuf)] = f
	}
	g.reorder(f.covers)
	return f.s, nil
}

// narrowWalk continues a walk that has read the ranks up to cur among the
// ranks left in mask, the only ones it can still accept: those after cur
// in walk order.
func (g *GreedyGC) narrowWalk(cur int32, accept func(int32) bool) {
	c := g.cand[:0]
	for _, k := range g.live {
		for w := g.mask[k]; w != 0; w &= w - 1 {
			r := int32(k)<<6 | int32(bits.TrailingZeros64(w))
			if g.walkBefore(cur, r) {
				c = append(c, keyRank{g.key[r], r})
			}
		}
	}
	slices.SortFunc(c, compareWalk)
	for _, kr := range c {
		r := kr.r
		if g.mask[r>>6]>>(r&63)&1 == 0 {
			continue
		}
		if accept(r) {
			break
		}
	}
	g.cand = c
}

// keepCommuting removes from mask the ranks that anticommute with one of
// the given ranks, testing each rank of mask against each of them.
func (g *GreedyGC) keepCommuting(gens []int32) {
	if len(gens) == 0 {
		return
	}
	live := g.live[:0]
	for _, k := range g.live {
		w := g.mask[k]
		for v := w; v != 0; v &= v - 1 {
			r := int(k)<<6 | bits.TrailingZeros64(v)
			x, z := g.rk.row(r)
			for _, a := range gens {
				if !commuteWords(x, z, g.rk, a) {
					w &^= 1 << (r & 63)
					break
				}
			}
		}
		g.mask[k] = w
		if w != 0 {
			live = append(live, k)
		}
	}
	g.live = live
}

// commuteWords reports whether the string (x, z) commutes with rank a.
func commuteWords(x, z []uint64, rk *ranked, a int32) bool {
	ax, az := rk.row(int(a))
	c := 0
	for i := range x {
		c += bits.OnesCount64(x[i]&az[i] ^ z[i]&ax[i])
	}
	return c&1 == 0
}

// maskRanks returns the ranks in mask, in increasing order.
func (g *GreedyGC) maskRanks() []int {
	out := make([]int, 0, g.maskCount())
	for _, k := range g.live {
		for w := g.mask[k]; w != 0; w &= w - 1 {
			out = append(out, int(k)<<6|bits.TrailingZeros64(w))
		}
	}
	return out
}

// gcPart is the number of ranks in each part of the terms' table. The
// coverage scan of a new family's setting takes the parts on up to
// GOMAXPROCS cores and joins their lists in part order, so the result does
// not depend on the number of cores.
const gcPart = 1 << 14

// covered returns the ranks that s covers, in increasing order: for an
// entangled setting through the X-part buckets when they pay, otherwise
// by a scan.
func (g *GreedyGC) covered(s pauli.Setting) []int {
	parts := g.parts
	if g.xq != nil && !s.IsLocal() {
		covers := func(r int32) bool { return parts[r/gcPart].CoversRow(int(r%gcPart), s) }
		var ok bool
		if g.xbuf, ok = g.xq.appendCovered(g.xbuf[:0], s, covers); ok {
			slices.Sort(g.xbuf)
			out := make([]int, len(g.xbuf))
			for j, r := range g.xbuf {
				out[j] = int(r)
			}
			return out
		}
	}
	workers := min(runtime.GOMAXPROCS(0), len(parts))
	if workers <= 1 {
		var out []int
		for p, t := range parts {
			k := len(out)
			out = t.Covered(out, s)
			for j := k; j < len(out); j++ {
				out[j] += p * gcPart
			}
		}
		return out
	}
	lists := make([][]int, len(parts))
	splitEach(len(parts), func(p int) {
		l := parts[p].Covered(nil, s)
		for j := range l {
			l[j] += p * gcPart
		}
		lists[p] = l
	})
	total := 0
	for _, l := range lists {
		total += len(l)
	}
	out := make([]int, 0, total)
	for _, l := range lists {
		out = append(out, l...)
	}
	return out
}

// keyOf returns the weight of rank r in the walk: uncovered terms sort
// above every covered one, their key being |h| plus a tier above every
// marginal gain (each gain is below |h|).
func (g *GreedyGC) keyOf(r int) float64 {
	if n := g.cnt[r]; n > 0 {
		return g.rk.abs[r] * marginalGain(n)
	}
	return 1 + g.rk.abs[0] + g.rk.abs[r]
}

// walkBefore reports whether rank a comes before rank b in the walk: larger
// key first, then lower rank (|h| descending, then term index).
func (g *GreedyGC) walkBefore(a, b int32) bool {
	return g.key[a] > g.key[b] || g.key[a] == g.key[b] && a < b
}

// keyRank is a rank with its walk key, for sorting in walk order without
// reading the keys of the ranks compared.
type keyRank struct {
	k float64
	r int32
}

// compareWalk orders as walkBefore does: larger key first, then lower rank.
func compareWalk(a, b keyRank) int {
	switch {
	case a.k > b.k:
		return -1
	case a.k < b.k:
		return 1
	}
	return cmp.Compare(a.r, b.r)
}

// ovfShare sets when the moved ranks are merged back into the main walk
// order: once they are more than 1/ovfShare of the ranks.
const ovfShare = 16

// reorder records one more cover of each of the given ranks and restores
// the walk order. Only their keys fell, so the other ranks keep their
// order. The moved ranks, sorted among themselves, are merged into ovf, a
// second list in walk order of the ranks moved since the last rebuild
// (dropping their earlier entries there), and leave the main order, where
// the walk skips them: O(L + C log C) for C covered ranks and L in ovf.
// When ovf grows past 1/ovfShare of the ranks, rebuild merges it back, in
// O(M).
func (g *GreedyGC) reorder(covers []int) {
	g.moved = g.moved[:0]
	for _, r := range covers {
		g.cnt[r]++
		g.key[r] = g.keyOf(r)
		g.mark[r] = true
		g.out[r] = true
		g.moved = append(g.moved, keyRank{g.key[r], int32(r)})
	}
	slices.SortFunc(g.moved, compareWalk)
	merged := g.ovf2[:0]
	i := 0
	for _, e := range g.ovf {
		if g.mark[e.r] {
			continue // moved again: its entry is in moved
		}
		for i < len(g.moved) && compareWalk(g.moved[i], e) < 0 {
			merged = append(merged, g.moved[i])
			i++
		}
		merged = append(merged, e)
	}
	merged = append(merged, g.moved[i:]...)
	g.ovf, g.ovf2 = merged, g.ovf
	for _, r := range covers {
		g.mark[r] = false
	}
	if len(g.ovf)*ovfShare > len(g.order) {
		g.rebuild()
	}
}

// rebuild merges ovf back into the main walk order: the ranks left in it,
// with each of ovf's placed after those that precede it, found by a
// galloping search from the place of the one before; the runs between are
// copied whole.
func (g *GreedyGC) rebuild() {
	kept := g.spare[:0]
	for _, r := range g.order {
		if !g.out[r] {
			kept = append(kept, r)
		}
	}
	out := g.order[:0]
	i := 0
	for _, kr := range g.ovf {
		mv := kr.r
		// kept[i:lo] precede mv; kept[hi] does not, or hi = len(kept).
		lo, hi, step := i, i, 1
		for hi < len(kept) && g.walkBefore(kept[hi], mv) {
			lo = hi + 1
			hi = lo + step
			step <<= 1
		}
		hi = min(hi, len(kept))
		rest := kept[lo:hi]
		j := lo + sort.Search(len(rest), func(t int) bool { return !g.walkBefore(rest[t], mv) })
		out = append(out, kept[i:j]...)
		out = append(out, mv)
		g.out[mv] = false
		i = j
	}
	out = append(out, kept[i:]...)
	g.order, g.spare = out, kept
	g.ovf = g.ovf[:0]
}
