package allocate

import (
	"fmt"
	"math"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/internal/coverindex"
	"github.com/shotplan/shotplan/pauli"
)

// maxPairs caps the (setting, pair of covered terms) entries a Moments
// keeps: 4 bytes each.
const maxPairs = coverindex.MaxStored

// Moments collects, from measured shots, estimates of tr(ρ P_i P_k) for the
// pairs of terms that some candidate setting covers together: the data a
// variance-aware allocation needs. Such a pair commutes qubit-wise, so P_i P_k
// is a Pauli string without phase, and every shot whose setting covers both
// terms gives the ±1 sample s_i s_k of it. Shots of any setting may be
// observed; pairs no candidate covers together are ignored.
//
// Observe has the signature of [Observer], so a Moments can read shots as
// they are measured. A Moments is not safe for concurrent use.
type Moments struct {
	h        *hamiltonian.Hamiltonian
	settings []pauli.Setting
	key      map[string]int
	rows     [][]int   // covered terms per candidate
	pairs    [][]int32 // per candidate, pair ids of a < b in rows, row-major
	pairOf   map[[2]int]int32
	pi, pk   []int // the terms of each pair, pi < pk
	sum      []float64
	count    []int
	// si and sk hold, per pair, the sums of s_i and of s_k over the shots
	// that observed the pair: the shifted moment of a pair is estimated
	// from the same shots (MATH.md §4.11).
	si, sk []int32
	// tsum and tcount hold, per term, the sum of its ±1 samples and their
	// number; base is the baseline of SetBaseline, nil for none.
	tsum   []float64
	tcount []int
	base   []float64
	shots  int
	buf    []int8
	cov    []int
}

// NewMoments prepares to collect moments for a distribution over the given
// candidate settings (duplicates merge). It returns an error for a setting
// of the wrong width, no settings, or more covered pairs than it indexes
// (2^27).
func NewMoments(h *hamiltonian.Hamiltonian, settings []pauli.Setting) (*Moments, error) {
	if h == nil {
		return nil, fmt.Errorf("allocate: nil Hamiltonian")
	}
	if len(settings) == 0 {
		return nil, fmt.Errorf("allocate: no candidate settings")
	}
	m := &Moments{h: h, key: make(map[string]int), pairOf: make(map[[2]int]int32)}
	tab := h.Table()
	entries := 0
	for k, s := range settings {
		if s.Qubits() != h.Qubits() {
			return nil, fmt.Errorf("allocate: setting %d (%s) has %d qubits, Hamiltonian has %d", k, s, s.Qubits(), h.Qubits())
		}
		if _, ok := m.key[s.Key()]; ok {
			continue
		}
		rows := tab.Covered(nil, s)
		entries += len(rows) * (len(rows) - 1) / 2
		if entries > maxPairs {
			return nil, fmt.Errorf("allocate: setting %d (%s): more than %d covered pairs", k, s, maxPairs)
		}
		m.key[s.Key()] = len(m.settings)
		m.settings = append(m.settings, s)
		m.rows = append(m.rows, rows)
		ids := make([]int32, 0, len(rows)*(len(rows)-1)/2)
		for a, i := range rows {
			for _, j := range rows[a+1:] {
				id, ok := m.pairOf[[2]int{i, j}]
				if !ok {
					id = int32(len(m.pi))
					m.pairOf[[2]int{i, j}] = id
					m.pi, m.pk = append(m.pi, i), append(m.pk, j)
				}
				ids = append(ids, id)
			}
		}
		m.pairs = append(m.pairs, ids)
	}
	m.sum = make([]float64, len(m.pi))
	m.count = make([]int, len(m.pi))
	m.si = make([]int32, len(m.pi))
	m.sk = make([]int32, len(m.pi))
	m.tsum = make([]float64, h.Len())
	m.tcount = make([]int, h.Len())
	return m, nil
}

// SetBaseline sets the per-term baseline c_i of a shifted single-shot value
// (guarantee.IID.WithBaseline; MATH.md §4.11): from then on
// [Moments.Reweight] and [Moments.SecondMoment] work with the second moment
// of Σ_{i◁Q} (h_i/f_i)(s_i − c_i) instead of Σ_{i◁Q} (h_i/f_i) s_i. The
// slice is copied; nil removes the baseline. It returns an error naming
// the term for a wrong length, a NaN or an entry outside [−1, 1].
func (m *Moments) SetBaseline(c []float64) error {
	if c == nil {
		m.base = nil
		return nil
	}
	if len(c) != m.h.Len() {
		return fmt.Errorf("allocate: baseline has %d entries, the Hamiltonian has %d terms", len(c), m.h.Len())
	}
	for i, v := range c {
		if !(v >= -1 && v <= 1) {
			return fmt.Errorf("allocate: baseline of term %d (%s) is %v, want a number in [−1, 1]", i, m.h.Pauli(i), v)
		}
	}
	m.base = append([]float64(nil), c...)
	return nil
}

// Settings returns the distinct candidate settings, in order of first
// appearance; weights passed to [Moments.Reweight] and
// [Moments.SecondMoment] follow this order.
func (m *Moments) Settings() []pauli.Setting { return m.settings }

// Shots returns the number of shots observed.
func (m *Moments) Shots() int { return m.shots }

// Observe records one shot: setting s gave outcome b. It panics if s has
// the wrong width.
func (m *Moments) Observe(s pauli.Setting, b pauli.Bits) {
	m.shots++
	tab := m.h.Table()
	if q, ok := m.key[s.Key()]; ok {
		rows := m.rows[q]
		m.buf = samples(tab, m.buf, rows, s, b)
		for a, i := range rows {
			m.tsum[i] += float64(m.buf[a])
			m.tcount[i]++
		}
		p := 0
		for a := range rows {
			for c := a + 1; c < len(rows); c++ {
				id := m.pairs[q][p]
				p++
				m.sum[id] += float64(m.buf[a] * m.buf[c])
				m.si[id] += int32(m.buf[a])
				m.sk[id] += int32(m.buf[c])
				m.count[id]++
			}
		}
		return
	}
	m.cov = tab.Covered(m.cov[:0], s)
	m.buf = samples(tab, m.buf, m.cov, s, b)
	for a, i := range m.cov {
		m.tsum[i] += float64(m.buf[a])
		m.tcount[i]++
	}
	for a, i := range m.cov {
		for c := a + 1; c < len(m.cov); c++ {
			if id, ok := m.pairOf[[2]int{i, m.cov[c]}]; ok {
				m.sum[id] += float64(m.buf[a] * m.buf[c])
				m.si[id] += int32(m.buf[a])
				m.sk[id] += int32(m.buf[c])
				m.count[id]++
			}
		}
	}
}

// samples returns the ±1 samples that outcome b of setting s gives rows;
// an entangled setting reads each row through its circuit.
func samples(tab *pauli.Table, buf []int8, rows []int, s pauli.Setting, b pauli.Bits) []int8 {
	if cap(buf) < len(rows) {
		buf = make([]int8, len(rows))
	}
	buf = buf[:len(rows)]
	tab.SettingSamples(buf, rows, s, b)
	return buf
}

// VarianceOptions tunes [Moments.Reweight]. A nil pointer means the
// defaults.
type VarianceOptions struct {
	// Iterations bounds the descent steps; zero means 200.
	Iterations int
	// Floor is the share η of the starting distribution kept in the
	// result, π = η π₀ + (1 − η) ρ: it keeps every cover probability at
	// least η times its starting value, which bounds the single-shot range
	// and limits the damage of a pilot that misjudged a pair. Zero means
	// 0.1; it must lie in [0, 1), and a negative value means none.
	Floor float64
}

// Reweight returns weights over [Moments.Settings] that minimise the
// estimated second moment of the single-shot value of MATH.md §4.1 (§4.6),
//
//	S(π) = Ê[(X − h_0)²] = Σ_i h_i²/f_i + 2 Σ_{i<k} h_i h_k m̂_ik f_ik/(f_i f_k),
//
// where f_i is term i's cover probability, f_ik = Σ_Q π(Q)[i,k ◁ Q] and
// m̂_ik the observed mean of s_i s_k (a pair without data gets the worst
// case sign(h_i h_k)). With a baseline ([Moments.SetBaseline]) S is the
// second moment of the shifted value (MATH.md §4.11): h_i²/f_i becomes
// h_i² d̂_i/f_i with d̂_i = 1 − 2c_i m̂_i + c_i², m̂_i the observed mean of
// s_i, and m̂_ik becomes the observed mean of (s_i − c_i)(s_k − c_k) over
// the shots that saw both (worst cases without data: (1 + |c_i|)² and
// sign(h_i h_k)(1 + |c_i|)(1 + |c_k|)). Since E[X] does not depend on π, minimising S
// minimises Var(X), which is what the data-dependent bounds adapt to, instead
// of the worst-case range of §3.1. The descent is Frank–Wolfe on the
// simplex, started at start (nil means uniform) with floor η: each step
// moves weight γ towards the setting with the most negative partial
// derivative ∂S/∂π(Q), halving γ from 2/(k+2) until S falls, and stops when
// no step helps. Each step costs O(Σ_Q |covered(Q)|²).
//
// Reweight only chooses a distribution. A certificate that uses it must not
// reuse the shots it was estimated from (see guarantee.Anytime).
//
// Candidates of zero starting weight keep zero weight, so the terms start
// covers are the terms the result covers. It returns an error if start has
// the wrong length, a negative or non-finite entry, or no positive one, or
// for a floor of 1 or more.
func (m *Moments) Reweight(start []float64, s *VarianceOptions) ([]float64, error) {
	var o VarianceOptions
	if s != nil {
		o = *s
	}
	if o.Iterations == 0 {
		o.Iterations = 200
	}
	floor := o.Floor
	switch {
	case floor == 0:
		floor = 0.1
	case floor < 0:
		floor = 0
	case floor >= 1 || math.IsNaN(floor):
		return nil, fmt.Errorf("allocate: variance floor %v, want less than 1", o.Floor)
	}
	if o.Iterations < 0 {
		return nil, fmt.Errorf("allocate: %d iterations, want a non-negative number", o.Iterations)
	}
	pi0, err := m.normalise(start)
	if err != nil {
		return nil, err
	}
	ev := m.newEvaluator(pi0, floor)
	rho := append([]float64(nil), pi0...)
	cur := ev.objective(rho)
	trial := make([]float64, len(rho))
	for k := range o.Iterations {
		grad := ev.gradient(rho)
		best := 0
		for q := range grad {
			if grad[q] < grad[best] {
				best = q
			}
		}
		// Directional derivative towards the vertex.
		dir := grad[best]
		for q, r := range rho {
			if r > 0 {
				dir -= r * grad[q]
			}
		}
		if dir >= 0 {
			break
		}
		improved := false
		for gamma := 2 / float64(k+2); gamma > 1e-6; gamma /= 2 {
			for q, r := range rho {
				trial[q] = (1 - gamma) * r
			}
			trial[best] += gamma
			if v := ev.objective(trial); v < cur {
				cur = v
				copy(rho, trial)
				improved = true
				break
			}
		}
		if !improved {
			break
		}
	}
	out := make([]float64, len(rho))
	for q := range rho {
		out[q] = floor*pi0[q] + (1-floor)*rho[q]
	}
	return out, nil
}

// SecondMoment returns S(π) of [Moments.Reweight] for the distribution
// proportional to w, or an error for bad weights.
func (m *Moments) SecondMoment(w []float64) (float64, error) {
	pi, err := m.normalise(w)
	if err != nil {
		return 0, err
	}
	return m.newEvaluator(pi, 0).objective(pi), nil
}

func (m *Moments) normalise(w []float64) ([]float64, error) {
	n := len(m.settings)
	if w == nil {
		w = make([]float64, n)
		for q := range w {
			w[q] = 1
		}
	}
	if len(w) != n {
		return nil, fmt.Errorf("allocate: %d weights for %d candidate settings", len(w), n)
	}
	total := 0.0
	for q, v := range w {
		if !(v >= 0) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("allocate: setting %d (%s): weight %v, want a finite non-negative number", q, m.settings[q], v)
		}
		total += v
	}
	if !(total > 0) {
		return nil, fmt.Errorf("allocate: weights add up to %v, want a positive total", total)
	}
	out := make([]float64, n)
	for q, v := range w {
		out[q] = v / total
	}
	return out, nil
}

// evaluator computes S and its gradient for π = η π₀ + (1 − η) ρ.
type evaluator struct {
	m       *Moments
	pi0     []float64
	floor   float64
	v       []float64 // h_i h_k m̂_ik per pair (shifted with a baseline)
	w       []float64 // h_i² d̂_i per term (h_i² without a baseline)
	f, fik  []float64
	d, pi   []float64
	covered []bool // terms some candidate covers
}

func (m *Moments) newEvaluator(pi0 []float64, floor float64) *evaluator {
	ev := &evaluator{m: m, pi0: pi0, floor: floor,
		v: make([]float64, len(m.pi)), f: make([]float64, m.h.Len()), fik: make([]float64, len(m.pi)),
		d: make([]float64, m.h.Len()), pi: make([]float64, len(pi0)), covered: make([]bool, m.h.Len()),
		w: make([]float64, m.h.Len())}
	// mean returns m̂_i and whether term i has data.
	mean := func(i int) (float64, bool) {
		if m.tcount[i] == 0 {
			return 0, false
		}
		return m.tsum[i] / float64(m.tcount[i]), true
	}
	for i := range ev.w {
		c := m.h.Coeff(i)
		ev.w[i] = c * c
		if m.base == nil {
			continue
		}
		b := m.base[i]
		if mi, ok := mean(i); ok {
			// 1 − 2bm + b² ≥ (1 − |b|)² ≥ 0 for |m| ≤ 1.
			ev.w[i] *= 1 - 2*b*mi + b*b
		} else {
			ev.w[i] *= (1 + math.Abs(b)) * (1 + math.Abs(b))
		}
	}
	for id := range m.pi {
		i, k := m.pi[id], m.pk[id]
		hh := m.h.Coeff(i) * m.h.Coeff(k)
		switch {
		case m.count[id] > 0 && m.base == nil:
			ev.v[id] = hh * m.sum[id] / float64(m.count[id])
		case m.count[id] > 0:
			// The mean of (s_i − c_i)(s_k − c_k) over the pair's own
			// shots: near a reference state both factors are small on
			// most shots, so this is far less noisy than combining means
			// taken over different shots.
			bi, bk, n := m.base[i], m.base[k], float64(m.count[id])
			ev.v[id] = hh * ((m.sum[id]-bi*float64(m.sk[id])-bk*float64(m.si[id]))/n + bi*bk)
		case m.base == nil:
			ev.v[id] = math.Abs(hh)
		default:
			ev.v[id] = math.Abs(hh) * (1 + math.Abs(m.base[i])) * (1 + math.Abs(m.base[k]))
		}
	}
	for q := range m.settings {
		if pi0[q] > 0 {
			for _, i := range m.rows[q] {
				ev.covered[i] = true
			}
		}
	}
	return ev
}

// load sets f and fik for ρ.
func (ev *evaluator) load(rho []float64) {
	m := ev.m
	clear(ev.f)
	clear(ev.fik)
	for q := range rho {
		p := ev.floor*ev.pi0[q] + (1-ev.floor)*rho[q]
		ev.pi[q] = p
		if p == 0 {
			continue
		}
		for _, i := range m.rows[q] {
			ev.f[i] += p
		}
		for _, id := range m.pairs[q] {
			ev.fik[id] += p
		}
	}
}

func (ev *evaluator) objective(rho []float64) float64 {
	ev.load(rho)
	m := ev.m
	s := 0.0
	for i, f := range ev.f {
		if !ev.covered[i] {
			continue
		}
		if f <= 0 {
			return math.Inf(1)
		}
		s += ev.w[i] / f
	}
	for id, v := range ev.v {
		if ev.fik[id] > 0 {
			s += 2 * v * ev.fik[id] / (ev.f[m.pi[id]] * ev.f[m.pk[id]])
		}
	}
	return s
}

// gradient returns ∂S/∂ρ(Q) up to the common factor 1 − η.
func (ev *evaluator) gradient(rho []float64) []float64 {
	ev.load(rho)
	m := ev.m
	clear(ev.d)
	for id, v := range ev.v {
		if ev.fik[id] == 0 {
			continue
		}
		i, k := m.pi[id], m.pk[id]
		t := v * ev.fik[id] / (ev.f[i] * ev.f[k])
		ev.d[i] += t / ev.f[i]
		ev.d[k] += t / ev.f[k]
	}
	// ∂S/∂f_i = −h_i² d_i/f_i² − 2 D_i (d_i = 1 without a baseline).
	for i, f := range ev.f {
		if f > 0 {
			ev.d[i] = -ev.w[i]/(f*f) - 2*ev.d[i]
		}
	}
	g := make([]float64, len(rho))
	for q := range rho {
		if ev.pi0[q] == 0 {
			g[q] = math.Inf(1)
			continue
		}
		sum := 0.0
		for _, i := range m.rows[q] {
			sum += ev.d[i]
		}
		for _, id := range m.pairs[q] {
			sum += 2 * ev.v[id] / (ev.f[m.pi[id]] * ev.f[m.pk[id]])
		}
		g[q] = sum
	}
	return g
}
