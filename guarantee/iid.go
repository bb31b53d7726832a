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
// the exact largest range over the support, not an upper bound. The shots
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

// Range returns the interval [h_0 − Width/2, h_0 + Width/2] that every
// single-shot value lies in.
func (d *IID) Range() (lo, hi float64) {
	return d.Offset - d.Dist.Width/2, d.Offset + d.Dist.Width/2
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

// Value returns the single-shot value X of outcome b of Settings[k].
func (d *IID) Value(k int, b pauli.Bits) float64 {
	tab := d.h.Table()
	x := d.Offset
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

// Variance returns Var(X) for a state with the given expectation values
// of the terms' products: second(i, k) must return tr(ρ P_i P_k) for terms
// i and k that some setting of the support covers together (their product
// is then a Pauli string with no phase). It is the exact single-shot
// variance the data-dependent bounds adapt to; tests use it with exact
// expectation values.
func (d *IID) Variance(mean func(i int) float64, second func(i, k int) float64) float64 {
	m2, m1 := 0.0, 0.0
	for k := range d.Settings {
		for a, i := range d.rows[k] {
			m1 += d.Prob[k] * d.coef[k][a] * mean(i)
			for b, j := range d.rows[k] {
				if a == b {
					m2 += d.Prob[k] * d.coef[k][a] * d.coef[k][a]
					continue
				}
				m2 += d.Prob[k] * d.coef[k][a] * d.coef[k][b] * second(i, j)
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
