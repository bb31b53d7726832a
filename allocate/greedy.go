package allocate

import (
	"cmp"
	"math"
	"math/bits"
	"slices"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/internal/coverindex"
	"github.com/shotplan/shotplan/pauli"
)

// Greedy is greedy one-norm descent, the allocation of ShadowGrouping
// ("Guaranteed efficient energy estimation of quantum many-body Hamiltonians
// using ShadowGrouping", arXiv:2301.03385; MATH §5.1).
//
// Each round gives term i the weight of its marginal gain in the objective
// Σ_i |h_i|/sqrt(N_i) (MATH §3.2), w_i = |h_i|(1/sqrt(N_i) − 1/sqrt(N_i+1)),
// with the terms not yet covered (N_i = 0) first, by |h_i|. It walks the
// terms from the largest weight down, ties broken by |h_i| and then by term
// index, accepts a term when it is qubit-wise compatible with the letters
// fixed so far and fixes its letters, and stops when every qubit is fixed or
// the list ends. Free qubits get the letter Fill. The setting gets one shot,
// and N_i grows by one for every term the finished setting covers.
//
// # Cost
//
// The terms are kept in walk order — weight descending, ties by rank —
// in a list of blocks of up to 128 entries, each entry holding its key and
// its bit words inline, and each block a superset of the union of its
// members' supports. A round reads the blocks in order and tests each entry
// word-wise, with no heap operation per entry: it skips a block none of
// whose members touches a free qubit, and stops when no later block does
// (the setting is then the one walking to the end gives) or when every
// qubit is fixed. Finding the terms the setting covers reads only the terms
// whose two lowest support qubits agree with the setting (about a ninth of
// them; see internal/coverindex), O(M⌈n/64⌉/9). Recording a cover is O(1):
// the entry keeps its old, larger key until a walk meets it, defers it to
// its true weight in a small heap merged with the blocks (so the walk order
// stays exact), and moves it to its place afterwards, O(log M + B) for
// blocks of B entries. A setting therefore costs O(W⌈n/64⌉ + M⌈n/64⌉/9 +
// S(log M + B)) for W entries read by the walk and S stale entries met.
//
// On Hamiltonians whose every qubit lies in the support of many terms
// (Jordan–Wigner molecules) the last free qubits often have no compatible
// term, and the walk would read nearly all M entries to find that out. So
// a walk that has read max(4096, M/16) entries narrows instead. For every
// qubit the ranks whose letter there has an x bit, and those with a z bit,
// are kept as bit sets; the ranks that agree with every letter fixed so far
// are then found with at most 2n⌈M/64⌉ word reads (fewer as the set
// empties: only its non-zero words are read, and the letters that rule out
// most ranks go first). The walk continues among those that also touch a
// free qubit — the only terms it can still accept — accepting the first by
// weight and rank and dropping those the new letters rule out, which gives
// exactly the setting of the full walk; the same set, finished with the
// remaining letters, is the set of covered terms. Memory is O(M⌈n/64⌉)
// words for the entries and about nM/32 bytes for the bit sets, which are
// not built (and walks read to their end) past 256 MiB.
//
// Greedy is deterministic: it uses no randomness. It implements [Counter].
// The zero value is ready to use.
type Greedy struct {
	// Fill is the letter of the qubits that no accepted term fixes; zero
	// (pauli.I) means Z.
	Fill pauli.Letter

	rk     *ranked
	index  *coverindex.Index
	st     []state   // per rank: cover count and weights
	tier   float64   // added to |h| for uncovered terms, above every w_i
	blocks []*block  // the terms in walk order
	home   []*block  // home[r]: the block holding rank r
	tail   []uint64  // scratch: union of the supports of blocks b.. at b·w
	hit    []int32   // scratch: ranks covered by the last setting
	order  []int32   // scratch: ranks in walk order, for layout
	keys   []float64 // scratch: their keys
	stale  []uint64  // bit r: rank r was covered since its entry was placed
	met    []entry   // stale entries met by the walk
	front  []entry   // deferred entries of the walk, a max-heap
	gain   []float64
	px     []uint64 // letters fixed so far
	pz     []uint64
	fixed  []uint64 // qubits fixed so far

	fx, fz uint64 // symplectic bits of the fill letter, set by Init

	// The narrowed walk (see narrow).
	narrowAt int      // if > 0, narrowAt−1 replaces limit (tests)
	limit    int      // entries a walk reads before it narrows; −1: never
	read     int      // entries read by the current walk
	lbits    []uint64 // letter bit sets: slot s's x bits at 2s·W, z bits at (2s+1)·W
	slot     []int32  // slot of each qubit, or −1 if no term touches it
	ns       int      // number of slots
	alive    []uint64 // bit r: rank r agrees with the letters fixed so far
	live     []int32  // the words of alive that are not zero
	none     []uint64 // ⌈M/64⌉ zero words
	seen     []uint64 // qubits already applied to alive
	fix      []fixOp  // scratch of restrict
	kills    []int32  // per slot and letter code 0, 1, 2 (X, Z, Y): ranks it rules out
	cand     []entry  // scratch of narrow
}

// fixOp is one qubit's letter to apply to alive: the slot of the qubit and
// the letter's x and z bits as all-zero or all-one words.
type fixOp struct {
	s      int
	lx, lz uint64
	kills  int32
}

// state is what a cover changes about a term.
type state struct {
	cur float64 // true weight (tier-shifted for N = 0)
	abs float64 // |h_i|
	cnt int64   // N_i
}

// blockSize is the number of entries of a block after a split; a block
// splits when it reaches twice as many.
const blockSize = 64

// block is a run of consecutive entries of the walk order.
type block struct {
	key   []float64 // weight, descending
	r     []int32   // rank, ascending among equal keys
	words []uint64  // entry j: x at words[2wj:], z at words[2wj+w:]
	sup   []uint64  // a superset of the union of the entries' supports
	lastK float64   // the last entry's key and rank, when not empty
	lastR int32
}

// settle records the last entry of b in its header, which the search for a
// block reads.
func (b *block) settle() {
	if n := len(b.r); n > 0 {
		b.lastK, b.lastR = b.key[n-1], b.r[n-1]
	}
}

// before reports whether the entry (ka, ra) comes before (kb, rb) in the
// walk: larger weight first, then lower rank (larger |h_i|, then lower term
// index).
func before(ka float64, ra int32, kb float64, rb int32) bool {
	return ka > kb || ka == kb && ra < rb
}

// String returns "greedy".
func (g *Greedy) String() string { return "greedy" }

// Init implements [Allocator].
func (g *Greedy) Init(h *hamiltonian.Hamiltonian, budget int) error {
	fill, err := fillLetter("greedy", g.Fill)
	if err != nil {
		return err
	}
	g.fx, g.fz = letterBits(fill)
	g.rk = newRanked(h)
	rk := g.rk
	m := len(rk.order)
	g.index = coverindex.New(rk.n, m, rk.row)
	g.st = make([]state, m)
	g.home = make([]*block, m)
	g.tier = rk.abs[0] // the largest |h|; every w_i ≤ (1−1/√2)|h_i| is below it
	w := rk.w
	g.order, g.keys = make([]int32, m), make([]float64, m)
	g.stale = make([]uint64, (m+63)/64)
	for r := range m {
		// Rank order is descending by key, so it is already the walk order.
		g.st[r] = state{cur: rk.abs[r] + g.tier, abs: rk.abs[r]}
		g.order[r], g.keys[r] = int32(r), g.st[r].cur
	}
	g.layout()
	g.gain = g.gain[:0]
	g.px, g.pz, g.fixed = make([]uint64, w), make([]uint64, w), make([]uint64, w)
	g.initNarrow()
	return nil
}

// narrowMaxBytes bounds the memory of the letter bit sets of the narrowed
// walk; past it Greedy walks the whole list instead.
const narrowMaxBytes = 1 << 28

// initNarrow builds the letter bit sets of the narrowed walk: for every
// qubit in some term's support (a slot), the ranks whose letter there has
// an x bit, and those whose letter has a z bit, each ⌈M/64⌉ words long, so
// that restrict streams through one qubit at a time.
func (g *Greedy) initNarrow() {
	rk := g.rk
	m, words := len(rk.order), (len(rk.order)+63)/64
	g.slot = make([]int32, rk.n)
	g.ns = 0
	for q := range rk.n {
		g.slot[q] = -1
		if rk.used[q>>6]>>(q&63)&1 != 0 {
			g.slot[q] = int32(g.ns)
			g.ns++
		}
	}
	g.limit = -1
	if 16*g.ns*words > narrowMaxBytes {
		g.lbits = nil
		return
	}
	// A walk narrows after reading about as many entries as the words
	// that computing alive reads for all qubits (an entry costs some ten
	// times a word operation); narrowing earlier would rarely pay.
	g.limit = max(narrowMinRead, m/narrowShare)
	if g.narrowAt > 0 {
		g.limit = g.narrowAt - 1
	}
	ns := g.ns
	g.lbits = letterSets(rk, g.slot, ns)
	// kills: X rules out the ranks with a z bit on the qubit, Z those with
	// an x bit, Y those with exactly one.
	g.kills = make([]int32, 3*ns)
	for s := range ns {
		for k := range words {
			x, z := g.lbits[2*s*words+k], g.lbits[(2*s+1)*words+k]
			g.kills[3*s] += int32(bits.OnesCount64(z))
			g.kills[3*s+1] += int32(bits.OnesCount64(x))
			g.kills[3*s+2] += int32(bits.OnesCount64(x ^ z))
		}
	}
	g.alive = make([]uint64, words)
	g.none = make([]uint64, words)
	g.live = make([]int32, 0, words)
	g.seen = make([]uint64, rk.w)
}

// letterSets returns the letter bit sets of the ranks of rk: for slot s
// (slot[q] of qubit q, −1 for a qubit no term touches), the ranks whose
// letter on the qubit has an x bit at 2s·W and those with a z bit at
// (2s+1)·W, W = ⌈M/64⌉ words each.
func letterSets(rk *ranked, slot []int32, ns int) []uint64 {
	m, words := len(rk.order), (len(rk.order)+63)/64
	lbits := make([]uint64, 2*ns*words)
	for r := range m {
		x, z := rk.row(r)
		bit := uint64(1) << (r & 63)
		for q := range supportOf(x, z) {
			o := 2*int(slot[q])*words + r>>6
			if x[q>>6]>>(q&63)&1 != 0 {
				lbits[o] |= bit
			}
			if z[q>>6]>>(q&63)&1 != 0 {
				lbits[o+words] |= bit
			}
		}
	}
	return lbits
}

// The walk narrows after reading max(narrowMinRead, M/narrowShare) entries.
const (
	narrowMinRead = 4096
	narrowShare   = 16
)

// Next implements [Stepper].
func (g *Greedy) Next(dst []pauli.Letter) (int, error) {
	rk := g.rk
	w := rk.w
	// Qubits outside every term's support are fixed from the start, so
	// that the walk can end early.
	for k := range w {
		g.px[k], g.pz[k], g.fixed[k] = 0, 0, rk.all[k]&^rk.used[k]
	}
	g.read = 0
	narrowed := g.walk()
	// The stale entries the walk met go to their places.
	for _, e := range g.met {
		g.move(e.r, e.key)
		g.stale[e.r>>6] &^= 1 << (e.r & 63)
	}
	for k := range w {
		free := rk.all[k] &^ (g.px[k] | g.pz[k])
		g.px[k] |= free & g.fx
		g.pz[k] |= free & g.fz
	}
	writeLetters(dst, g.px, g.pz)
	if narrowed {
		// alive holds the terms that agree with the letters of the
		// narrowing; the other letters leave the covered ones.
		copy(g.fixed, rk.all)
		g.restrict()
		g.hit = g.appendAlive(g.hit[:0])
	} else {
		g.hit = g.index.AppendCovered(g.hit[:0], g.px, g.pz)
	}
	for _, r := range g.hit {
		g.bump(r)
		g.stale[r>>6] |= 1 << (r & 63)
	}
	if len(g.blocks) > 2*len(g.st)/blockSize+8 {
		// Moves leave blocks half empty: lay them out afresh.
		g.order, g.keys = g.order[:0], g.keys[:0]
		for _, b := range g.blocks {
			g.order = append(g.order, b.r...)
			g.keys = append(g.keys, b.key...)
		}
		g.layout()
	}
	return 1, nil
}

// layout puts the entries of g.order and g.keys, which are in walk order,
// into fresh blocks of blockSize entries.
func (g *Greedy) layout() {
	w := g.rk.w
	g.blocks = g.blocks[:0]
	for lo := 0; lo < len(g.order); lo += blockSize {
		hi := min(lo+blockSize, len(g.order))
		b := newBlock(w)
		for j, r := range g.order[lo:hi] {
			g.push(b, len(b.r), g.keys[lo+j], r)
		}
		g.blocks = append(g.blocks, b)
	}
}

func newBlock(w int) *block {
	return &block{
		key:   make([]float64, 0, 2*blockSize),
		r:     make([]int32, 0, 2*blockSize),
		words: make([]uint64, 0, 4*w*blockSize),
		sup:   make([]uint64, w),
	}
}

// walk visits the terms in descending weight and fixes the letters of those
// compatible with the partial setting. It stops when every qubit is fixed,
// or when no term left could fix a free qubit, which gives the same setting
// as walking to the end.
//
// A covered term's entry keeps its old, larger key (it is stale) until a
// walk meets it: the walk then defers it to its true weight, in a small
// heap merged with the blocks, and Next moves it to its place afterwards.
// Since a stale key is never below the true one, the order of the walk is
// exact.
func (g *Greedy) walk() (narrowed bool) {
	g.met, g.front = g.met[:0], g.front[:0]
	if g.allFixed() {
		return false
	}
	w := g.rk.w
	nb := len(g.blocks)
	g.tail = slices.Grow(g.tail[:0], (nb+1)*w)[:(nb+1)*w]
	clear(g.tail[nb*w:])
	for b := nb - 1; b >= 0; b-- {
		for k := range w {
			g.tail[b*w+k] = g.tail[(b+1)*w+k] | g.blocks[b].sup[k]
		}
	}
	for bi, b := range g.blocks {
		if !g.touchesFree(g.tail[bi*w : (bi+1)*w]) {
			break
		}
		if !g.touchesFree(b.sup) {
			// None of its entries, stale or not, can fix a free qubit.
			continue
		}
		if g.limit >= 0 && g.read >= g.limit {
			g.narrow()
			return true
		}
		g.read += len(b.r)
		if g.scan(b) {
			return false
		}
	}
	// No later block touches a free qubit; deferred entries still may.
	for len(g.front) > 0 {
		e := g.popFront()
		if g.accept(g.rk.row(int(e.r))) {
			return false
		}
	}
	return false
}

// narrow finishes a long walk from the terms it can still accept. Every
// term the walk has passed was accepted (its qubits are fixed), disagreed
// with the letters fixed then (it still does) or touched no free qubit (it
// still touches none), so the next term the walk accepts is the first, in
// walk order, of the terms that agree with the letters fixed so far and
// touch a free qubit: the candidates. narrow finds those that agree through
// the letter bit sets (alive; about n⌈M/64⌉ word operations), then
// repeatedly accepts the first candidate by true weight and rank and drops
// the candidates that no longer agree or touch a free qubit. The setting is
// the one the walk would give; the work after the bit sets is linear in the
// candidates per accepted term.
func (g *Greedy) narrow() {
	m := len(g.rk.order)
	for k := range g.alive {
		g.alive[k] = ^uint64(0)
	}
	if m%64 != 0 {
		g.alive[len(g.alive)-1] = 1<<(m%64) - 1
	}
	g.live = g.live[:0]
	for k := range g.alive {
		g.live = append(g.live, int32(k))
	}
	clear(g.seen)
	g.restrict()
	cand := g.cand[:0]
	for _, k := range g.live {
		a := g.alive[k]
		for a != 0 {
			r := int32(k)<<6 + int32(bits.TrailingZeros64(a))
			a &= a - 1
			if g.grows(g.rk.row(int(r))) {
				cand = append(cand, entry{key: g.st[r].cur, r: r})
			}
		}
	}
	for len(cand) > 0 {
		best := 0
		for i := 1; i < len(cand); i++ {
			if before(cand[i].key, cand[i].r, cand[best].key, cand[best].r) {
				best = i
			}
		}
		if g.accept(g.rk.row(int(cand[best].r))) {
			break
		}
		k := 0
		for _, e := range cand {
			if g.agrees(g.rk.row(int(e.r))) {
				cand[k] = e
				k++
			}
		}
		cand = cand[:k]
	}
	g.cand = cand[:0]
}

// agrees reports whether the string with words x, z agrees with the letters
// fixed so far and touches a free qubit.
func (g *Greedy) agrees(x, z []uint64) bool {
	grow := false
	for k := range x {
		s, f := x[k]|z[k], g.fixed[k]
		if ((x[k]^g.px[k])|(z[k]^g.pz[k]))&s&f != 0 {
			return false
		}
		grow = grow || s&^f != 0
	}
	return grow
}

// grows reports whether the string with words x, z touches a free qubit.
func (g *Greedy) grows(x, z []uint64) bool {
	for k, f := range g.fixed {
		if (x[k]|z[k])&^f != 0 {
			return true
		}
	}
	return false
}

// restrict clears from alive the ranks that disagree with the letter of a
// fixed qubit not applied before, and marks those qubits applied. A rank
// disagrees on qubit q when it has an x bit there and the letter has none,
// or the same for z: for X it is the ranks with a z bit, for Z those with an
// x bit, for Y those with exactly one.
func (g *Greedy) restrict() {
	fix := g.fix[:0]
	for k, f := range g.fixed {
		add := f &^ g.seen[k]
		g.seen[k] = f
		for add != 0 {
			q := k<<6 + bits.TrailingZeros64(add)
			add &= add - 1
			if s := g.slot[q]; s >= 0 {
				b := -(g.px[k] >> (q & 63) & 1)
				c := -(g.pz[k] >> (q & 63) & 1)
				fix = append(fix, fixOp{s: int(s), lx: b, lz: c, kills: g.kills[3*int(s)+int(b&1|c&2)-1]})
			}
		}
	}
	g.fix = fix
	if len(fix) == 0 {
		return
	}
	// The letters that rule out the most ranks first, so that the later
	// ones read fewer words.
	slices.SortFunc(fix, func(a, b fixOp) int { return cmp.Compare(b.kills, a.kills) })
	// The ranks a letter rules out on a qubit are a ^ b for two bit sets:
	// for X the z bits and none, for Z the x bits and none, for Y the x and
	// the z bits. So X and Z read one set of the qubit, not two (none is one
	// shared all-zero set). Four letters per pass over the live words; a
	// last pass with fewer is padded with none.
	words := len(g.alive)
	alive := g.alive
	for len(fix) > 0 {
		var as, bs [4][]uint64
		for i := range 4 {
			as[i], bs[i] = g.none, g.none
			if i >= len(fix) {
				continue
			}
			f := fix[i]
			xs := g.lbits[2*f.s*words : (2*f.s+1)*words]
			zs := g.lbits[(2*f.s+1)*words : (2*f.s+2)*words]
			switch {
			case f.lx != 0 && f.lz != 0:
				as[i], bs[i] = xs, zs
			case f.lx != 0:
				as[i] = zs
			default:
				as[i] = xs
			}
		}
		fix = fix[min(4, len(fix)):]
		live := g.live[:0]
		for _, k := range g.live {
			a := alive[k] &^ ((as[0][k] ^ bs[0][k]) | (as[1][k] ^ bs[1][k]) |
				(as[2][k] ^ bs[2][k]) | (as[3][k] ^ bs[3][k]))
			alive[k] = a
			if a != 0 {
				live = append(live, k)
			}
		}
		g.live = live
		if len(live) == 0 {
			return
		}
	}
}

// appendAlive appends the ranks in alive to dst.
func (g *Greedy) appendAlive(dst []int32) []int32 {
	for _, k := range g.live {
		a := g.alive[k]
		for a != 0 {
			dst = append(dst, int32(k)<<6+int32(bits.TrailingZeros64(a)))
			a &= a - 1
		}
	}
	return dst
}

// scan walks the entries of block b, merged with the deferred ones before
// them, and reports whether every qubit is then fixed.
func (g *Greedy) scan(b *block) bool {
	w := g.rk.w
	if w == 1 {
		return g.scan1(b)
	}
	for j, r := range b.r {
		if g.stale[r>>6]>>(r&63)&1 != 0 {
			g.met = append(g.met, entry{key: b.key[j], r: r})
			g.pushFront(entry{key: g.st[r].cur, r: r})
			continue
		}
		for len(g.front) > 0 && before(g.front[0].key, g.front[0].r, b.key[j], r) {
			e := g.popFront()
			if g.accept(g.rk.row(int(e.r))) {
				return true
			}
		}
		o := 2 * w * j
		if g.accept(b.words[o:o+w], b.words[o+w:o+2*w]) {
			return true
		}
	}
	return false
}

// scan1 is scan for registers of one word, with the partial setting in
// registers.
func (g *Greedy) scan1(b *block) bool {
	px, pz, fixed, all := g.px[0], g.pz[0], g.fixed[0], g.rk.all[0]
	words, keys, stale := b.words, b.key, g.stale
	// The first deferred entry, or a key no entry comes after.
	topK, topR := math.Inf(-1), int32(0)
	if len(g.front) > 0 {
		topK, topR = g.front[0].key, g.front[0].r
	}
	for j, r := range b.r {
		if stale[r>>6]>>(r&63)&1 != 0 {
			g.met = append(g.met, entry{key: keys[j], r: r})
			g.pushFront(entry{key: g.st[r].cur, r: r})
			topK, topR = g.front[0].key, g.front[0].r
			continue
		}
		if topK > keys[j] || topK == keys[j] && topR < r {
			g.px[0], g.pz[0], g.fixed[0] = px, pz, fixed
			for len(g.front) > 0 && before(g.front[0].key, g.front[0].r, keys[j], r) {
				e := g.popFront()
				if g.accept(g.rk.row(int(e.r))) {
					return true
				}
			}
			px, pz, fixed = g.px[0], g.pz[0], g.fixed[0]
			topK, topR = math.Inf(-1), 0
			if len(g.front) > 0 {
				topK, topR = g.front[0].key, g.front[0].r
			}
		}
		x, z := words[2*j], words[2*j+1]
		s := x | z
		if ((x^px)|(z^pz))&s&fixed == 0 && s&^fixed != 0 {
			px, pz, fixed = px|x, pz|z, fixed|s
			if fixed == all {
				break
			}
		}
	}
	g.px[0], g.pz[0], g.fixed[0] = px, pz, fixed
	return fixed == all
}

// accept fixes the letters of the string with words x, z if it agrees with
// the letters fixed so far and touches a free qubit, and reports whether
// every qubit is then fixed.
func (g *Greedy) accept(x, z []uint64) bool {
	if len(x) == 1 {
		s, fixed := x[0]|z[0], g.fixed[0]
		if ((x[0]^g.px[0])|(z[0]^g.pz[0]))&s&fixed == 0 && s&^fixed != 0 {
			g.px[0] |= x[0]
			g.pz[0] |= z[0]
			g.fixed[0] = fixed | s
			return g.fixed[0] == g.rk.all[0]
		}
		return false
	}
	grow := false
	for k := range x {
		s := x[k] | z[k]
		if ((x[k]^g.px[k])|(z[k]^g.pz[k]))&s&g.fixed[k] != 0 {
			return false
		}
		if s&^g.fixed[k] != 0 {
			grow = true
		}
	}
	if !grow {
		return false
	}
	for k := range x {
		g.px[k] |= x[k]
		g.pz[k] |= z[k]
		g.fixed[k] |= x[k] | z[k]
	}
	return g.allFixed()
}

// touchesFree reports whether the qubit set s holds a qubit not fixed yet.
func (g *Greedy) touchesFree(s []uint64) bool {
	for k, f := range g.fixed {
		if s[k]&^f != 0 {
			return true
		}
	}
	return false
}

// entry is a deferred entry of the walk, or a stale entry met by it: a
// rank and a key.
type entry struct {
	key float64
	r   int32
}

// The frontier is a max-heap, in walk order, of the deferred entries.

func (g *Greedy) pushFront(e entry) {
	f := append(g.front, e)
	i := len(f) - 1
	for i > 0 {
		parent := (i - 1) / 2
		if !before(e.key, e.r, f[parent].key, f[parent].r) {
			break
		}
		f[i] = f[parent]
		i = parent
	}
	f[i] = e
	g.front = f
}

func (g *Greedy) popFront() entry {
	f := g.front
	top := f[0]
	last := len(f) - 1
	e := f[last]
	f = f[:last]
	i := 0
	for {
		c := 2*i + 1
		if c >= len(f) {
			break
		}
		if c+1 < len(f) && before(f[c+1].key, f[c+1].r, f[c].key, f[c].r) {
			c++
		}
		if !before(f[c].key, f[c].r, e.key, e.r) {
			break
		}
		f[i] = f[c]
		i = c
	}
	if len(f) > 0 {
		f[i] = e
	}
	g.front = f
	return top
}

func (g *Greedy) allFixed() bool {
	for k, f := range g.fixed {
		if f != g.rk.all[k] {
			return false
		}
	}
	return true
}

// marginalGain is 1/sqrt(N) − 1/sqrt(N+1), the fall of a term's share of
// the objective Σ_i |h_i|/sqrt(N_i) per unit |h_i| when N_i = N ≥ 1 grows by
// one (MATH §5.1).
func marginalGain(n int) float64 {
	return 1/math.Sqrt(float64(n)) - 1/math.Sqrt(float64(n+1))
}

// bump records one more cover of rank r. Its weight falls; the heap entry
// keeps the old, larger key until a walk meets it.
func (g *Greedy) bump(r int32) {
	st := &g.st[r]
	st.cnt++
	n := int(st.cnt)
	for len(g.gain) <= n {
		g.gain = append(g.gain, marginalGain(len(g.gain)))
	}
	st.cur = st.abs * g.gain[n]
}

// push inserts the entry (key, r) with the words of rank r at position j
// of block b and makes b its home.
func (g *Greedy) push(b *block, j int, key float64, r int32) {
	w := g.rk.w
	x, z := g.rk.row(int(r))
	b.key = slices.Insert(b.key, j, key)
	b.r = slices.Insert(b.r, j, r)
	o := 2 * w * j
	b.words = slices.Grow(b.words, 2*w)[:len(b.words)+2*w]
	copy(b.words[o+2*w:], b.words[o:])
	copy(b.words[o:], x)
	copy(b.words[o+w:], z)
	for k := range w {
		b.sup[k] |= x[k] | z[k]
	}
	g.home[r] = b
	b.settle()
}

// move takes rank r, whose entry holds the key old, to its place for its
// current weight.
func (g *Greedy) move(r int32, old float64) {
	w := g.rk.w
	b := g.home[r]
	lo, hi := 0, len(b.r)
	for lo < hi {
		mid := int(uint(lo+hi) >> 1)
		if before(b.key[mid], b.r[mid], old, r) {
			lo = mid + 1
		} else {
			hi = mid
		}
	}
	if lo == len(b.r) || b.r[lo] != r {
		panic("allocate: greedy: entry not found in its block")
	}
	b.key = slices.Delete(b.key, lo, lo+1)
	b.r = slices.Delete(b.r, lo, lo+1)
	b.words = slices.Delete(b.words, 2*w*lo, 2*w*(lo+1))
	b.settle()
	if len(b.r) == 0 && len(g.blocks) > 1 {
		g.blocks = slices.DeleteFunc(g.blocks, func(c *block) bool { return c == b })
	}
	key := g.st[r].cur
	// The first block whose last entry does not come before the new one
	// takes it; if none, the last block.
	bi := len(g.blocks) - 1
	lo, hi = 0, len(g.blocks)
	for lo < hi {
		mid := int(uint(lo+hi) >> 1)
		c := g.blocks[mid]
		if len(c.r) > 0 && before(c.lastK, c.lastR, key, r) {
			lo = mid + 1
		} else {
			hi = mid
		}
	}
	bi = min(lo, bi)
	b = g.blocks[bi]
	lo, hi = 0, len(b.r)
	for lo < hi {
		mid := int(uint(lo+hi) >> 1)
		if before(b.key[mid], b.r[mid], key, r) {
			lo = mid + 1
		} else {
			hi = mid
		}
	}
	g.push(b, lo, key, r)
	if len(b.r) >= 2*blockSize {
		g.split(bi)
	}
}

// split cuts block bi in two halves and recomputes their supports.
func (g *Greedy) split(bi int) {
	w := g.rk.w
	b := g.blocks[bi]
	h := len(b.r) / 2
	c := newBlock(w)
	c.key = append(c.key, b.key[h:]...)
	c.r = append(c.r, b.r[h:]...)
	c.words = append(c.words, b.words[2*w*h:]...)
	b.key, b.r, b.words = b.key[:h], b.r[:h], b.words[:2*w*h]
	for _, d := range []*block{b, c} {
		clear(d.sup)
		d.settle()
		for j, r := range d.r {
			g.home[r] = d
			for k := range w {
				d.sup[k] |= d.words[2*w*j+k] | d.words[2*w*j+w+k]
			}
		}
	}
	g.blocks = slices.Insert(g.blocks, bi+1, c)
}

// Cover implements [Counter].
func (g *Greedy) Cover(dst []int) {
	for r, i := range g.rk.order {
		dst[i] = int(g.st[r].cnt)
	}
}
