package allocate

import (
	"math"
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
// S(log M + B)) for W entries read by the walk and S stale entries met;
// memory is O(M⌈n/64⌉). On Hamiltonians whose every qubit lies in the
// support of many terms (Jordan–Wigner molecules), the last free qubits
// often have no compatible term and W approaches M.
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
	return nil
}

// Next implements [Stepper].
func (g *Greedy) Next(dst []pauli.Letter) (int, error) {
	rk := g.rk
	w := rk.w
	// Qubits outside every term's support are fixed from the start, so
	// that the walk can end early.
	for k := range w {
		g.px[k], g.pz[k], g.fixed[k] = 0, 0, rk.all[k]&^rk.used[k]
	}
	g.walk()
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
	g.hit = g.index.AppendCovered(g.hit[:0], g.px, g.pz)
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
func (g *Greedy) walk() {
	g.met, g.front = g.met[:0], g.front[:0]
	if g.allFixed() {
		return
	}
	w := g.rk.w
	nb := len(g.blocks)
	g.tail = append(g.tail[:0], make([]uint64, (nb+1)*w)...)
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
		if g.scan(b) {
			return
		}
	}
	// No later block touches a free qubit; deferred entries still may.
	for len(g.front) > 0 {
		e := g.popFront()
		if g.accept(g.rk.row(int(e.r))) {
			return
		}
	}
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
