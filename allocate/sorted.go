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

// Share says how [Sorted] divides the budget among its groups.
type Share int

const (
	// ShareOneNorm gives group g shots in proportion to Σ_{i∈g} |h_i|, the
	// rule optimal for the worst case (MATH §5.5).
	ShareOneNorm Share = iota
	// ShareTwoNorm gives group g shots in proportion to sqrt(Σ_{i∈g} h_i²).
	ShareTwoNorm
)

// check returns an error naming the strategy if s is not a known rule.
func (s Share) check(name string) error {
	if s != ShareOneNorm && s != ShareTwoNorm {
		return fmt.Errorf("%s: unknown share rule %d", name, s)
	}
	return nil
}

// term returns what a term of relative size a adds to its group's sum:
// a for ShareOneNorm, a² for ShareTwoNorm.
func (s Share) term(a float64) float64 {
	if s == ShareTwoNorm {
		return a * a
	}
	return a
}

// divide turns the groups' sums of [Share.term] into their weights (the
// square root for ShareTwoNorm) and rounds budget among them by
// [largestRemainder].
func (s Share) divide(budget int, sum []float64) []int {
	if s == ShareTwoNorm {
		for g := range sum {
			sum[g] = math.Sqrt(sum[g])
		}
	}
	return largestRemainder(budget, sum)
}

// Sorted is sorted insertion into qubit-wise commuting groups with weighted
// shot allocation (Crawford et al., "Efficient quantum measurement of Pauli
// operators in the presence of finite sampling error", arXiv:1908.06942;
// MATH §5.5).
//
// The terms are taken by |h_i| descending (ties by term index); each joins
// the first group all of whose members it commutes with qubit-wise, which is
// the first group whose letters so far agree with it on their common
// support, and otherwise opens a new group. Each group is measured by its
// letters, with Fill on the qubits no member touches.
//
// # Rounding of shots
//
// Group g's share of the budget N is the quota q_g = N·w_g/Σw, with w_g the
// weight of [Share]. The quotas are rounded by the largest-remainder method:
// every group gets ⌊q_g⌋ shots, and the N − Σ⌊q_g⌋ shots left over go one
// each to the groups with the largest fractional parts q_g − ⌊q_g⌋, ties to
// the earlier group. The total is exactly N. A group whose rounded share is 0
// is not measured (this happens when N is small against the number of
// groups). The plan lists the groups in the order they were opened, each
// once, with its shots consecutive.
//
// # Shares from a proxy
//
// With a [Proxy] φ, group g's weight is
//
//	w_g = max(sqrt(Var_φ(O_g)), ρ·Σ_{i∈g}|h_i|),   O_g = Σ_{i∈g} h_i P_i,
//
// the sum over the terms put into group g, and ρ = ProxyFloor. Shares
// ∝ sqrt(Var_φ(O_g)) minimise the variance Σ_g Var_φ(O_g)/m_g of the
// groups' estimates in φ for a fixed total (Cauchy–Schwarz, MATH.md §2.3);
// the floor keeps a group whose proxy variance is zero (the diagonal group
// in a basis state) measured, and costs at most a factor 1/ρ in the
// worst-case variance V of the certificates (MATH.md §2.4). When the budget
// is at least the number G of groups, every group first gets one shot and
// the other budget − G shots are rounded in proportion to w_g as above, so
// no group is left unmeasured. The plan depends only on the Hamiltonian and
// the proxy, never on measured outcomes: it is fixed before any shot, and
// every certificate of it (guarantee.Certify, the data and anytime bounds)
// stays rigorous; a poor proxy costs shots, not correctness.
//
// # Cost
//
// First fit reads, for each term, one word per 64 groups from each of k
// conflict sets, k being the term's weight: the groups that hold a letter
// other than the term's on one of its qubits. Grouping costs O(M·k·G/64)
// for G groups at worst, once; each setting then
// costs O(n) to write out, and the driver counts the covers of the G
// settings. Sorted implements [Batcher] and uses no randomness.
type Sorted struct {
	// Share selects the weight of a group; the zero value is ShareOneNorm.
	Share Share
	// Fill is the letter of qubits no member of a group touches; zero
	// (pauli.I) means Z.
	Fill pauli.Letter
	// Proxy, if not nil, replaces Share by the variance in a state
	// computed classically before any shot (MATH.md §2.4): see "Shares
	// from a proxy" above. Nil keeps the Share rule.
	Proxy Proxy
	// ProxyFloor is ρ of the floor of a group's weight under Proxy, in
	// (0, 1]; zero means [DefaultProxyFloor].
	ProxyFloor float64
	// ProxyMoment, with Proxy, weighs group g by sqrt(⟨O_g²⟩_φ) instead of
	// the standard deviation: the optimal shares when each shot's setting
	// is drawn at random from the plan (guarantee.IIDOf, the anytime
	// route), whose single-shot value does not remove a group's mean
	// (MATH.md §2.4).
	ProxyMoment bool

	groupQueue
	members [][]int
}

// String returns "sorted".
func (s *Sorted) String() string { return "sorted" }

// Init implements [Allocator]. It forms the groups and divides the budget.
func (s *Sorted) Init(h *hamiltonian.Hamiltonian, budget int) error {
	fill, err := fillLetter("sorted", s.Fill)
	if err != nil {
		return err
	}
	if err := s.Share.check("sorted"); err != nil {
		return err
	}
	rk := newRanked(h)
	n, w := rk.n, rk.w
	// Group g's letters so far: gx, gz at g·w, the qubits they touch at gm.
	var gx, gz, gm []uint64
	var weight []float64
	// Word j of conflict set c = 3q+L holds, for groups 64j to 64j+63, the
	// bit of the groups with a letter on qubit q other than letter code L
	// (0, 1, 2 for X, Z, Y): the groups a term with L on q cannot join.
	// Rows of 3n words, one per word of groups, keep a term's reads close.
	var conflict []uint64
	var codes []int32
	var ranks [][]int32
	for r := range rk.order {
		x, z := rk.row(r)
		codes = codes[:0]
		for q := range supportOf(x, z) {
			codes = append(codes, int32(3*q)+letterIndex(x, z, q))
		}
		// X and Y first: in Hamiltonians with long Z strings (Jordan–Wigner)
		// they rule groups out soonest. The order only changes the speed.
		nz := 0
		for i, c := range codes {
			if c%3 != 1 {
				codes[nz], codes[i] = codes[i], codes[nz]
				nz++
			}
		}
		// First fit: the lowest group in no conflict set of the term.
		g := len(weight)
		for j := 0; j*64 < len(weight); j++ {
			row := conflict[3*n*j : 3*n*(j+1)]
			var bad uint64
			for i := 0; i < len(codes) && bad != ^uint64(0); i += 4 {
				for _, c := range codes[i:min(i+4, len(codes))] {
					bad |= row[c]
				}
			}
			if bad != ^uint64(0) {
				g = min(g, j*64+bits.TrailingZeros64(^bad))
				break
			}
		}
		if g == len(weight) {
			gx = append(gx, make([]uint64, w)...)
			gz = append(gz, make([]uint64, w)...)
			gm = append(gm, make([]uint64, w)...)
			weight = append(weight, 0)
			ranks = append(ranks, nil)
			if g%64 == 0 {
				conflict = append(conflict, make([]uint64, 3*n)...)
			}
		}
		row, bit := conflict[3*n*(g/64):3*n*(g/64+1)], uint64(1)<<(g%64)
		for _, c := range codes {
			q := int(c / 3)
			if gm[g*w+q>>6]>>(q&63)&1 == 0 {
				// The group's new letter on q conflicts with the other two.
				for l := range int32(3) {
					if l != c%3 {
						row[3*int32(q)+l] |= bit
					}
				}
			}
		}
		for k := range w {
			gx[g*w+k] |= x[k]
			gz[g*w+k] |= z[k]
			gm[g*w+k] |= x[k] | z[k]
		}
		// Relative to the largest |h| (rank 0), so that sums and squares
		// neither overflow nor underflow; the shares are unchanged.
		weight[g] += s.Share.term(rk.abs[r] / rk.abs[0])
		ranks[g] = append(ranks[g], int32(r))
	}
	fx, fz := letterBits(fill)
	settings := make([]pauli.Setting, len(weight))
	x, z := make([]uint64, w), make([]uint64, w)
	for g := range settings {
		for i := range w {
			free := rk.all[i] &^ gm[g*w+i]
			x[i] = gx[g*w+i] | free&fx
			z[i] = gz[g*w+i] | free&fz
		}
		st, err := pauli.NewSetting(pauli.FromWords(n, x, z))
		if err != nil {
			return fmt.Errorf("group %d: %w", g, err)
		}
		settings[g] = st
	}
	s.members = membersOf(rk, ranks)
	var shots []int
	if s.Proxy == nil {
		shots = s.Share.divide(budget, weight)
	} else if shots, err = proxyQuota("sorted", s.Proxy, s.ProxyFloor, s.ProxyMoment, h, settings, s.members, budget); err != nil {
		return err
	}
	s.reset("sorted", shots)
	for _, st := range settings {
		s.add(st)
	}
	return nil
}

// Members returns, after Init, the term indices of every group, in the
// order the groups were opened (that of [Sorted.Groups]) and, within a
// group, the order the terms joined it. A group's setting covers its
// members and may cover more terms. The slices must not be modified.
func (s *Sorted) Members() [][]int { return s.members }

// largestRemainder divides total among the weights in proportion, rounding
// by the largest-remainder method (ties to the lower index). The result sums
// to total.
func largestRemainder(total int, weight []float64) []int {
	// Scale by the largest weight first, so that neither the sum nor
	// total·v overflows for weights near the float64 limit.
	top := 0.0
	for _, v := range weight {
		top = max(top, v)
	}
	sum := 0.0
	for _, v := range weight {
		sum += v / top
	}
	out := make([]int, len(weight))
	frac := make([]float64, len(weight))
	given := 0
	for g, v := range weight {
		q := float64(total) * (v / top / sum)
		out[g] = int(math.Floor(q))
		frac[g] = q - math.Floor(q)
		given += out[g]
	}
	idx := make([]int, len(weight))
	for g := range idx {
		idx[g] = g
	}
	slices.SortStableFunc(idx, func(a, b int) int { return cmp.Compare(frac[b], frac[a]) })
	for k := 0; given < total; k++ {
		out[idx[k%len(idx)]]++
		given++
	}
	return out
}

// groupQueue holds the groups of a grouping strategy with their rounded
// shares and hands out those with shots, in the order opened, each once.
type groupQueue struct {
	name     string
	groups   []pauli.Setting // every group's setting, in the order opened
	quota    []int           // every group's rounded share, possibly 0
	settings []pauli.Setting // the groups with shots
	shots    []int
	next     int
}

// reset empties the queue for groups with the given rounded shares, whose
// settings [groupQueue.add] then appends in order.
func (q *groupQueue) reset(name string, quota []int) {
	q.name, q.quota = name, quota
	q.groups, q.settings, q.shots, q.next = q.groups[:0], q.settings[:0], q.shots[:0], 0
}

// add appends the setting of the next group; it is measured if its share
// is not 0.
func (q *groupQueue) add(st pauli.Setting) {
	k := q.quota[len(q.groups)]
	q.groups = append(q.groups, st)
	if k == 0 {
		return
	}
	q.settings = append(q.settings, st)
	q.shots = append(q.shots, k)
}

// NextBatch implements [Batcher]: every group with its shots at once.
func (q *groupQueue) NextBatch(settings []pauli.Setting, shots []int, remaining int) ([]pauli.Setting, []int, error) {
	if q.next >= len(q.settings) {
		return settings, shots, fmt.Errorf("%s: all %d groups already given", q.name, len(q.settings))
	}
	settings = append(settings, q.settings[q.next:]...)
	shots = append(shots, q.shots[q.next:]...)
	q.next = len(q.settings)
	return settings, shots, nil
}

// Groups returns, after Init, the setting of every group in the order the
// groups were opened and its rounded share of the budget, which is 0 for a
// group that is not measured. The slices must not be modified.
func (q *groupQueue) Groups() ([]pauli.Setting, []int) { return q.groups, q.quota }

// letterIndex returns 0, 1, 2 for the letter X, Z, Y of qubit q in the
// words x, z (−1 for I).
func letterIndex(x, z []uint64, q int) int32 {
	return int32(x[q>>6]>>(q&63)&1|(z[q>>6]>>(q&63)&1)<<1) - 1
}
