package allocate

import (
	"cmp"
	"fmt"
	"math"
	"math/bits"
	"runtime"
	"slices"
	"sync"

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
// The terms are kept in a prefix tree of their support entries (qubit,
// letter), by increasing qubit. Within a setting, the terms of weight k
// through a node at depth d still have u = k − d + 1 free support qubits
// when the node's qubit is fixed, so the node's share of a letter's gain is
// Σ_k (factor of weight k) × (sum of the current weights
// |h_l| exp(−ν·hits_l) of the terms of weight k through it). A node is read
// only when the letters of its ancestors were all chosen: the nodes of depth
// 1 every setting, deeper ones with a probability of about 3^−(d−1). Only
// the sums on the paths of the terms covered by a setting change; they are
// recomputed after the setting, bottom up, each as the sum of its children
// in a fixed order, so that every sum is the same function of the terms'
// weights however many settings updated it. Memory is O(Σ_l k_l) (one node
// and one sum per distinct prefix and weight). Init sorts the terms on up
// to GOMAXPROCS cores; the rest runs on one, and the plan does not depend on
// the number of cores.
//
// Weights are kept relative to the largest; a term whose weight falls below
// about 1e−300 of the largest counts as zero. Derandomized is deterministic
// and implements [Counter]. The zero value is ready to use.
type Derandomized struct {
	// Epsilon is the accuracy parameter ε of the cost; zero means 0.9 (our
	// default, not a value from the paper). It must be positive.
	Epsilon float64

	n, budget int
	t         int     // settings chosen so far
	leaf      []int32 // the class where term l ends, whose sum is the term's
	// weight |h_l| exp(−ν hits_l), rescaled

	// Prefix-tree nodes in breadth-first order, so that the children of a
	// node are consecutive and come after it; the nodes of depth 1 come
	// first, by qubit.
	nodes []trieNode
	top   []int32 // depth-1 nodes on qubit q: top[q]..top[q+1]−1
	// Classes: the terms of one weight through one node. The classes of a
	// node are consecutive, by weight, in the order of the nodes.
	cls    []weightClass
	hits   []int32 // by class, of the classes where a term ends
	parent []int32 // the class of the same weight at the parent node, −1 at depth 1
	under  []int32 // classes one deeper of class c: sub[under[c]:under[c+1]]
	sub    []int32

	pend    [][]pending // pend[q]: nodes on qubit q whose parent matched
	covered []int32     // leaf classes covered by the setting being chosen
	dirty   []bool      // by class
	byDepth [][]int32   // dirty classes by depth

	logg  []float64 // logg[k] = log(1 − (1 − e^−ν)·3^−k)
	f     []float64 // future factor by weight, this setting, relative
	inv3  []float64 // 3^−u
	a     float64   // 1 − e^−ν
	decay float64   // e^−ν
}

// trieNode is a node of the prefix tree: the terms whose first support
// entries are those of the path to it.
type trieNode struct {
	ent      int32 // its support entry, qubit<<2 | letter
	lo, hi   int32 // its classes
	kid, end int32 // its children
	leaf     int32 // the class of the term that ends here, −1 if none (the term itself until the classes are made)
}

// weightClass holds the sum of the weights b of the terms of weight k
// through a node; free = k − depth is the number of their support qubits
// after the node's.
type weightClass struct {
	sum     float64
	k, free int32
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
	// Sort by entries: the terms through a node are then consecutive.
	order := make([]int32, m)
	for l := range order {
		order[l] = int32(l)
	}
	sortTerms(order, func(i, j int32) int {
		if c := slices.Compare(entries(i), entries(j)); c != 0 {
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
			for shared < min(len(p), len(e)) && p[shared] == e[shared] {
				shared++
			}
			if shared == len(e) {
				return fmt.Errorf("allocate: term %d appears twice in the Hamiltonian", l)
			}
		}
		count += len(e) - shared
	}
	// Build the nodes level by level; node w covers order[lo[w]:hi[w]]
	// (kept in its class fields until the classes are made).
	d.nodes = make([]trieNode, 0, count)
	depth := make([]int32, 0, count)
	add := func(dep int, from, to int32) {
		d.nodes = append(d.nodes, trieNode{ent: entries(order[from])[dep-1], lo: from, hi: to, leaf: -1})
		depth = append(depth, int32(dep))
	}
	for i := 0; i < m; {
		j := i + 1
		for j < m && entries(order[j])[0] == entries(order[i])[0] {
			j++
		}
		add(1, int32(i), int32(j))
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
		dep := int(depth[w])
		lo, hi := d.nodes[w].lo, d.nodes[w].hi
		d.nodes[w].kid = int32(len(d.nodes))
		i := lo
		if len(entries(order[i])) == dep {
			d.nodes[w].leaf = order[i] // sorted first: the shortest
			i++
		}
		for i < hi {
			e := entries(order[i])[dep]
			j := i + 1
			for j < hi && entries(order[j])[dep] == e {
				j++
			}
			add(dep+1, i, j)
			i = j
		}
		d.nodes[w].end = int32(len(d.nodes))
	}
	// Classes of every node, by weight: count, then make them.
	seen := make([]int32, maxK+1) // seen[k] = 1 + last node with a term of weight k
	ncls := 0
	for w := range d.nodes {
		for _, l := range order[d.nodes[w].lo:d.nodes[w].hi] {
			k := off[l+1] - off[l]
			if seen[k] != int32(w)+1 {
				seen[k] = int32(w) + 1
				ncls++
			}
		}
	}
	d.cls = make([]weightClass, 0, ncls)
	clear(seen)
	for w := range d.nodes {
		nd := &d.nodes[w]
		first := int32(len(d.cls))
		for _, l := range order[nd.lo:nd.hi] {
			k := off[l+1] - off[l]
			if seen[k] != int32(w)+1 {
				seen[k] = int32(w) + 1
				d.cls = append(d.cls, weightClass{k: k, free: k - depth[w]})
			}
		}
		slices.SortFunc(d.cls[first:], func(x, y weightClass) int { return cmp.Compare(x.k, y.k) })
		nd.lo, nd.hi = first, int32(len(d.cls))
	}
	// Class tree: the classes under class c are those of the same weight
	// at the children of its node, in the order of the children.
	d.parent = make([]int32, len(d.cls))
	for c := range d.parent {
		d.parent[c] = -1
	}
	d.leaf = make([]int32, m)
	at := make([]int32, maxK+1) // class of weight k at the node being read
	for w := range d.nodes {
		nd := d.nodes[w]
		for c := nd.lo; c < nd.hi; c++ {
			at[d.cls[c].k] = c
		}
		if nd.leaf >= 0 {
			d.leaf[nd.leaf] = at[depth[w]]
			d.nodes[w].leaf = at[depth[w]]
		}
		for _, kid := range d.nodes[nd.kid:nd.end] {
			for c := kid.lo; c < kid.hi; c++ {
				d.parent[c] = at[d.cls[c].k]
			}
		}
	}
	d.under = make([]int32, len(d.cls)+1)
	for _, p := range d.parent {
		if p >= 0 {
			d.under[p+1]++
		}
	}
	for c := range d.cls {
		d.under[c+1] += d.under[c]
	}
	d.sub = make([]int32, d.under[len(d.cls)])
	next := append([]int32(nil), d.under[:len(d.cls)]...)
	for c, p := range d.parent {
		if p >= 0 {
			d.sub[next[p]] = int32(c)
			next[p]++
		}
	}
	for l, c := range d.leaf {
		d.cls[c].sum = math.Abs(coef[l]) / maxAbs
	}
	d.hits = make([]int32, len(d.cls))
	d.sumAll()
	d.dirty = make([]bool, len(d.cls))
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

// sortTerms sorts order by less, a total order, on up to GOMAXPROCS cores
// for long lists: runs sorted concurrently, then merged pairwise. A total
// order has one sorted result, so it does not depend on the number of
// cores.
func sortTerms(order []int32, less func(i, j int32) int) {
	workers := min(runtime.GOMAXPROCS(0), len(order)>>14)
	if workers < 2 {
		slices.SortFunc(order, less)
		return
	}
	bounds := make([]int, workers+1)
	for i := range bounds {
		bounds[i] = len(order) * i / workers
	}
	var wg sync.WaitGroup
	for i := range workers {
		wg.Add(1)
		go func(run []int32) {
			defer wg.Done()
			slices.SortFunc(run, less)
		}(order[bounds[i]:bounds[i+1]])
	}
	wg.Wait()
	src, dst := order, make([]int32, len(order))
	for len(bounds) > 2 {
		var next []int
		for i := 0; i+1 < len(bounds); i += 2 {
			lo := bounds[i]
			if i+2 >= len(bounds) {
				copy(dst[lo:], src[lo:bounds[i+1]])
				next = append(next, lo)
				continue
			}
			mid, hi := bounds[i+1], bounds[i+2]
			a, b, k := lo, mid, lo
			for a < mid && b < hi {
				if less(src[b], src[a]) < 0 {
					dst[k] = src[b]
					b++
				} else {
					dst[k] = src[a]
					a++
				}
				k++
			}
			k += copy(dst[k:], src[a:mid])
			copy(dst[k:], src[b:hi])
			next = append(next, lo)
		}
		bounds = append(next, len(order))
		src, dst = dst, src
	}
	copy(order, src)
}

// sumAll computes the sums of all classes but the leaves, deeper ones
// first.
func (d *Derandomized) sumAll() {
	for c := len(d.cls) - 1; c >= 0; c-- {
		if d.cls[c].free > 0 {
			d.resum(int32(c))
		}
	}
}

// resum sets the sum of class c, not a leaf, from the classes under it, in
// their order.
func (d *Derandomized) resum(c int32) {
	v := 0.0
	for _, s := range d.sub[d.under[c]:d.under[c+1]] {
		v += d.cls[s].sum
	}
	d.cls[c].sum = v
}

// share returns node w's share of the gain of its letter (see Next).
func (d *Derandomized) share(w int32) float64 {
	nd := &d.nodes[w]
	v := 0.0
	for _, c := range d.cls[nd.lo:nd.hi] {
		v += c.sum * d.f[c.k] * d.inv3[c.free]
	}
	return v
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
		for w := lo; w < hi; w++ {
			gain[d.nodes[w].ent&3] += d.share(w)
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
	for _, leaf := range d.covered {
		d.hits[leaf]++
		d.cls[leaf].sum *= d.decay
		for c := d.parent[leaf]; c >= 0 && !d.dirty[c]; c = d.parent[c] {
			d.dirty[c] = true
			cl := d.cls[c]
			dep := cl.k - cl.free
			d.byDepth[dep] = append(d.byDepth[dep], c)
		}
	}
	for dep := len(d.byDepth) - 1; dep > 0; dep-- {
		for _, c := range d.byDepth[dep] {
			d.resum(c)
			d.dirty[c] = false
		}
		d.byDepth[dep] = d.byDepth[dep][:0]
	}
	d.t++
	if d.t%64 == 0 {
		top := 0.0
		for _, c := range d.leaf {
			top = max(top, d.cls[c].sum)
		}
		if top > 0 && top < 1e-200 {
			for _, c := range d.leaf {
				d.cls[c].sum /= top
			}
			d.sumAll()
		}
	}
	return 1, nil
}

// match records that node w's letter was chosen while all its ancestors
// matched: the term ending there is covered, and its children join the
// lists of their qubits.
func (d *Derandomized) match(w int32) {
	nd := &d.nodes[w]
	if nd.leaf >= 0 {
		d.covered = append(d.covered, nd.leaf)
	}
	for i := nd.kid; i < nd.end; i++ {
		e := d.nodes[i].ent
		d.pend[e>>2] = append(d.pend[e>>2], pending{val: d.share(i), node: i, letter: uint8(e & 3)})
	}
}

// Cover implements [Counter].
func (d *Derandomized) Cover(dst []int) {
	for l, c := range d.leaf {
		dst[l] = int(d.hits[c])
	}
}
