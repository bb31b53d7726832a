package allocate

import (
	"fmt"
	"math"
	"runtime"
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
// O(M) per setting on average, with small constants: qubits are fixed in
// increasing order, so a term still consistent with the letters fixed so
// far waits in the list of its next support qubit, and a term is read only
// at the support qubits it reaches (its first one, then the next with
// probability about 1/3, and so on) instead of at all k_l of them. Terms are
// stored sorted by their first support qubit so that the first reads are
// sequential. The reads of each term at its first support qubit, which do
// not depend on the letters chosen, are summed per qubit before the setting
// is chosen, on several cores for large Hamiltonians, each core taking
// whole qubits so that the plan is the same on any number of cores.
// Memory is O(Σ_l k_l).
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
	// Terms in storage order (sorted by first support qubit); term s is
	// term index[s] of the Hamiltonian.
	index []int32
	b     []float64 // |h_l| exp(−ν hits_l), rescaled
	k     []int32   // weight
	hits  []int32
	off   []int32      // term s's support entries: ent[off[s]:off[s+1]]
	ent   []int32      // qubit<<2 | letter, by increasing qubit
	first []int32      // terms with first support qubit q: first[q]..first[q+1]-1
	wait  [][]waiting  // wait[q]: live terms whose next support qubit is q
	lead  []uint8      // letter of term s on its first support qubit
	logg  []float64    // logg[k] = log(1 − (1 − e^−ν)·3^−k)
	f     []float64    // future factor by weight, this setting, relative
	inv3  []float64    // 3^−u
	lg    [][4]float64 // lg[q]: gains of the terms led by qubit q, this setting
	a     float64      // 1 − e^−ν
	decay float64      // e^−ν
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
	// Counting sort of the terms by first support qubit.
	firstQ := make([]int32, m)
	d.first = make([]int32, n+1)
	for l := range m {
		x, z := t.Words(l)
		for q := range supportOf(x, z) {
			firstQ[l] = int32(q)
			break
		}
		d.first[firstQ[l]+1]++
	}
	for q := range n {
		d.first[q+1] += d.first[q]
	}
	d.index = make([]int32, m)
	next := append([]int32(nil), d.first[:n]...)
	for l := range m {
		d.index[next[firstQ[l]]] = int32(l)
		next[firstQ[l]]++
	}
	d.b = make([]float64, m)
	d.k = make([]int32, m)
	d.hits = make([]int32, m)
	d.off = make([]int32, m+1)
	d.ent = d.ent[:0]
	maxK := 0
	for s, l := range d.index {
		d.b[s] = math.Abs(coef[l]) / maxAbs
		x, z := t.Words(int(l))
		for q := range supportOf(x, z) {
			d.ent = append(d.ent, int32(q)<<2|int32(pauli.LetterAt(x, z, q)))
		}
		d.off[s+1] = int32(len(d.ent))
		d.k[s] = d.off[s+1] - d.off[s]
		maxK = max(maxK, int(d.k[s]))
	}
	d.wait = make([][]waiting, n)
	d.lead = make([]uint8, m)
	for s := range d.lead {
		d.lead[s] = uint8(d.ent[d.off[s]] & 3)
	}
	d.logg = make([]float64, maxK+1)
	d.inv3 = make([]float64, maxK+1)
	for k := range d.logg {
		d.inv3[k] = math.Pow(3, -float64(k))
		d.logg[k] = math.Log1p(-d.a * d.inv3[k])
	}
	d.f = make([]float64, maxK+1)
	return nil
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
	for q := range d.wait {
		d.wait[q] = d.wait[q][:0]
	}
	d.leadGains()
	for q := range d.n {
		// Choosing letter L lowers the cost by a·Σ base_l·3^−(u_l−1) over
		// the live terms with letter L on q (u_l free support qubits, this
		// one included) and contradicts the others, whose factor becomes
		// 1; the common part is the same for every L, so the best letter
		// has the largest gain.
		gain := d.lg[q]
		lo, hi := d.first[q], d.first[q+1]
		wait := d.wait[q]
		for i := range wait {
			gain[wait[i].letter] += wait[i].base * d.inv3[wait[i].u-1]
		}
		best := pauli.X
		for _, c := range []pauli.Letter{pauli.Y, pauli.Z} {
			if gain[c] > gain[best] {
				best = c
			}
		}
		dst[q] = best
		for s := lo; s < hi; s++ {
			if pauli.Letter(d.lead[s]) == best {
				d.advance(waiting{base: d.b[s] * d.f[d.k[s]], e: d.off[s], s: s, u: d.k[s]})
			}
		}
		for i := range wait {
			if pauli.Letter(wait[i].letter) == best {
				d.advance(wait[i])
			}
		}
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
		}
	}
	return 1, nil
}

// leadGains sums, for every qubit q and letter, the gain of the terms whose
// first support qubit is q (see Next), in storage order. These sums do not
// depend on the letters chosen in the setting, so they are computed up
// front, on several cores for large Hamiltonians: each core takes whole
// qubits, so every sum is added in the same order whatever the number of
// cores.
func (d *Derandomized) leadGains() {
	if len(d.lg) != d.n {
		d.lg = make([][4]float64, d.n)
	}
	sum := func(qlo, qhi int) {
		for q := qlo; q < qhi; q++ {
			var gain [4]float64
			for s := d.first[q]; s < d.first[q+1]; s++ {
				k := d.k[s]
				gain[d.lead[s]] += d.b[s] * d.f[k] * d.inv3[k-1]
			}
			d.lg[q] = gain
		}
	}
	workers := min(runtime.GOMAXPROCS(0), d.n)
	m := int(d.first[d.n])
	if workers < 2 || m < 1<<15 {
		sum(0, d.n)
		return
	}
	// Cut the qubits into runs of about m/workers terms.
	var wg sync.WaitGroup
	q := 0
	for i := range workers {
		end := q
		for end < d.n && (i == workers-1 || int(d.first[end]) < m*(i+1)/workers) {
			end++
		}
		wg.Add(1)
		go func(lo, hi int) {
			defer wg.Done()
			sum(lo, hi)
		}(q, end)
		q = end
	}
	wg.Wait()
}

// waiting is a term still consistent with the letters fixed so far in the
// setting being chosen.
type waiting struct {
	base   float64 // b·f[k], its weight in this setting
	e      int32   // index in ent of its support entry on the qubit it waits for
	s      int32   // the term
	u      int32   // support qubits not yet fixed, that one included
	letter uint8   // its letter there
}

// advance records that term w matched the letter of the qubit it waited
// for: it is covered if that was its last support qubit, and waits for its
// next one otherwise.
func (d *Derandomized) advance(w waiting) {
	if w.u == 1 {
		d.hits[w.s]++
		d.b[w.s] *= d.decay
		return
	}
	w.e++
	w.u--
	next := d.ent[w.e]
	w.letter = uint8(next & 3)
	d.wait[next>>2] = append(d.wait[next>>2], w)
}

// Cover implements [Counter].
func (d *Derandomized) Cover(dst []int) {
	for s, c := range d.hits {
		dst[d.index[s]] = int(c)
	}
}
