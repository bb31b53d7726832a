package allocate

import (
	"fmt"
	"math"

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
// O(Σ_l k_l + M) per setting, k_l being the weight of term l: every qubit
// reads the terms whose support contains it, and every term is updated once
// at the end of the setting. Memory is O(Σ_l k_l).
//
// Weights are kept relative to the largest; a term whose weight falls below
// about 1e−300 of the largest counts as zero. Derandomized is deterministic
// and implements [Counter]. The zero value is ready to use.
type Derandomized struct {
	// Epsilon is the accuracy parameter ε of the cost; zero means 0.9 (our
	// default, not a value from the paper). It must be positive.
	Epsilon float64

	n, budget int
	t         int       // settings chosen so far
	b         []float64 // |h_l| exp(−ν hits_l), rescaled
	k         []int32   // weight of term l
	u         []int32   // free support qubits of l in this setting, −1 if contradicted
	hits      []int32
	start     []int32   // qubit q's entries: list[start[q]:start[q+1]]
	list      []int32   // term<<2 | letter
	logg      []float64 // logg[k] = log(1 − (1 − e^−ν)·3^−k)
	f         []float64 // future factor by weight, this setting, relative
	a, decay  float64   // 1 − e^−ν, e^−ν
	inv3      []float64 // 3^−u
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
		return fmt.Errorf("derand: epsilon %v is not a positive number", d.Epsilon)
	}
	nu := eps * eps / 2
	d.decay = math.Exp(-nu)
	d.a = -math.Expm1(-nu)
	d.n, d.budget, d.t = h.Qubits(), budget, 0
	m := h.Len()
	t := h.Table()
	coef := h.Coeffs()
	maxAbs := 0.0
	for _, c := range coef {
		maxAbs = max(maxAbs, math.Abs(c))
	}
	d.b = make([]float64, m)
	d.k = make([]int32, m)
	d.u = make([]int32, m)
	d.hits = make([]int32, m)
	d.start = make([]int32, d.n+1)
	maxK := 0
	for l := range m {
		d.b[l] = math.Abs(coef[l]) / maxAbs
		d.k[l] = int32(t.Weight(l))
		d.u[l] = d.k[l]
		maxK = max(maxK, int(d.k[l]))
		x, z := t.Words(l)
		for q := range supportOf(x, z) {
			d.start[q+1]++
		}
	}
	for q := range d.n {
		d.start[q+1] += d.start[q]
	}
	d.list = make([]int32, d.start[d.n])
	fill := append([]int32(nil), d.start[:d.n]...)
	for l := range m {
		x, z := t.Words(l)
		for q := range supportOf(x, z) {
			d.list[fill[q]] = int32(l)<<2 | int32(letterAt(x, z, q))
			fill[q]++
		}
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

// supportOf iterates over the support of the string with words x, z.
func supportOf(x, z []uint64) func(func(int) bool) {
	return func(yield func(int) bool) {
		for i := range x {
			s := x[i] | z[i]
			for s != 0 {
				if !yield(i<<6 + bitsTrailing(s)) {
					return
				}
				s &= s - 1
			}
		}
	}
}

// Next implements [Allocator].
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
	for q := range d.n {
		entries := d.list[d.start[q]:d.start[q+1]]
		// Choosing letter L lowers the cost by a·Σ base_l·3^−(u_l−1) over
		// the live terms with letter L on q, and contradicts the others
		// (their factor becomes 1); the common part is the same for every L.
		var gain [4]float64
		for _, e := range entries {
			l := e >> 2
			if u := d.u[l]; u > 0 {
				gain[e&3] += d.b[l] * d.f[d.k[l]] * d.inv3[u-1]
			}
		}
		best := pauli.X
		for _, c := range []pauli.Letter{pauli.Y, pauli.Z} {
			if gain[c] > gain[best] {
				best = c
			}
		}
		dst[q] = best
		for _, e := range entries {
			l := e >> 2
			if d.u[l] > 0 {
				if pauli.Letter(e&3) == best {
					d.u[l]--
				} else {
					d.u[l] = -1
				}
			}
		}
	}
	// Terms whose every support qubit matched are covered.
	top = 0
	for l, u := range d.u {
		if u == 0 {
			d.hits[l]++
			d.b[l] *= d.decay
		}
		d.u[l] = d.k[l]
		top = max(top, d.b[l])
	}
	if top > 0 && top < 1e-200 {
		for l := range d.b {
			d.b[l] /= top
		}
	}
	d.t++
	return 1, nil
}

// Cover implements [Counter].
func (d *Derandomized) Cover(dst []int) {
	for l, c := range d.hits {
		dst[l] = int(c)
	}
}
