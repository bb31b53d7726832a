package allocate

import (
	"cmp"
	"fmt"
	"math"
	"math/bits"
	"slices"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// Derandomized is derandomized classical shadows, weighted by the
// coefficients (Huang, Kueng & Preskill, "Efficient estimation of Pauli
// observables by derandomization", arXiv:2103.07510; MATH §5.2).
//
// With budget N and ν = ε²/2 it minimises the cost
//
//	C = Σ_l |h_l| exp(−ν·hits_l)
//
// over the terms l, hits_l being the number of settings that cover term l.
// Settings are chosen one at a time and, within a setting, qubit 0 first and
// one qubit at a time; each qubit takes the letter that minimises the
// conditional expectation of C when every letter not yet fixed, in this
// setting and in the N − t − 1 settings still to come, is drawn uniformly.
// Under that law a term not yet contradicted in the current setting, with u
// support qubits still free, is covered by it with probability 3^−u, and a
// term of weight k is covered by each future setting with probability 3^−k,
// so its expected factor is
//
//	(1 − (1 − e^−ν)·3^−u) · (1 − (1 − e^−ν)·3^−k)^(N−t−1).
//
// Ties go to X, then Y, then Z.
//
// # Cost
//
// The terms are kept in a prefix tree: one tree per weight k, each term a
// path of its support entries (qubit, letter) by increasing qubit. Within a
// setting the terms through a node at depth d still have u = k − d + 1 free
// support qubits when the node's qubit is fixed, so the node's share of a
// letter's gain is its weight class's factor times the sum of the current
// weights |h_l| exp(−ν·hits_l) of the terms through it. A node is read only
// when the letters of its ancestors were all chosen: the nodes of depth 1
// every setting, deeper ones with a probability of about 3^−(d−1). Only
// the sums of the nodes on the paths of the terms covered by a setting
// change; they are recomputed after the setting, bottom up, each as the sum
// of its children in a fixed order, so that every sum is the same function
// of the terms' weights however many settings updated it. Memory is
// O(Σ_l k_l) (one node per distinct prefix).
//
// Weights are kept relative to the largest; a term whose weight falls below
// about 1e−300 of the largest counts as zero. Derandomized is deterministic
// and implements [Counter]. The zero value is ready to use.
type Derandomized struct {
	// Epsilon is the accuracy parameter ε of the cost; zero means 0.9 (our
	// default, not a value from the paper). It must be positive.
	Epsilon float64

	n, budget int
	t         int // settings chosen so far
	// Terms in storage order (the order of their leaves); term s is term
	// index[s] of the Hamiltonian.
	index []int32
	b     []float64 // |h_l| exp(−ν hits_l), rescaled
	hits  []int32
	leaf  []int32 // the node where term s ends

	// Prefix-tree nodes in breadth-first order, so that the children of a
	// node are consecutive and come after it; the nodes of depth 1 come
	// first, by qubit.
	nodes []trieNode
	top   []int32 // depth-1 nodes on qubit q: top[q]..top[q+1]−1

	pend    [][]pending // pend[q]: nodes on qubit q whose parent matched
	covered []int32     // terms covered by the setting being chosen
	dirty   []bool
	byDepth [][]int32 // dirty nodes by depth

	logg  []float64 // logg[k] = log(1 − (1 − e^−ν)·3^−k)
	f     []float64 // future factor by weight, this setting, relative
	inv3  []float64 // 3^−u
	a     float64   // 1 − e^−ν
	decay float64   // e^−ν
}

// trieNode is a node of the prefix trees: the terms of weight k whose
// first support entries are those of the path to it.
type trieNode struct {
	sum    float64 // Σ b over the terms through the node
	ent    int32   // its support entry, qubit<<2 | letter
	k      int32   // weight of the terms through it
	free   int32   // k − depth: their support qubits after this one
	kid    int32   // first child; −1−s at the leaf of term s
	end    int32   // one past the last child
	parent int32   // −1 at depth 1
}

// pending is a node whose ancestors all matched the letters fixed so far in
// the setting being chosen, with its share of the gain of its letter.
type pending struct {
	val    float64
	node   int32
	letter uint8
}

// String returns "derand".
func (d *Derandomized) String() string { return "derand" }

// Init implements [Allocator].
func (d *Derandomized) Init(h *hamiltonian.Hamiltonian, budget int) error {
	eps := d.Epsilon
	if eps == 0 {
		eps = 0.9
	}
	if !(eps > 0) || math.IsInf(eps, 0) {
		return fmt.Errorf("epsilon %v is not a positive number", d.Epsilon)
	}
	nu := eps * eps / 2
	d.decay = math.Exp(-nu)
	d.a = -math.Expm1(-nu)
	d.n, d.budget, d.t = h.Qubits(), budget, 0
	m, n := h.Len(), h.Qubits()
	t := h.Table()
	coef := h.Coeffs()
	maxAbs := 0.0
	for _, c := range coef {
		maxAbs = max(maxAbs, math.Abs(c))
	}
	if maxAbs == 0 {
		maxAbs = 1
	}
	// Support entries of every term, by increasing qubit.
	off := make([]int32, m+1)
	maxK := 0
	for l := range m {
		x, z := t.Words(l)
		k := 0
		for i := range x {
			k += bits.OnesCount64(x[i] | z[i])
		}
		off[l+1] = off[l] + int32(k)
		maxK = max(maxK, k)
	}
	all := make([]int32, 0, off[m])
	for l := range m {
		x, z := t.Words(l)
		for q := range supportOf(x, z) {
			all = append(all, int32(q)<<2|int32(pauli.LetterAt(x, z, q)))
		}
	}
	entries := func(l int32) []int32 { return all[off[l]:off[l+1]] }
	// Sort by first entry, then weight, then the other entries: the terms
	// through a node are then consecutive.
	order := make([]int32, m)
	for l := range order {
		order[l] = int32(l)
	}
	slices.SortFunc(order, func(i, j int32) int {
		ei, ej := entries(i), entries(j)
		if c := cmp.Compare(ei[0], ej[0]); c != 0 {
			return c
		}
		if c := cmp.Compare(len(ei), len(ej)); c != 0 {
			return c
		}
		if c := slices.Compare(ei[1:], ej[1:]); c != 0 {
			return c
		}
		return cmp.Compare(i, j)
	})
	// A term adds a node for each of its entries after the prefix it
	// shares with the term before it.
	count := 0
	for i, l := range order {
		e := entries(l)
		shared := 0
		if i > 0 {
			p := entries(order[i-1])
			if p[0] == e[0] && len(p) == len(e) {
				shared = 1
				for shared < len(e) && p[shared] == e[shared] {
					shared++
				}
			}
		}
		count += len(e) - shared
	}
	// Build the nodes level by level; node w covers order[lo[w]:hi[w]].
	d.nodes = make([]trieNode, 0, count)
	lo, hi := make([]int32, 0, count), make([]int32, 0, count)
	d.index = make([]int32, 0, m)
	d.leaf = make([]int32, 0, m)
	add := func(parent int32, depth int, from, to int32) {
		l := order[from]
		k := off[l+1] - off[l]
		d.nodes = append(d.nodes, trieNode{ent: entries(l)[depth-1], k: k, free: k - int32(depth), parent: parent})
		lo, hi = append(lo, from), append(hi, to)
	}
	for i := 0; i < m; {
		j := i + 1
		for j < m && entries(order[j])[0] == entries(order[i])[0] && len(entries(order[j])) == len(entries(order[i])) {
			j++
		}
		add(-1, 1, int32(i), int32(j))
		i = j
	}
	d.top = make([]int32, n+1)
	for _, nd := range d.nodes {
		d.top[nd.ent>>2+1]++
	}
	for q := range n {
		d.top[q+1] += d.top[q]
	}
	for w := 0; w < len(d.nodes); w++ {
		nd := &d.nodes[w]
		depth := int(nd.k - nd.free)
		if nd.free == 0 {
			if hi[w]-lo[w] != 1 {
				return fmt.Errorf("allocate: term %d appears twice in the Hamiltonian", order[lo[w]])
			}
			nd.kid = -1 - int32(len(d.index))
			d.index = append(d.index, order[lo[w]])
			d.leaf = append(d.leaf, int32(w))
			continue
		}
		nd.kid = int32(len(d.nodes))
		for i := lo[w]; i < hi[w]; {
			e := entries(order[i])[depth]
			j := i + 1
			for j < hi[w] && entries(order[j])[depth] == e {
				j++
			}
			add(int32(w), depth+1, i, j)
			i = j
		}
		d.nodes[w].end = int32(len(d.nodes))
	}
	d.b = make([]float64, m)
	for s, l := range d.index {
		d.b[s] = math.Abs(coef[l]) / maxAbs
	}
	d.hits = make([]int32, m)
	d.sumAll()
	d.dirty = make([]bool, len(d.nodes))
	d.byDepth = make([][]int32, maxK+1)
	d.pend = make([][]pending, n)
	d.covered = d.covered[:0]
	d.logg = make([]float64, maxK+1)
	d.inv3 = make([]float64, maxK+1)
	for k := range d.logg {
		d.inv3[k] = math.Pow(3, -float64(k))
		d.logg[k] = math.Log1p(-d.a * d.inv3[k])
	}
	d.f = make([]float64, maxK+1)
	return nil
}

// sumAll computes the sums of all nodes, children before parents.
func (d *Derandomized) sumAll() {
	for w := len(d.nodes) - 1; w >= 0; w-- {
		d.resum(int32(w))
	}
}

// resum sets the sum of node w from its term or its children, in their
// order.
func (d *Derandomized) resum(w int32) {
	nd := &d.nodes[w]
	if nd.kid < 0 {
		nd.sum = d.b[-1-nd.kid]
		return
	}
	v := 0.0
	for _, c := range d.nodes[nd.kid:nd.end] {
		v += c.sum
	}
	nd.sum = v
}

// Next implements [Stepper].
func (d *Derandomized) Next(dst []pauli.Letter) (int, error) {
	// Future factor of a term of weight k, relative to the largest over k.
	rest := float64(d.budget - d.t - 1)
	top := math.Inf(-1)
	for k := 1; k < len(d.f); k++ {
		top = max(top, rest*d.logg[k])
	}
	for k := 1; k < len(d.f); k++ {
		d.f[k] = math.Exp(rest*d.logg[k] - top)
	}
	for q := range d.pend {
		d.pend[q] = d.pend[q][:0]
	}
	d.covered = d.covered[:0]
	for q := range d.n {
		// Choosing letter L lowers the cost by a·Σ base_l·3^−(u_l−1) over
		// the live terms with letter L on q (u_l free support qubits, this
		// one included) and contradicts the others, whose factor becomes
		// 1; the common part is the same for every L, so the best letter
		// has the largest gain.
		var gain [4]float64
		lo, hi := d.top[q], d.top[q+1]
		for _, nd := range d.nodes[lo:hi] {
			gain[nd.ent&3] += nd.sum * d.f[nd.k] * d.inv3[nd.free]
		}
		pend := d.pend[q]
		for i := range pend {
			gain[pend[i].letter] += pend[i].val
		}
		best := pauli.X
		for _, c := range []pauli.Letter{pauli.Y, pauli.Z} {
			if gain[c] > gain[best] {
				best = c
			}
		}
		dst[q] = best
		for w := lo; w < hi; w++ {
			if pauli.Letter(d.nodes[w].ent&3) == best {
				d.match(w)
			}
		}
		for i := range pend {
			if pauli.Letter(pend[i].letter) == best {
				d.match(pend[i].node)
			}
		}
	}
	// The covered terms' weights fall; recompute the sums on their paths.
	for _, s := range d.covered {
		d.hits[s]++
		d.b[s] *= d.decay
		for w := d.leaf[s]; w >= 0 && !d.dirty[w]; w = d.nodes[w].parent {
			d.dirty[w] = true
			depth := d.nodes[w].k - d.nodes[w].free
			d.byDepth[depth] = append(d.byDepth[depth], w)
		}
	}
	for depth := len(d.byDepth) - 1; depth > 0; depth-- {
		for _, w := range d.byDepth[depth] {
			d.resum(w)
			d.dirty[w] = false
		}
		d.byDepth[depth] = d.byDepth[depth][:0]
	}
	d.t++
	if d.t%64 == 0 {
		top := 0.0
		for _, v := range d.b {
			top = max(top, v)
		}
		if top > 0 && top < 1e-200 {
			for s := range d.b {
				d.b[s] /= top
			}
			d.sumAll()
		}
	}
	return 1, nil
}

// match records that node w's letter was chosen while all its ancestors
// matched: its term is covered if it is a leaf, and its children join the
// lists of their qubits otherwise.
func (d *Derandomized) match(w int32) {
	nd := &d.nodes[w]
	if nd.kid < 0 {
		d.covered = append(d.covered, -1-nd.kid)
		return
	}
	for i := nd.kid; i < nd.end; i++ {
		c := &d.nodes[i]
		q := c.ent >> 2
		d.pend[q] = append(d.pend[q], pending{
			val:    c.sum * d.f[c.k] * d.inv3[c.free],
			node:   i,
			letter: uint8(c.ent & 3),
		})
	}
}

// Cover implements [Counter].
func (d *Derandomized) Cover(dst []int) {
	for s, c := range d.hits {
		dst[d.index[s]] = int(c)
	}
}
