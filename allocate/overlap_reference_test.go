package allocate

import (
	"encoding/binary"
	"fmt"
	"math"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/internal/inputcap"
	"github.com/shotplan/shotplan/pauli"
)

// This file keeps the first, unindexed implementation of [Overlap] (a scan
// over every group for every term, one allocation per term of the sweep)
// as the reference the indexed one must reproduce bit for bit: the same
// groups, shots and split weights, since the indexed search, the term-major
// storage and the compacted simplex step only reorder reads, never
// arithmetic.

// refOverlapPlan runs the reference implementation with Overlap's
// defaults and returns its settings, rounded shots and split.
func refOverlapPlan(h *hamiltonian.Hamiltonian, budget int, px Proxy) ([]pauli.Setting, []int, hamiltonian.Split, error) {
	settings, home := refOverlapGroups(h, pauli.Z)
	md, err := refNewSplitModel(h, settings, home, px, 0.01)
	if err != nil {
		return nil, nil, nil, err
	}
	var f []float64
	if px == nil {
		// The worst-case model: no alternation before the rounding, as in
		// Overlap (MATH.md §2.5; TestOverlapWorstCaseAlternationIdle
		// checks on this reference that it would change nothing).
		f = make([]float64, len(settings))
		md.shares(f)
	} else {
		f = md.optimise(50)
	}
	shots := refRoundShares(budget, f)
	total := float64(budget)
	for g, k := range shots {
		f[g] = float64(k) / total
	}
	md.optimiseSplit(f, 50)
	return settings, shots, md.splitOf(settings, shots), nil
}

// refOverlapGroups returns the distinct settings of the overlapping groups
// (see [Overlap]) and every term's home: the group sorted insertion put it
// in, an index into the settings.
func refOverlapGroups(h *hamiltonian.Hamiltonian, fill pauli.Letter) ([]pauli.Setting, []int) {
	rk := newRanked(h)
	n, w, m := rk.n, rk.w, len(rk.order)
	// fits reports whether the term with words x, z agrees with the
	// letters gx, gz on the qubits gm where both act.
	fits := func(x, z, gx, gz, gm []uint64) bool {
		for k := range w {
			if ((x[k]^gx[k])|(z[k]^gz[k]))&(x[k]|z[k])&gm[k] != 0 {
				return false
			}
		}
		return true
	}
	// Sorted insertion: first fit in rank order.
	var gx, gz, gm []uint64
	homeRank := make([]int, m)
	groups := 0
	for r := range m {
		x, z := rk.row(r)
		g := 0
		for ; g < groups; g++ {
			if fits(x, z, gx[g*w:(g+1)*w], gz[g*w:(g+1)*w], gm[g*w:(g+1)*w]) {
				break
			}
		}
		if g == groups {
			gx = append(gx, make([]uint64, w)...)
			gz = append(gz, make([]uint64, w)...)
			gm = append(gm, make([]uint64, w)...)
			groups++
		}
		for k := range w {
			gx[g*w+k] |= x[k]
			gz[g*w+k] |= z[k]
			gm[g*w+k] |= x[k] | z[k]
		}
		homeRank[r] = g
	}
	// Extension: every term, in rank order, that fits a group's letters
	// so far joins it.
	for g := range groups {
		ex, ez, em := gx[g*w:(g+1)*w], gz[g*w:(g+1)*w], gm[g*w:(g+1)*w]
		for r := range m {
			x, z := rk.row(r)
			if !fits(x, z, ex, ez, em) {
				continue
			}
			for k := range w {
				ex[k] |= x[k]
				ez[k] |= z[k]
				em[k] |= x[k] | z[k]
			}
		}
	}
	fx, fz := letterBits(fill)
	index := make(map[string]int)
	of := make([]int, groups)
	var out []pauli.Setting
	for g := range groups {
		x, z := make([]uint64, w), make([]uint64, w)
		for k := range w {
			free := rk.all[k] &^ gm[g*w+k]
			x[k] = gx[g*w+k] | free&fx
			z[k] = gz[g*w+k] | free&fz
		}
		st, err := pauli.NewSetting(pauli.FromWords(n, x, z))
		if err != nil {
			panic("allocate: overlap built an invalid setting") // letters are X, Y or Z on every qubit
		}
		key := st.Key()
		j, ok := index[key]
		if !ok {
			j = len(out)
			index[key] = j
			out = append(out, st)
		}
		of[g] = j
	}
	home := make([]int, m)
	for r, i := range rk.order {
		home[i] = of[homeRank[r]]
	}
	return out, home
}

// refMemberRef places a term in a group: group g, position k among its terms.
type refMemberRef struct{ g, k int32 }

// refSplitModel holds the overlapping groups' terms, their weights α and the
// covariance model of [Overlap] (MATH.md §2.5).
type refSplitModel struct {
	abs     []float64        // |h_i|
	members [][]int          // the terms group g covers, in table order
	alpha   [][]float64      // alpha[g][k] is α of term members[g][k] in group g
	refs    [][]refMemberRef // refs[i] are the groups that cover term i
	// The worst-case model (cov == nil): load[g] = Σ_k |h_i| α_{ig}, and
	// Var(O_g) ≤ load[g]².
	load []float64
	// The proxy's model: cov[g] is the k_g × k_g matrix A_g, row-major,
	// with Var(O_g) = α_gᵀ A_g α_g, and y[g] = A_g α_g.
	cov, y [][]float64
	// Scratch of the per-term solve.
	d, e, a []float64
	idx     []int
}

// refNewSplitModel finds the terms of every group and builds the model. The
// weights start at sorted insertion's partition: each term's whole
// coefficient in its home group.
func refNewSplitModel(h *hamiltonian.Hamiltonian, settings []pauli.Setting, home []int, px Proxy, floor float64) (*refSplitModel, error) {
	tab := h.Table()
	md := &refSplitModel{
		abs:     make([]float64, h.Len()),
		members: make([][]int, len(settings)),
		alpha:   make([][]float64, len(settings)),
		refs:    make([][]refMemberRef, h.Len()),
	}
	for i, c := range h.Coeffs() {
		md.abs[i] = math.Abs(c)
	}
	entries := 0
	for g, st := range settings {
		md.members[g] = tab.Covered(nil, st)
		k := len(md.members[g])
		entries += k * k
		md.alpha[g] = make([]float64, k)
		for j, i := range md.members[g] {
			md.refs[i] = append(md.refs[i], refMemberRef{int32(g), int32(j)})
		}
	}
	for g, terms := range md.members {
		for j, i := range terms {
			if home[i] == g {
				md.alpha[g][j] = 1
			}
		}
	}
	if px == nil {
		md.load = make([]float64, len(settings))
		md.refresh()
		return md, nil
	}
	if entries > maxSplitEntries {
		return nil, fmt.Errorf("the proxy's covariances of the %d groups need %d numbers, more than the limit %d; plan without a proxy (the worst-case model)", len(settings), entries, maxSplitEntries)
	}
	// ⟨P_i P_j⟩ for two strings a local setting covers: they agree where
	// both act, so the product has the phase +1 and the words x_i ⊕ x_j,
	// z_i ⊕ z_j (MATH.md §2.5). A StateProxy gives every expectation of a
	// group at once from the Walsh–Hadamard transform of the setting's Born
	// probabilities, F[m] = ⟨P⟩ for the covered string P of support m
	// (MATH.md §2.3); another proxy is asked string by string, the
	// products cached by their words.
	n, w := h.Qubits(), pauli.Words(h.Qubits())
	expect := func(p pauli.String) (float64, error) {
		e := px.Expect(p)
		if !(math.Abs(e) <= 1+1e-9) {
			return 0, fmt.Errorf("the proxy gives ⟨%s⟩ = %v, outside [−1, 1]", inputcap.Clip(p.String()), e)
		}
		return e, nil
	}
	sp, fast := px.(*StateProxy)
	var born *bornTransform
	var mean []float64
	if fast {
		born = newBornTransform(sp)
	} else {
		mean = make([]float64, h.Len())
		for i := range mean {
			if len(md.refs[i]) > 0 {
				e, err := expect(h.Pauli(i))
				if err != nil {
					return nil, err
				}
				mean[i] = e
			}
		}
	}
	cache := make(map[string]float64)
	key := make([]byte, 16*w)
	px2, pz2 := make([]uint64, w), make([]uint64, w)
	coef := h.Coeffs()
	md.cov = make([][]float64, len(settings))
	md.y = make([][]float64, len(settings))
	var gm []float64 // the group's ⟨P_i⟩
	for g, terms := range md.members {
		k := len(terms)
		a := make([]float64, k*k)
		var f []float64
		gm = gm[:0]
		for _, i := range terms {
			if fast {
				if f == nil {
					f = born.of(settings[g])
				}
				x, z := tab.Words(i)
				gm = append(gm, f[x[0]|z[0]])
			} else {
				gm = append(gm, mean[i])
			}
		}
		for r, i := range terms {
			xi, zi := tab.Words(i)
			a[r*k+r] = coef[i] * coef[i] * ((1-floor)*(1-gm[r]*gm[r]) + floor)
			for c := r + 1; c < k; c++ {
				j := terms[c]
				xj, zj := tab.Words(j)
				var e float64
				if fast {
					e = f[(xi[0]|zi[0])^(xj[0]|zj[0])]
				} else {
					for t := range w {
						px2[t], pz2[t] = xi[t]^xj[t], zi[t]^zj[t]
						binary.LittleEndian.PutUint64(key[16*t:], px2[t])
						binary.LittleEndian.PutUint64(key[16*t+8:], pz2[t])
					}
					var ok bool
					if e, ok = cache[string(key)]; !ok {
						var err error
						if e, err = expect(pauli.FromWords(n, px2, pz2)); err != nil {
							return nil, err
						}
						cache[string(key)] = e
					}
				}
				v := (1 - floor) * coef[i] * coef[j] * (e - gm[r]*gm[c])
				a[r*k+c], a[c*k+r] = v, v
			}
		}
		md.cov[g] = a
		md.y[g] = make([]float64, k)
	}
	md.refresh()
	return md, nil
}

// refresh recomputes load or y from the weights.
func (md *refSplitModel) refresh() {
	for g, terms := range md.members {
		al := md.alpha[g]
		if md.cov == nil {
			s := 0.0
			for j, i := range terms {
				s += md.abs[i] * al[j]
			}
			md.load[g] = s
			continue
		}
		k, a, y := len(terms), md.cov[g], md.y[g]
		for r := range k {
			s := 0.0
			for c, v := range a[r*k : (r+1)*k] {
				s += v * al[c]
			}
			y[r] = s
		}
	}
}

// variance returns the model's Var(O_g).
func (md *refSplitModel) variance(g int) float64 {
	if md.cov == nil {
		return md.load[g] * md.load[g]
	}
	s := 0.0
	for j, v := range md.alpha[g] {
		s += v * md.y[g][j]
	}
	return max(s, 0)
}

// shares sets f_g = sd_g/Σ sd (the optimal fractions for fixed weights,
// MATH.md §2.3) and returns the objective there, (Σ_g sd_g)².
func (md *refSplitModel) shares(f []float64) float64 {
	sum := 0.0
	for g := range f {
		f[g] = math.Sqrt(md.variance(g))
		sum += f[g]
	}
	if sum == 0 {
		for g := range f {
			f[g] = 1 / float64(len(f))
		}
		return 0
	}
	for g := range f {
		f[g] /= sum
	}
	return sum * sum
}

// objective returns Σ_g Var(O_g)/f_g over the groups with f_g > 0.
func (md *refSplitModel) objective(f []float64) float64 {
	s := 0.0
	for g, fg := range f {
		if fg > 0 {
			s += md.variance(g) / fg
		}
	}
	return s
}

// optimise alternates shares and weights (MATH.md §2.5) for at most
// rounds rounds and returns the fractions f_g.
func (md *refSplitModel) optimise(rounds int) []float64 {
	f := make([]float64, len(md.members))
	prev := md.shares(f)
	for range rounds {
		md.sweep(f)
		j := md.shares(f)
		if !(prev-j > 1e-10*prev) {
			break
		}
		prev = j
	}
	return f
}

// optimiseSplit optimises the weights for fixed fractions f, of which
// some may be zero: those groups get no weight.
func (md *refSplitModel) optimiseSplit(f []float64, rounds int) {
	for _, refs := range md.refs {
		sum, act := 0.0, 0
		for _, r := range refs {
			if f[r.g] > 0 {
				sum += md.alpha[r.g][r.k]
				act++
			}
		}
		for _, r := range refs {
			switch {
			case f[r.g] == 0:
				md.alpha[r.g][r.k] = 0
			case sum > 0:
				md.alpha[r.g][r.k] /= sum
			default:
				md.alpha[r.g][r.k] = 1 / float64(act)
			}
		}
	}
	md.refresh()
	prev := md.objective(f)
	for range rounds {
		md.sweep(f)
		j := md.objective(f)
		if !(prev-j > 1e-10*prev) {
			break
		}
		prev = j
	}
}

// sweep replaces, term by term, the weights of every term covered by two
// or more groups with f_g > 0 by their exact minimiser with the other
// terms' weights fixed: with d_g = A_{g,ii}/f_g and
// e_g = (A_g α_g − A_{g,ii} α_{ig})_i / f_g, minimise Σ_g d_g α_g² + 2 e_g α_g
// over α ≥ 0, Σ α = 1 (MATH.md §2.5).
func (md *refSplitModel) sweep(f []float64) {
	md.refresh()
	for i, refs := range md.refs {
		if len(refs) < 2 {
			continue
		}
		md.d, md.e, md.a, md.idx = md.d[:0], md.e[:0], md.a[:0], md.idx[:0]
		for j, r := range refs {
			fg := f[r.g]
			if fg == 0 {
				continue
			}
			al := md.alpha[r.g][r.k]
			var a, b float64
			if md.cov == nil {
				a = md.abs[i] * md.abs[i]
				b = md.abs[i] * (md.load[r.g] - md.abs[i]*al)
			} else {
				k := len(md.members[r.g])
				a = md.cov[r.g][int(r.k)*k+int(r.k)]
				b = md.y[r.g][r.k] - a*al
			}
			md.d = append(md.d, a/fg)
			md.e = append(md.e, b/fg)
			md.idx = append(md.idx, j)
		}
		if len(md.idx) < 2 {
			continue
		}
		md.a = append(md.a, make([]float64, len(md.idx))...)
		refSimplexMin(md.d, md.e, md.a)
		if !refFiniteWeights(md.a) {
			// Only for terms whose coefficient is near zero (1e-16 and
			// below in molecular Bravyi–Kitaev Hamiltonians): d_g ∝ h_i²
			// is then so far below e_g ∝ |h_i| that μ − e_g is lost to
			// rounding. Their weights keep the values they had, which
			// matter to nothing but that term.
			continue
		}
		for t, j := range md.idx {
			md.set(i, refs[j], md.a[t])
		}
	}
}

// refFiniteWeights reports whether every weight is a finite number in [0, 1].
func refFiniteWeights(a []float64) bool {
	for _, v := range a {
		if !(v >= 0 && v <= 1) {
			return false
		}
	}
	return true
}

// set changes α of term i in group r.g to v and updates load or y.
func (md *refSplitModel) set(i int, r refMemberRef, v float64) {
	al := &md.alpha[r.g][r.k]
	dv := v - *al
	if dv == 0 {
		return
	}
	*al = v
	if md.cov == nil {
		md.load[r.g] += md.abs[i] * dv
		return
	}
	k := len(md.members[r.g])
	a, y := md.cov[r.g], md.y[r.g]
	for row := range k {
		y[row] += dv * a[row*k+int(r.k)]
	}
}

// refSimplexMin writes into out the minimiser of Σ_j d_j x_j² + 2 e_j x_j
// over x ≥ 0, Σ_j x_j = 1, for d_j > 0. By the KKT conditions
// x_j = max(0, (μ − e_j)/d_j) with μ such that the x_j add up to one, the
// positive ones being those with e_j < μ (MATH.md §2.5). μ is found by
// shrinking the active set (the method of projection onto the simplex
// attributed to Michelot, 1986, recalled from memory; the argument is
// ours): start with every j active, set μ = (1 + Σ_A e_j/d_j)/(Σ_A 1/d_j),
// drop the j with e_j ≥ μ, repeat until none is dropped. Dropping such a j
// does not raise μ (μ' ≤ μ exactly when e_j ≥ μ), so a dropped j stays out,
// the active j end with e_j < μ, the dropped with e_j ≥ μ: the KKT point.
// The j with the smallest e_j is never dropped (alone it gives
// μ = d_j + e_j > e_j). Each pass is O(k), and there are at most k.
func refSimplexMin(d, e, out []float64) {
	for j := range out {
		out[j] = 1 // 1: active, 0: dropped
	}
	mu := 0.0
	for {
		s1, s2 := 0.0, 0.0
		for j, a := range out {
			if a != 0 {
				s1 += 1 / d[j]
				s2 += e[j] / d[j]
			}
		}
		mu = (1 + s2) / s1
		dropped := false
		for j, a := range out {
			if a != 0 && e[j] >= mu {
				out[j], dropped = 0, true
			}
		}
		if !dropped {
			break
		}
	}
	sum := 0.0
	for j := range out {
		out[j] = max(0, (mu-e[j])/d[j])
		sum += out[j]
	}
	for j := range out {
		out[j] /= sum
	}
}

// refRoundShares rounds budget among the fractions f by largest remainder,
// after one shot to every group with f_g > 0 when the budget allows.
func refRoundShares(budget int, f []float64) []int {
	act := 0
	for _, v := range f {
		if v > 0 {
			act++
		}
	}
	if budget < act {
		return largestRemainder(budget, f)
	}
	out := largestRemainder(budget-act, f)
	for g, v := range f {
		if v > 0 {
			out[g]++
		}
	}
	return out
}

// splitOf returns the split of the measured groups: every term that two
// or more of them cover, with its weights there (those with α > 0),
// normalised to add up to one.
func (md *refSplitModel) splitOf(settings []pauli.Setting, shots []int) hamiltonian.Split {
	sum := make([]float64, len(md.refs))
	split := make([]bool, len(md.refs))
	for i, refs := range md.refs {
		act := 0
		for _, r := range refs {
			if shots[r.g] > 0 {
				act++
				sum[i] += md.alpha[r.g][r.k]
			}
		}
		split[i] = act >= 2 && sum[i] > 0
	}
	var out hamiltonian.Split
	for g, terms := range md.members {
		if shots[g] == 0 {
			continue
		}
		gr := hamiltonian.SplitGroup{Setting: settings[g]}
		for j, i := range terms {
			if v := md.alpha[g][j]; split[i] && v > 0 {
				gr.Terms = append(gr.Terms, i)
				gr.Weights = append(gr.Weights, v/sum[i])
			}
		}
		if len(gr.Terms) > 0 {
			out = append(out, gr)
		}
	}
	return out
}

// RefOverlapPlan exposes the reference to the external tests.
var RefOverlapPlan = refOverlapPlan
