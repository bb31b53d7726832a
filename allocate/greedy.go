package allocate

import (
	"math"
	"math/bits"

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
// The weights live in a binary max-heap whose stored keys are upper bounds:
// covering a term lowers its true weight at once but leaves its heap entry
// alone. A round walks the heap in descending order through a small
// frontier heap; an entry found stale is put back into the frontier at its
// true weight, and repaired in the heap (one sift-down) after the walk, so
// the walk is exact and costs O(W log W) for W visited entries. Finding the
// terms the setting covers reads only the terms whose two lowest support
// qubits agree with the setting (about a ninth of them; see internal/coverindex),
// O(M⌈n/64⌉/9); recording a cover is O(1). A setting therefore costs
// O(W log W + S log M + M⌈n/64⌉/9) for S stale entries met by the walk;
// memory is O(M⌈n/64⌉).
//
// Greedy is deterministic: it uses no randomness. It implements [Counter].
// The zero value is ready to use.
type Greedy struct {
	// Fill is the letter of the qubits that no accepted term fixes; zero
	// (pauli.I) means Z.
	Fill pauli.Letter

	rk    *ranked
	index *coverindex.Index
	st    []state // per rank, in one cache line: cover count and weights
	tier  float64 // added to |h| for uncovered terms, above every w_i
	heap  []entry // max-heap by (key desc, rank asc); key ≥ cur
	pos   []int32 // heap position of rank r
	front []entry // frontier of the walk, a max-heap
	stale []int32 // ranks found stale by the walk, to repair
	hit   []int32 // scratch: ranks covered by the last setting
	gain  []float64
	px    []uint64 // letters fixed so far
	pz    []uint64
	fixed []uint64 // qubits fixed so far
	uses  []int32  // terms whose support holds qubit q
	left  []int32  // of those, the ones the walk has not processed yet
	spent []uint64 // free qubits with no unprocessed term left

	fx, fz uint64 // symplectic bits of the fill letter, set by Init
}

// state is what a cover changes about a term.
type state struct {
	cur float64 // true weight (tier-shifted for N = 0)
	abs float64 // |h_i|
	cnt int64   // N_i
}

// entry is a heap entry: a term's rank and stored weight, and, in the
// frontier, its position in the heap, or −1 for an entry put back at its
// true weight.
type entry struct {
	key  float64
	r, p int32
}

// before reports whether a comes before b in the walk: larger weight first,
// then lower rank (larger |h_i|, then lower term index).
func before(a, b entry) bool {
	return a.key > b.key || a.key == b.key && a.r < b.r
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
	g.heap = make([]entry, m)
	g.pos = make([]int32, m)
	g.tier = rk.abs[0] // the largest |h|; every w_i ≤ (1−1/√2)|h_i| is below it
	for r := range m {
		// Rank order is descending by key, so it is already a heap.
		g.st[r] = state{cur: rk.abs[r] + g.tier, abs: rk.abs[r]}
		g.heap[r] = entry{key: g.st[r].cur, r: int32(r)}
		g.pos[r] = int32(r)
	}
	g.gain = g.gain[:0]
	w := rk.w
	g.px, g.pz, g.fixed = make([]uint64, w), make([]uint64, w), make([]uint64, w)
	g.spent = make([]uint64, w)
	g.uses, g.left = make([]int32, rk.n), make([]int32, rk.n)
	for r := range m {
		x, z := rk.row(r)
		for q := range supportOf(x, z) {
			g.uses[q]++
		}
	}
	g.front, g.stale = g.front[:0], g.stale[:0]
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
	for k := range w {
		free := rk.all[k] &^ (g.px[k] | g.pz[k])
		g.px[k] |= free & g.fx
		g.pz[k] |= free & g.fz
	}
	writeLetters(dst, g.px, g.pz)
	g.hit = g.index.AppendCovered(g.hit[:0], g.px, g.pz)
	for _, r := range g.hit {
		g.bump(r)
	}
	return 1, nil
}

// walk visits the terms in descending weight and fixes the letters of those
// compatible with the partial setting. It reads the heap without changing
// it, through a frontier heap, then repairs the stale entries it met. It
// stops when every qubit is fixed, or when no term left could fix a free
// qubit (every term holding one has been visited), which gives the same
// setting as walking to the end.
func (g *Greedy) walk() {
	if g.allFixed() {
		return
	}
	rk := g.rk
	w := rk.w
	words := rk.words
	copy(g.left, g.uses)
	clear(g.spent)
	g.front = g.front[:0]
	g.stale = g.stale[:0]
	g.pushFront(0)
	for len(g.front) > 0 {
		e := g.popFront()
		if e.p >= 0 {
			if c := 2*e.p + 1; c < int32(len(g.heap)) {
				g.pushFront(c)
				if c+1 < int32(len(g.heap)) {
					g.pushFront(c + 1)
				}
			}
			if t := g.st[e.r].cur; e.key != t {
				// Stale: the term comes back at its true weight.
				g.stale = append(g.stale, e.r)
				g.pushBack(entry{key: t, r: e.r, p: -1})
				continue
			}
		}
		o := 2 * w * int(e.r)
		exhausted := false
		for k := range w {
			free := (words[o+k] | words[o+w+k]) &^ g.fixed[k]
			for free != 0 {
				q := k<<6 + bits.TrailingZeros64(free)
				free &= free - 1
				if g.left[q]--; g.left[q] == 0 {
					g.spent[k] |= 1 << (q & 63)
					exhausted = true
				}
			}
		}
		ok, grow := true, false
		for k := range w {
			x, z := words[o+k], words[o+w+k]
			s := x | z
			if ((x^g.px[k])|(z^g.pz[k]))&s&g.fixed[k] != 0 {
				ok = false
				break
			}
			if s&^g.fixed[k] != 0 {
				grow = true
			}
		}
		if ok && grow {
			for k := range w {
				x, z := words[o+k], words[o+w+k]
				g.px[k] |= x
				g.pz[k] |= z
				g.fixed[k] |= x | z
			}
			if g.allFixed() {
				break
			}
			exhausted = true
		}
		if exhausted && g.allSpent() {
			break
		}
	}
	for _, r := range g.stale {
		p := g.pos[r]
		g.heap[p].key = g.st[r].cur
		g.siftDown(p)
	}
}

// allSpent reports whether every free qubit has no unprocessed term left.
func (g *Greedy) allSpent() bool {
	for k, f := range g.fixed {
		if g.rk.all[k]&^f&^g.spent[k] != 0 {
			return false
		}
	}
	return true
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

func (g *Greedy) siftDown(i int32) {
	h := g.heap
	n := int32(len(h))
	e := h[i]
	for {
		c := 2*i + 1
		if c >= n {
			break
		}
		if c+1 < n && before(h[c+1], h[c]) {
			c++
		}
		if !before(h[c], e) {
			break
		}
		h[i] = h[c]
		g.pos[h[i].r] = i
		i = c
	}
	h[i] = e
	g.pos[e.r] = i
}

// The frontier is a max-heap of copies of heap entries with their heap
// positions, and of entries put back at their true weight.

func (g *Greedy) pushFront(p int32) {
	e := g.heap[p]
	e.p = p
	g.pushBack(e)
}

func (g *Greedy) pushBack(e entry) {
	f := append(g.front, e)
	i := len(f) - 1
	for i > 0 {
		parent := (i - 1) / 2
		if !before(e, f[parent]) {
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
		if c+1 < len(f) && before(f[c+1], f[c]) {
			c++
		}
		if !before(f[c], e) {
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

// Cover implements [Counter].
func (g *Greedy) Cover(dst []int) {
	for r, i := range g.rk.order {
		dst[i] = int(g.st[r].cnt)
	}
}
