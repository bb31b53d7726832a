package guarantee

import (
	"fmt"
	"math"
	"math/rand/v2"
	"sort"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/internal/fnvmix"
	"github.com/shotplan/shotplan/pauli"
)

// IID is a plan turned into a distribution π over a finite list of
// settings, from which every shot draws its setting independently
// (MATH.md §4.1). Each shot then gives the single-shot value
//
//	X = h_0 + Σ_{i◁Q, f_i>0} (h_i/f_i) s_i,
//
// with f_i = Σ_Q π(Q) [P_i ◁ Q]. The X of different shots are i.i.d.,
// their mean is E minus the terms π never covers (at most Bias away from
// E), and every X lies in [h_0 − Width/2, h_0 + Width/2] with
//
//	Width = 2 max_{Q: π(Q)>0} Σ_{i◁Q, f_i>0} |h_i|/f_i,
//
// the exact largest range over the support, not an upper bound. With a
// baseline ([IID.WithBaseline]) the value is shifted by constants fixed
// before the shots, keeping its mean (MATH.md §4.11). The shots
// are also ordinary records: the grouped estimator (estimate.Grouped) may
// be run on the same data.
//
// An IID is immutable after construction and safe for concurrent use.
type IID struct {
	// Dist holds the cover probabilities f_i and Width; it is the form
	// [RandomizedBound] takes.
	Dist *Randomized
	// Settings is the support of π: distinct settings, each of positive
	// probability Prob[k]. Prob adds up to 1.
	Settings []pauli.Setting
	Prob     []float64
	// Offset is h_0 and Bias is Σ|h_i| over the terms with f_i = 0.
	Offset, Bias float64

	// base holds the baseline c_i of every term, nil for none
	// ([IID.WithBaseline]); center is Σ_{f_i>0} h_i c_i and shift[k] is
	// Σ_{i◁Q_k, f_i>0} (h_i/f_i) c_i, so that X_c = h_0 + center −
	// shift[k] + Σ (h_i/f_i) s_i. lo and hi are the range of X_c.
	base   []float64
	center float64
	shift  []float64
	lo, hi float64

	h    *hamiltonian.Hamiltonian
	cum  []float64   // cumulative Prob, last entry exactly 1
	rows [][]int     // rows[k]: terms with f_i > 0 that Settings[k] covers
	coef [][]float64 // coef[k][j] = h_i/f_i for i = rows[k][j]
	// For an entangled Settings[k], term rows[k][j] is read as
	// sign[k][j]·(−1)^(parity of b on image[k][j·w:(j+1)·w]), its Z-image
	// through the circuit, found once here rather than on every shot.
	image [][]uint64
	sign  [][]int8
	key   map[string]int
	// fp is the fingerprint of h when the distribution was built: the
	// tables above index h's terms, so a Hamiltonian whose content changed
	// since (overwritten through its pointer) must not be sampled with them.
	fp uint64
}

// NewIID returns the distribution that draws settings[k] with probability
// weights[k]/Σweights. Repeated settings are merged and settings of zero
// weight dropped. It returns an error for lengths that disagree, a setting of
// the wrong width, or weights that are negative, non-finite or all zero.
func NewIID(h *hamiltonian.Hamiltonian, settings []pauli.Setting, weights []float64) (*IID, error) {
	dist, err := MixtureOf(h, settings, weights)
	if err != nil {
		return nil, err
	}
	d := &IID{Dist: dist, Offset: h.Offset(), h: h, key: make(map[string]int), fp: fingerprint(h)}
	total := 0.0
	for _, w := range weights {
		total += w
	}
	d.Settings, d.Prob = pauli.MergeSettings(settings, weights)
	for j, s := range d.Settings {
		d.key[s.Key()] = j
		d.Prob[j] /= total
	}
	for i, f := range dist.Cover {
		if f <= 0 {
			d.Bias += math.Abs(h.Coeff(i))
		}
	}
	tab := h.Table()
	acc := 0.0
	for _, s := range d.Settings {
		var rows []int
		var coef []float64
		var image []uint64
		var sign []int8
		for _, i := range tab.Covered(nil, s) {
			if f := dist.Cover[i]; f > 0 {
				rows = append(rows, i)
				coef = append(coef, h.Coeff(i)/f)
				if !s.IsLocal() {
					z, sg, _ := s.Diagonal(tab.At(i))
					_, zz := z.Words() // a Z-string has no x bits
					image = append(image, zz...)
					sign = append(sign, int8(sg))
				}
			}
		}
		d.rows, d.coef = append(d.rows, rows), append(d.coef, coef)
		d.image, d.sign = append(d.image, image), append(d.sign, sign)
	}
	for k := range d.Prob {
		acc += d.Prob[k]
		d.cum = append(d.cum, acc)
	}
	d.cum[len(d.cum)-1] = 1
	return d, nil
}

// IIDOf turns a plan into the distribution π(Q) = m_Q/N of its settings'
// multiplicities (MATH.md §4.1). It returns an error for a plan of another
// width or without shots.
func IIDOf(h *hamiltonian.Hamiltonian, p *allocate.Plan) (*IID, error) {
	if h == nil || p == nil {
		return nil, fmt.Errorf("guarantee: nil Hamiltonian or plan")
	}
	if p.Qubits != h.Qubits() {
		return nil, fmt.Errorf("guarantee: plan has %d qubits, Hamiltonian has %d", p.Qubits, h.Qubits())
	}
	settings, shots := p.Distinct()
	w := make([]float64, len(shots))
	for k, m := range shots {
		if m < 0 {
			return nil, fmt.Errorf("guarantee: setting %d (%s) has negative shot count %d", k, settings[k], m)
		}
		w[k] = float64(m)
	}
	return NewIID(h, settings, w)
}

// Range returns an interval that every single-shot value lies in:
// [h_0 − Width/2, h_0 + Width/2] without a baseline, and with one
// (MATH.md §4.11)
//
//	[h_0 + C + min_Q(−A_Q − C_Q), h_0 + C + max_Q(A_Q − C_Q)],
//
// A_Q = Σ_{i◁Q, f_i>0} |h_i|/f_i, C_Q = Σ_{i◁Q, f_i>0} (h_i/f_i) c_i and
// C = Σ_{f_i>0} h_i c_i, the minimum and maximum over the support of π.
func (d *IID) Range() (lo, hi float64) {
	if d.base != nil {
		return d.lo, d.hi
	}
	return d.Offset - d.Dist.Width/2, d.Offset + d.Dist.Width/2
}

// WithBaseline returns the distribution d with the baseline shift (a
// control variate, MATH.md §4.11): per-term constants c_i ∈ [−1, 1], fixed
// before any shot (for example ⟨P_i⟩ in a state computed classically, see
// [BaselineOf]), turn the single-shot value into
//
//	X_c = h_0 + Σ_{f_i>0} h_i c_i + Σ_{i◁Q, f_i>0} (h_i/f_i)(s_i − c_i),
//
// which has the same mean as X for every fixed c and the per-term second
// moment 1 − 2c_i⟨P_i⟩ + c_i² instead of 1: when c_i is near ⟨P_i⟩ the
// term's mean no longer enters the variance of X_c. The range of X_c
// ([IID.Range]) may be wider than that of X. Value, Range and Variance of
// the result use X_c; settings, probabilities, cover probabilities and
// bias are those of d. c must have one entry per term of the Hamiltonian;
// entries of terms π never covers are ignored. A nil c returns d without
// a baseline. It returns an error naming the term for a wrong length, a NaN
// or an entry outside [−1, 1].
func (d *IID) WithBaseline(c []float64) (*IID, error) {
	if d == nil || d.h == nil {
		return nil, fmt.Errorf("guarantee: the distribution was not made by NewIID or IIDOf")
	}
	out := *d
	out.base, out.shift, out.center, out.lo, out.hi = nil, nil, 0, 0, 0
	if c == nil {
		return &out, nil
	}
	if err := checkBaseline(d.h, c); err != nil {
		return nil, err
	}
	out.base = append([]float64(nil), c...)
	for i, f := range d.Dist.Cover {
		if f > 0 {
			out.center += d.h.Coeff(i) * c[i]
		}
	}
	out.shift = make([]float64, len(d.Settings))
	out.lo, out.hi = math.Inf(1), math.Inf(-1)
	for k := range d.Settings {
		a, sh := 0.0, 0.0
		for j, i := range d.rows[k] {
			// An entangled setting reads term i as sign·parity: s_i is
			// still ±1, so the same bound holds.
			a += math.Abs(d.coef[k][j])
			sh += d.coef[k][j] * c[i]
		}
		out.shift[k] = sh
		out.lo = min(out.lo, -a-sh)
		out.hi = max(out.hi, a-sh)
	}
	base := d.Offset + out.center
	out.lo, out.hi = base+out.lo, base+out.hi
	return &out, nil
}

// Baseline returns a copy of the baseline c_i of every term, or nil for a
// distribution without one.
func (d *IID) Baseline() []float64 {
	if d.base == nil {
		return nil
	}
	return append([]float64(nil), d.base...)
}

// checkBaseline checks a baseline for h: one entry per term, each in
// [−1, 1].
func checkBaseline(h *hamiltonian.Hamiltonian, c []float64) error {
	if len(c) != h.Len() {
		return fmt.Errorf("guarantee: baseline has %d entries, the Hamiltonian has %d terms", len(c), h.Len())
	}
	for i, v := range c {
		if !(v >= -1 && v <= 1) {
			return fmt.Errorf("guarantee: baseline of term %d (%s) is %v, want a number in [−1, 1]", i, h.Pauli(i), v)
		}
	}
	return nil
}

// BaselineOf returns c_i = ⟨P_i⟩ in the proxy state for every term of h, the
// baseline [IID.WithBaseline] takes: for a basis state (for example the
// Hartree–Fock determinant, [allocate.BasisProxy]) ±1 for a Z-string and 0
// otherwise; for a state vector ([allocate.StateProxy]) the exact
// expectations, at 2^n operations per term. Values within 1e-9 beyond ±1
// (rounding) are clamped to ±1. It returns an error for a nil proxy or a
// proxy value that is NaN or further outside [−1, 1] (naming the term).
func BaselineOf(h *hamiltonian.Hamiltonian, px allocate.Proxy) ([]float64, error) {
	if h == nil || px == nil {
		return nil, fmt.Errorf("guarantee: nil Hamiltonian or proxy")
	}
	// Expect panics on a width mismatch: check the proxies we know.
	switch p := px.(type) {
	case *allocate.StateProxy:
		if p.Qubits() != h.Qubits() {
			return nil, fmt.Errorf("guarantee: the proxy state has %d qubits, the Hamiltonian %d", p.Qubits(), h.Qubits())
		}
	case allocate.BasisProxy:
		if len(p.Bits) < pauli.Words(h.Qubits()) {
			return nil, fmt.Errorf("guarantee: the basis state has %d words, %d qubits need %d", len(p.Bits), h.Qubits(), pauli.Words(h.Qubits()))
		}
	}
	c := make([]float64, h.Len())
	for i := range c {
		c[i] = px.Expect(h.Pauli(i))
		// A state vector's expectation may round to just beyond ±1.
		if v := math.Abs(c[i]); v > 1 && v <= 1+1e-9 {
			c[i] = math.Copysign(1, c[i])
		}
	}
	if err := checkBaseline(h, c); err != nil {
		return nil, err
	}
	return c, nil
}

// Draw returns the index into Settings of one setting drawn from π.
func (d *IID) Draw(rng *rand.Rand) int {
	u := rng.Float64()
	k := sort.SearchFloat64s(d.cum, u)
	// SearchFloat64s finds the first cum ≥ u; a u equal to a cumulative
	// weight belongs to the next setting, whose interval is [cum_{k−1}, cum_k).
	for k < len(d.cum)-1 && d.cum[k] <= u {
		k++
	}
	return k
}

// Index returns the position of s in Settings, or false if π cannot draw
// it.
func (d *IID) Index(s pauli.Setting) (int, bool) {
	k, ok := d.key[s.Key()]
	return k, ok
}

// Value returns the single-shot value X of outcome b of Settings[k] (X_c
// of MATH.md §4.11 for a distribution with a baseline).
func (d *IID) Value(k int, b pauli.Bits) float64 {
	tab := d.h.Table()
	x := d.Offset
	if d.base != nil {
		x += d.center - d.shift[k]
	}
	if !d.Settings[k].IsLocal() {
		// An entangled setting reads each term through its circuit's
		// Z-image, prepared by the constructor.
		w := pauli.Words(d.h.Qubits())
		for j := range d.rows[k] {
			v := float64(d.sign[k][j]) * d.coef[k][j]
			if b.Parity(d.image[k][j*w:(j+1)*w]) == 0 {
				x += v
			} else {
				x -= v
			}
		}
		return x
	}
	for j, i := range d.rows[k] {
		if tab.Parity(i, b) == 0 {
			x += d.coef[k][j]
		} else {
			x -= d.coef[k][j]
		}
	}
	return x
}

// Variance returns Var(X) (Var(X_c) with a baseline) for a state with the
// given expectation values of the terms and of their products: second(i,
// k) must return tr(ρ P_i P_k) for terms i and k that some setting of the
// support covers together (they commute, so P_i P_k is ±C for a Pauli
// string C, and the sign belongs to the value: XX·YY = −ZZ). It is the exact single-shot variance the data-dependent bounds
// adapt to; tests use it with exact expectation values. With a baseline,
// E[(s_i − c_i)(s_k − c_k)] = tr(ρ P_i P_k) − c_i⟨P_k⟩ − c_k⟨P_i⟩ + c_i c_k
// (MATH.md §4.11).
func (d *IID) Variance(mean func(i int) float64, second func(i, k int) float64) float64 {
	m2, m1 := 0.0, 0.0
	c := func(int) float64 { return 0 }
	if d.base != nil {
		c = func(i int) float64 { return d.base[i] }
	}
	for k := range d.Settings {
		for a, i := range d.rows[k] {
			m1 += d.Prob[k] * d.coef[k][a] * (mean(i) - c(i))
			for b, j := range d.rows[k] {
				e := 1.0
				if a != b {
					e = second(i, j)
				}
				e += c(i)*c(j) - c(i)*mean(j) - c(j)*mean(i)
				m2 += d.Prob[k] * d.coef[k][a] * d.coef[k][b] * e
			}
		}
	}
	return m2 - m1*m1
}

// fingerprint hashes h's content (width, offset, coefficients and term
// strings) with 64-bit FNV-1a, so that a plan can tell whether the
// Hamiltonian it is given is, in content, the one it was built for.
func fingerprint(h *hamiltonian.Hamiltonian) uint64 {
	f := fnvmix.New()
	f.Word(uint64(h.Qubits()))
	f.Word(uint64(h.Len()))
	f.Word(math.Float64bits(h.Offset()))
	t := h.Table()
	for i, c := range h.Coeffs() {
		f.Word(math.Float64bits(c))
		x, z := t.Words(i)
		for k := range x {
			f.Word(x[k])
			f.Word(z[k])
		}
	}
	return f.Sum()
}
