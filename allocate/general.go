package allocate

import (
	"cmp"
	"fmt"
	"math/bits"
	"slices"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/internal/workshare"
	"github.com/shotplan/shotplan/pauli"
)

// SortedGC is sorted insertion into generally commuting groups (Crawford et
// al., "Efficient quantum measurement of Pauli operators in the presence of
// finite sampling error", arXiv:1908.06942; MATH §5.5): the terms are taken
// by |h_i| descending (ties by term index), each joins the first group all
// of whose members it commutes with as operators, and otherwise opens a new
// group. Each group is measured by an entangled setting
// ([pauli.NewFamilySetting]): its diagonalising Clifford circuit, then a Z
// readout. A group that happens to commute qubit-wise becomes a local
// setting, with Z on the qubits no member touches.
//
// The shots are divided among the groups exactly as by [Sorted], with the
// same [Share] rule and largest-remainder rounding; a group whose rounded
// share is 0 is not measured.
//
// # Cost
//
// Each group keeps a reduced basis of the symplectic vectors of its members
// (at most n of them, since the members commute), so testing a term against
// a group costs at most n word-wise symplectic products, whatever the
// group's size: grouping is O(M·G·n·⌈n/64⌉) at worst for G groups, plus
// one [pauli.Diagonalize] per group. The tests of a batch of terms against
// the groups formed before it, and the cover counts of the groups'
// settings, are split among GOMAXPROCS goroutines; the groups and counts do
// not depend on the split. SortedGC implements [Batcher] and [Counter] and
// uses no randomness.
type SortedGC struct {
	// Share selects the weight of a group; the zero value is ShareOneNorm.
	Share Share
	// Proxy, if not nil, replaces Share: group g gets shots in proportion
	// to sqrt(Var_φ(O_g)) in the proxy state φ, O_g = Σ_{i∈g} h_i P_i,
	// floored at ProxyFloor·Σ_{i∈g}|h_i|, one shot per group first
	// (MATH.md §2.4; see [Sorted]). The plan is fixed before any shot, so
	// every certificate of it stays rigorous. Nil keeps the Share rule.
	Proxy Proxy
	// ProxyFloor is ρ of the floor above, in (0, 1]; zero means
	// [DefaultProxyFloor]. ProxyMoment weighs by sqrt(⟨O_g²⟩_φ) instead,
	// as for [Sorted].
	ProxyFloor  float64
	ProxyMoment bool

	groupShots
}

// String returns "sorted-gc".
func (s *SortedGC) String() string { return "sorted-gc" }

// Init implements [Allocator]. It forms the groups and divides the budget.
func (s *SortedGC) Init(h *hamiltonian.Hamiltonian, budget int) error {
	rk := newRanked(h)
	order := make([]int32, len(rk.order))
	fillIota(order)
	return s.init("sorted-gc", h, rk, order, s.Share, s.Proxy, s.ProxyFloor, s.ProxyMoment, budget)
}

// ColorGC is largest-degree-first greedy colouring of the complement of the
// commutation graph (MATH §5.6): two terms are joined when they
// anticommute, the terms are coloured in order of their number of
// anticommuting partners, most first (ties by |h_i| descending, then term
// index), and each takes the smallest colour none of its partners already
// has — that is, it joins the first group all of whose members it commutes
// with. A colour is a generally commuting group, measured by an entangled
// setting as in [SortedGC], with the same [Share] rule and rounding as
// [Sorted].
//
// # Cost
//
// The degrees need every pair, the only quadratic step: they are counted
// 256 pairs at a time by table look-ups, about M²·n/1024 look-ups, split
// among GOMAXPROCS goroutines (the counts are integers, so the result does
// not depend on the split). The colouring then costs, and is split among
// cores, as the grouping of [SortedGC]. ColorGC implements
// [Batcher] and [Counter] and uses no randomness.
type ColorGC struct {
	// Share selects the weight of a group; the zero value is ShareOneNorm.
	Share Share
	// Proxy, if not nil, replaces Share: group g gets shots in proportion
	// to sqrt(Var_φ(O_g)) in the proxy state φ, O_g = Σ_{i∈g} h_i P_i,
	// floored at ProxyFloor·Σ_{i∈g}|h_i|, one shot per group first
	// (MATH.md §2.4; see [Sorted]). The plan is fixed before any shot, so
	// every certificate of it stays rigorous. Nil keeps the Share rule.
	Proxy Proxy
	// ProxyFloor is ρ of the floor above, in (0, 1]; zero means
	// [DefaultProxyFloor]. ProxyMoment weighs by sqrt(⟨O_g²⟩_φ) instead,
	// as for [Sorted].
	ProxyFloor  float64
	ProxyMoment bool

	groupShots
}

// String returns "color-gc".
func (s *ColorGC) String() string { return "color-gc" }

// Init implements [Allocator]. It colours the terms and divides the budget.
func (s *ColorGC) Init(h *hamiltonian.Hamiltonian, budget int) error {
	rk := newRanked(h)
	m := len(rk.order)
	deg := anticommutingDegrees(rk)
	order := make([]int32, m)
	fillIota(order)
	// Ranks already order ties by |h_i| descending, then term index.
	slices.SortStableFunc(order, func(a, b int32) int { return cmp.Compare(deg[b], deg[a]) })
	return s.init("color-gc", h, rk, order, s.Share, s.Proxy, s.ProxyFloor, s.ProxyMoment, budget)
}

// anticommutingDegrees returns, for every rank of rk, the number of other
// ranks whose string anticommutes with it.
//
// The count is bit-sliced. The ranks are cut into blocks of 256; for a
// block, the symplectic vectors (x then z, 128w bit positions) are
// transposed into four 64-bit words per position, bit j for the block's
// j-th member, and the positions are taken 8 at a time into tables of the 256
// XOR combinations of their words (the "four Russians" method). The
// symplectic product of a with every member of the block is the parity of
// (z_a, x_a)·(x_b, z_b), so the XOR of the table entries picked by the bytes
// of (z_a, x_a) holds the 256 parities at once and its popcount is a's count
// against the block. A string commutes with itself, so a's own bit is 0 and
// needs no exclusion. Only the bytes some term uses are looked up. The work
// is M²/256 look-ups of four words per used byte; the blocks are handed out to GOMAXPROCS
// workers, each counting into its own array, and the arrays are summed at
// the end (integer counts, so the result does not depend on the split).
func anticommutingDegrees(rk *ranked) []int32 {
	m, w := len(rk.order), rk.w
	deg := make([]int32, m)
	if m < 2 {
		return deg
	}
	// The bytes of a query (z, x) that can be non-zero: those of the
	// qubits some term touches, in both halves.
	var active []int // byte index into the 2w query words
	for c := range 8 * 2 * w {
		k := c / 8 % w
		if rk.used[k]>>(c%8*8)&0xff != 0 {
			active = append(active, c)
		}
	}
	nc := len(active)
	// qb[a·nc+i] is byte active[i] of a's query (z_a then x_a).
	qb := make([]uint8, m*nc)
	for a := range m {
		x, z := rk.row(a)
		for i, c := range active {
			k := c / 8
			var u uint64
			if k < w {
				u = z[k]
			} else {
				u = x[k-w]
			}
			qb[a*nc+i] = uint8(u >> (c % 8 * 8))
		}
	}
	workers := workshare.Workers(m, 4*64)
	part := make([][]int32, workers)
	workshare.PerWorker(m, 4*64, workers, func(wk int) func(lo, hi int) {
		d := make([]int32, m)
		part[wk] = d
		tab := make([][256][4]uint64, nc)
		var plane [8][4]uint64
		return func(lo, hi int) {
			for i, c := range active {
				k, sh := c/8, c%8*8
				plane = [8][4]uint64{}
				for j := lo; j < hi; j++ {
					v := rk.words[2*w*j+k] >> sh & 0xff
					l, b := (j-lo)>>6, uint((j-lo)&63)
					for v != 0 {
						plane[bits.TrailingZeros64(v)][l] |= 1 << b
						v &= v - 1
					}
				}
				t := &tab[i]
				t[0] = [4]uint64{}
				for bit, p := range plane {
					for s := range 1 << bit {
						u := &t[s]
						t[s|1<<bit] = [4]uint64{u[0] ^ p[0], u[1] ^ p[1], u[2] ^ p[2], u[3] ^ p[3]}
					}
				}
			}
			countBlock(qb, nc, tab, d)
		}
	})
	for _, d := range part {
		for i, v := range d {
			deg[i] += v
		}
	}
	return deg
}

// countBlock adds to d[a] the number of anticommuting members of the block
// whose tables are tab (four words of 64 members per entry), for every
// query a of nc bytes in qb.
func countBlock(qb []uint8, nc int, tab [][256][4]uint64, d []int32) {
	if nc == 0 {
		return
	}
	tab = tab[:nc]
	for a := range d {
		q := qb[a*nc : a*nc+nc]
		var p0, p1, p2, p3 uint64
		for i, c := range q {
			e := &tab[i][c]
			p0 ^= e[0]
			p1 ^= e[1]
			p2 ^= e[2]
			p3 ^= e[3]
		}
		d[a] += int32(bits.OnesCount64(p0) + bits.OnesCount64(p1) + bits.OnesCount64(p2) + bits.OnesCount64(p3))
	}
}

// groupShots holds the groups of a grouping strategy and hands them out
// with their shares, as [Sorted] does.
type groupShots struct {
	groupQueue
	members [][]int // every group's term indices
	cover   []int   // N_i of the measured groups
}

// init groups the ranks of rk, taken in the given order, by general
// commutation, and divides budget by the share rule, or by the proxy's
// variances if px is not nil.
func (g *groupShots) init(name string, h *hamiltonian.Hamiltonian, rk *ranked, order []int32, share Share, px Proxy, floor float64, moment bool, budget int) error {
	if err := share.check(name); err != nil {
		return err
	}
	gs := newCommutingGroups(rk.w)
	var weight []float64
	var ranks [][]int32
	groupOf := gs.assign(rk, order)
	for j, r := range order {
		k := int(groupOf[j])
		if k == len(weight) {
			weight = append(weight, 0)
			ranks = append(ranks, nil)
		}
		ranks[k] = append(ranks[k], r)
		// Relative to the largest |h| (rank 0), so that sums and squares
		// neither overflow nor underflow; the shares are unchanged.
		weight[k] += share.term(rk.abs[r] / rk.abs[0])
	}
	// Every group's setting depends on its members alone: the groups are
	// shared among cores, each setting stored at its group's index, and
	// the error reported is that of the first failing group.
	settings := make([]pauli.Setting, len(ranks))
	errs := make([]error, len(ranks))
	splitEach(len(ranks), func(k int) {
		rs := ranks[k]
		fam := make([]pauli.String, len(rs))
		for j, r := range rs {
			x, z := rk.row(int(r))
			fam[j] = pauli.FromWords(rk.n, x, z)
		}
		settings[k], errs[k] = pauli.NewFamilySetting(fam)
	})
	for k, err := range errs {
		if err != nil {
			return fmt.Errorf("%s: group %d: %w", name, k, err)
		}
	}
	members := membersOf(rk, ranks)
	var quota []int
	if px == nil {
		quota = share.divide(budget, weight)
	} else {
		var err error
		if quota, err = proxyQuota(name, px, floor, moment, h, settings, members, budget); err != nil {
			return err
		}
	}
	g.reset(name, quota)
	for _, st := range settings {
		g.add(st)
	}
	g.members = members
	// Count the covers for [Counter], group by group: a setting may cover
	// terms of other groups. The settings are distinct and mostly
	// entangled, so countCover's deduplication and letter buckets would not
	// pay here.
	g.cover = make([]int, h.Len())
	splitCounts(g.cover, len(g.settings), h.Len(), func() func(int, []int) {
		var idx []int
		return func(j int, dst []int) {
			idx = h.Table().Covered(idx[:0], g.settings[j])
			for _, i := range idx {
				dst[i] += g.shots[j]
			}
		}
	})
	return nil
}

// Cover implements [Counter]: the cover counts of the whole plan.
func (g *groupShots) Cover(dst []int) { copy(dst, g.cover) }

// Members returns, after Init, the term indices of every group, in the
// order the terms joined it. A group's setting covers its members and may
// cover more terms. The slices must not be modified.
func (g *groupShots) Members() [][]int { return g.members }

// commutingGroups is first-fit grouping by general commutation. Each group
// keeps a basis of the span of its members' symplectic vectors, reduced so
// that every basis vector has a pivot bit no other has: by bilinearity of
// the symplectic form a string commutes with every member exactly when it
// commutes with every basis vector, and the basis has at most n vectors.
type commutingGroups struct {
	w     int
	basis [][]uint64 // per group: vectors of 2w words (x then z), back to back
	pivot [][]int32  // per group: pivot bit of each basis vector
	v     []uint64   // scratch
}

func newCommutingGroups(w int) *commutingGroups {
	return &commutingGroups{w: w, v: make([]uint64, 2*w)}
}

// len returns the number of groups.
func (c *commutingGroups) len() int { return len(c.basis) }

// fits reports whether (x, z) commutes with every member of group k.
func (c *commutingGroups) fits(k int, x, z []uint64) bool {
	return c.fitsBasis(c.basis[k], x, z)
}

// fitsBasis reports whether (x, z) commutes with every vector of b, a run
// of basis vectors of 2w words each.
func (c *commutingGroups) fitsBasis(b []uint64, x, z []uint64) bool {
	w := c.w
	if w == 1 {
		x0, z0 := x[0], z[0]
		o := 0
		// Two products at a time, without a branch between them: about
		// half the groups a term meets fail the first.
		for ; o+3 < len(b); o += 4 {
			if (bits.OnesCount64(x0&b[o+1]^z0&b[o])|bits.OnesCount64(x0&b[o+3]^z0&b[o+2]))&1 != 0 {
				return false
			}
		}
		if o+1 < len(b) && bits.OnesCount64(x0&b[o+1]^z0&b[o])&1 != 0 {
			return false
		}
		return true
	}
	for o := 0; o < len(b); o += 2 * w {
		bx, bz := b[o:o+w], b[o+w:o+2*w]
		n := 0
		for i := range w {
			n += bits.OnesCount64(x[i]&bz[i] ^ z[i]&bx[i])
		}
		if n&1 != 0 {
			return false
		}
	}
	return true
}

// first returns the first group that (x, z) commutes with, or len().
func (c *commutingGroups) first(x, z []uint64) int {
	for k := range c.basis {
		if c.fits(k, x, z) {
			return k
		}
	}
	return len(c.basis)
}

// add puts (x, z) into group k (k == len() opens a new group), extending
// its basis if the vector is independent of it.
func (c *commutingGroups) add(k int, x, z []uint64) {
	if k == len(c.basis) {
		c.basis = append(c.basis, nil)
		c.pivot = append(c.pivot, nil)
	}
	w, v := c.w, c.v
	copy(v[:w], x)
	copy(v[w:], z)
	b := c.basis[k]
	for j, p := range c.pivot[k] {
		if v[p>>6]>>(p&63)&1 == 1 {
			row := b[2*w*j : 2*w*(j+1)]
			for i := range v {
				v[i] ^= row[i]
			}
		}
	}
	for i, u := range v {
		if u != 0 {
			c.pivot[k] = append(c.pivot[k], int32(i<<6+bits.TrailingZeros64(u)))
			c.basis[k] = append(b, v...)
			return
		}
	}
}

// assignBatch is the number of terms whose first fit among the groups
// formed before them is searched at once, on all cores.
const assignBatch = 512

// assign puts the ranks of rk in the given order, one after the other,
// into the first group each commutes with (opening a new group if none),
// exactly as first and add called for each in turn would, and returns each one's
// group.
//
// The terms go in batches. First every term of a batch is tested against
// the groups formed before the batch, which do not change meanwhile, the
// terms split among GOMAXPROCS workers: this gives the first such group s
// that it fits, or their number. Then the batch is placed in order on one
// core. Groups only grow, so a term that does not commute with a group
// before the batch does not after it: the term's group is at s or later,
// and the search starts there, testing at s only the basis vectors added
// during the batch. Which core tested what does not change any group.
func (c *commutingGroups) assign(rk *ranked, order []int32) []int32 {
	out := make([]int32, len(order))
	var snap []int
	for lo := 0; lo < len(order); lo += assignBatch {
		hi := min(lo+assignBatch, len(order))
		g0 := c.len()
		snap = snap[:0]
		for _, b := range c.basis {
			snap = append(snap, len(b))
		}
		c.firstAll(rk, order[lo:hi], out[lo:hi])
		for j := lo; j < hi; j++ {
			x, z := rk.row(int(order[j]))
			k := int(out[j])
			for ; k < c.len(); k++ {
				if k == int(out[j]) && k < g0 {
					if c.fitsBasis(c.basis[k][snap[k]:], x, z) {
						break
					}
				} else if c.fits(k, x, z) {
					break
				}
			}
			c.add(k, x, z)
			out[j] = int32(k)
		}
	}
	return out
}

// firstAll sets out[j] to the first group that the rank order[j] fits, or
// len(), splitting the ranks among GOMAXPROCS workers when there are
// groups to test. The groups must not change meanwhile.
func (c *commutingGroups) firstAll(rk *ranked, order []int32, out []int32) {
	chunk := 32
	if c.len() == 0 {
		chunk = len(order) // nothing to test: one chunk, no goroutines
	}
	workshare.Chunks(len(order), chunk, func(lo, hi int) {
		for j := lo; j < hi; j++ {
			x, z := rk.row(int(order[j]))
			out[j] = int32(c.first(x, z))
		}
	})
}

// splitEach calls f(k) for every k in [0, n), the indices handed out one
// at a time to up to GOMAXPROCS goroutines; f must write only what belongs
// to k, so that the result does not depend on the split.
func splitEach(n int, f func(k int)) {
	workshare.Chunks(n, 1, func(k, _ int) { f(k) })
}

// rank returns the dimension of group k's span.
func (c *commutingGroups) rank(k int) int { return len(c.pivot[k]) }
