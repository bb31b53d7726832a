package allocate

import (
	"fmt"
	"math"
	"math/bits"
	"slices"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/internal/statevec"
	"github.com/shotplan/shotplan/pauli"
)

// DefaultProxyFloor is the floor of a group's weight, as a fraction of its
// one-norm Σ_{i∈g}|h_i|, that the grouping strategies use with a [Proxy]
// when their ProxyFloor field is zero (MATH.md §2.4).
const DefaultProxyFloor = 0.01

// proxyQuota divides budget among groups for a grouping strategy given a
// proxy (MATH.md §2.4). Group g, measured by settings[g], holds the terms
// members[g]; its weight is
//
//	w_g = max(sqrt(Var_φ(O_g)), ρ·Σ_{i∈g}|h_i|),   O_g = Σ_{i∈g} h_i P_i,
//
// with ρ the floor (DefaultProxyFloor for 0), or with moment the same with
// sqrt(⟨O_g²⟩_φ) = sqrt(Var_φ(O_g) + ⟨O_g⟩_φ²) in place of the standard
// deviation. When budget is at least the
// number of groups G, every group first gets one shot and the other
// budget − G are rounded by [largestRemainder] in proportion to w_g;
// otherwise all of budget is so rounded (and some groups get none).
func proxyQuota(name string, px Proxy, floor float64, moment bool, h *hamiltonian.Hamiltonian, settings []pauli.Setting, members [][]int, budget int) ([]int, error) {
	switch {
	case floor == 0:
		floor = DefaultProxyFloor
	case !(floor > 0 && floor <= 1):
		return nil, fmt.Errorf("%s: proxy floor %g, want a number in (0, 1]", name, floor)
	}
	w, err := proxyWeights(px, floor, moment, h, settings, members)
	if err != nil {
		return nil, fmt.Errorf("%s: %w", name, err)
	}
	if budget < len(w) {
		return largestRemainder(budget, w), nil
	}
	q := largestRemainder(budget-len(w), w)
	for g := range q {
		q[g]++
	}
	return q, nil
}

// proxyWeights returns the weights w_g of [proxyQuota]. The coefficients
// are divided by the largest |h_i| first, so that neither sums nor squares
// overflow or underflow; the shares are unchanged.
func proxyWeights(px Proxy, floor float64, moment bool, h *hamiltonian.Hamiltonian, settings []pauli.Setting, members [][]int) ([]float64, error) {
	coef := h.Coeffs()
	top := 0.0
	for _, c := range coef {
		top = max(top, math.Abs(c))
	}
	vs, err := newProxyVariances(px, h)
	if err != nil {
		return nil, err
	}
	w := make([]float64, len(members))
	c := make([]float64, 0, 16)
	for g, terms := range members {
		c = c[:0]
		one := 0.0
		for _, i := range terms {
			c = append(c, coef[i]/top)
			one += math.Abs(coef[i] / top)
		}
		mean, v := vs.variance(settings[g], terms, c)
		v = max(v, 0)
		if moment {
			v += mean * mean
		}
		w[g] = max(math.Sqrt(v), floor*one)
	}
	return w, nil
}

// proxyVariances computes Var_φ(Σ_j c_j P_{terms[j]}) for groups of
// commuting terms of one Hamiltonian in a proxy state φ, by the fastest
// route the proxy allows:
//
//   - [*StateProxy]: the Born probabilities p(b) of the group's setting,
//     and the group's observable as a function of the outcome,
//     O(b) = Σ_j c_j σ_j (−1)^{|b∧m_j|} (m_j the bits term j is read on,
//     σ_j its sign), which is the Walsh–Hadamard transform of the vector
//     holding c_j σ_j at m_j; then Var = Σ_b p(b) (O(b) − ⟨O⟩)². Cost
//     O(n·2^n + k) per group of k terms (MATH.md §2.3, §2.4).
//   - [BasisProxy]: O|b⟩ = Σ_j c_j P_j|b⟩ with
//     P|b⟩ = i^{|x∧z|}(−1)^{|z∧b|}|b⊕x⟩ (MATH.md §7), so with A_x the sum
//     of the amplitudes the terms with flip pattern x put on |b⊕x⟩,
//     ⟨O²⟩ = Σ_x |A_x|² and ⟨O⟩ = A_0: Var = Σ_{x≠0} |A_x|². Cost
//     O(k log k) word operations, any width.
//   - any other Proxy: Σ_{j,l} c_j c_l Cov_φ(P_j, P_l) by
//     [ProxyCovariance], O(k²) calls of Expect.
type proxyVariances struct {
	px    Proxy
	h     *hamiltonian.Hamiltonian
	state *StateProxy
	basis *BasisProxy
	work  []complex128
	p, d  []float64
	idx   []int
}

// newProxyVariances checks that px fits h.
func newProxyVariances(px Proxy, h *hamiltonian.Hamiltonian) (*proxyVariances, error) {
	n := h.Qubits()
	vs := &proxyVariances{px: px, h: h}
	switch p := px.(type) {
	case *StateProxy:
		if p == nil {
			return nil, fmt.Errorf("proxy: nil *StateProxy")
		}
		if p.n != n {
			return nil, fmt.Errorf("proxy state has %d qubits, the Hamiltonian %d", p.n, n)
		}
		vs.state = p
		vs.work = make([]complex128, len(p.amp))
		vs.p = make([]float64, len(p.amp))
		vs.d = make([]float64, len(p.amp))
	case BasisProxy:
		if err := checkBasisProxy(p, n); err != nil {
			return nil, err
		}
		vs.basis = &p
	case *BasisProxy:
		if p == nil {
			return nil, fmt.Errorf("proxy: nil *BasisProxy")
		}
		if err := checkBasisProxy(*p, n); err != nil {
			return nil, err
		}
		vs.basis = p
	}
	return vs, nil
}

// checkBasisProxy reports an error if b's bits do not fit n qubits.
func checkBasisProxy(b BasisProxy, n int) error {
	w := pauli.Words(n)
	if len(b.Bits) != w || (n&63 != 0 && b.Bits[w-1]>>(n&63) != 0) {
		return fmt.Errorf("proxy basis state does not fit %d qubits", n)
	}
	return nil
}

// variance returns the mean and variance in φ of O = Σ_j c[j] P_{terms[j]};
// s is a setting that covers every term.
func (vs *proxyVariances) variance(s pauli.Setting, terms []int, c []float64) (mean, v float64) {
	switch {
	case vs.state != nil:
		return vs.stateVariance(s, terms, c)
	case vs.basis != nil:
		return vs.basisVariance(terms, c)
	}
	tab := vs.h.Table()
	for j, i := range terms {
		pi := tab.At(i)
		mean += c[j] * vs.px.Expect(pi)
		v += c[j] * c[j] * ProxyCovariance(vs.px, pi, pi)
		for l := j + 1; l < len(terms); l++ {
			v += 2 * c[j] * c[l] * ProxyCovariance(vs.px, pi, tab.At(terms[l]))
		}
	}
	return mean, v
}

func (vs *proxyVariances) stateVariance(s pauli.Setting, terms []int, c []float64) (mean, v float64) {
	tab := vs.h.Table()
	copy(vs.work, vs.state.amp)
	statevec.Rotate(vs.work, s, vs.state.n)
	t := 0.0
	for b, a := range vs.work {
		vs.p[b] = real(a)*real(a) + imag(a)*imag(a)
		t += vs.p[b]
	}
	clear(vs.d)
	for j, i := range terms {
		var mask uint64
		sign := 1.0
		if s.IsLocal() {
			// A local setting reads a term on its support.
			x, z := tab.Words(i)
			mask = x[0] | z[0]
		} else {
			d, sg, ok := s.Diagonal(tab.At(i))
			if !ok {
				panic("allocate: a group's setting does not cover its member")
			}
			_, zz := d.Words()
			mask, sign = zz[0], float64(sg)
		}
		vs.d[mask] += sign * c[j]
	}
	statevec.WalshHadamard(vs.d) // d[b] = O(b)
	for b, pb := range vs.p {
		mean += pb * vs.d[b]
	}
	mean /= t
	for b, pb := range vs.p {
		e := vs.d[b] - mean
		v += pb * e * e
	}
	return mean, v / t
}

func (vs *proxyVariances) basisVariance(terms []int, c []float64) (mean, v float64) {
	tab := vs.h.Table()
	b := vs.basis.Bits
	// Sort the terms by flip pattern x, then sum the amplitudes of each run.
	vs.idx = vs.idx[:0]
	for j := range terms {
		vs.idx = append(vs.idx, j)
	}
	slices.SortFunc(vs.idx, func(a, b int) int {
		xa, _ := tab.Words(terms[a])
		xb, _ := tab.Words(terms[b])
		return slices.Compare(xa, xb)
	})
	for k := 0; k < len(vs.idx); {
		x0, _ := tab.Words(terms[vs.idx[k]])
		var run complex128
		for ; k < len(vs.idx); k++ {
			j := vs.idx[k]
			x, z := tab.Words(terms[j])
			if !slices.Equal(x, x0) {
				break
			}
			// P|b⟩ = i^{|x∧z|} (−1)^{|z∧b|} |b⊕x⟩
			xz, zb := 0, 0
			for w := range x {
				xz += bits.OnesCount64(x[w] & z[w])
				zb += bits.OnesCount64(z[w] & b[w])
			}
			ph := [4]complex128{1, 1i, -1, -1i}[xz&3]
			if zb&1 == 1 {
				ph = -ph
			}
			run += complex(c[j], 0) * ph
		}
		if slices.ContainsFunc(x0, func(u uint64) bool { return u != 0 }) {
			v += real(run)*real(run) + imag(run)*imag(run)
		} else {
			mean = real(run)
		}
	}
	return mean, v
}

// membersOf returns the term indices of every group from the ranks rk
// put into them, each group's in the order its terms joined it.
func membersOf(rk *ranked, ranks [][]int32) [][]int {
	out := make([][]int, len(ranks))
	for g, rs := range ranks {
		out[g] = make([]int, len(rs))
		for j, r := range rs {
			out[g][j] = int(rk.order[r])
		}
	}
	return out
}
