package estimate

import (
	"fmt"
	"math"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/internal/coverindex"
	"github.com/shotplan/shotplan/pauli"
)

// TermMask appends to dst the qubits that term i of t is read from under
// setting s, which must cover it, as pauli.Words(n) words, and returns
// the sign of the read: the sample is sign·(−1)^(parity of the outcome on
// the mask). For a local setting the mask is the term's support and the
// sign +1; for an entangled setting the mask is the support of the term's
// Z-image after the setting's circuit. Readout error acts on the measured
// bits, so readout mitigation of a term is a product over its mask
// (MATH.md §2.1.1).
func TermMask(dst []uint64, t *pauli.Table, i int, s pauli.Setting) ([]uint64, float64) {
	if s.IsLocal() {
		x, z := t.Words(i)
		for k := range x {
			dst = append(dst, x[k]|z[k])
		}
		return dst, 1
	}
	z, sign, _ := s.Diagonal(t.At(i))
	_, zw := z.Words()
	return append(dst, zw...), float64(sign)
}

// Mitigated returns the grouped estimate of MATH.md §2 with every sample
// replaced by its readout-mitigated value ([Mitigation.Sample]; MATH.md
// §2.1.1): term i's mean is the average over the N_i shots covering it of
// sign·Π_{q∈mask} f_q(r_q), for local and entangled settings alike.
// Result.ReadoutBias bounds the bias the mitigation leaves when the true
// rates lie in the mitigation's boxes: Σ_Q m_Q Σ_{i◁Q} (|h_i|/N_i)·
// [Mitigation.Bias] of the term's mask in Q. Result.Bias holds the
// uncovered and excluded terms as for [Grouped].
//
// The standard error is that of [Grouped] on the mitigated per-shot
// contributions, except that a distinct setting measured once contributes
// the square of its largest possible contribution (it has no spread of its
// own to measure). Options.Readout must be nil (m replaces it) and
// Options.Batches is ignored.
func Mitigated(h *hamiltonian.Hamiltonian, rec *Records, m *Mitigation, opts *Options) (*Result, error) {
	if opts != nil && opts.Readout != nil {
		return nil, fmt.Errorf("estimate: %w: Mitigated: Options.Readout and a Mitigation both given", ErrFormat)
	}
	c, err := newConfig(h, rec, opts, "Mitigated")
	if err != nil {
		return nil, err
	}
	if m == nil {
		return nil, fmt.Errorf("estimate: nil mitigation")
	}
	if m.Qubits() != h.Qubits() {
		return nil, fmt.Errorf("estimate: %w: Mitigated: mitigation of %d qubits for %d", ErrFormat, m.Qubits(), h.Qubits())
	}
	mt := h.Len()
	coef := h.Coeffs()
	gr := newMaskGroups(h, m)
	res := &Result{Means: make([]float64, mt), Cover: make([]int, mt), Shots: rec.Len(), Energy: h.Offset()}
	// Pass 1: cover counts and sums of the mitigated samples. The covered
	// terms of a group are found again in pass 2 rather than stored, so
	// memory stays O(terms + shots).
	for g := range rec.Groups() {
		t := rec.GroupLen(g)
		gr.load(rec.Setting(g))
		for j, i := range gr.rows {
			res.Cover[i] += t
			sum := 0.0
			for s := range t {
				sum += gr.sample(j, rec.Outcome(g, s))
			}
			res.Means[i] += sum
		}
	}
	a := make([]float64, mt)
	for i := range mt {
		if res.Cover[i] == 0 {
			res.Means[i] = math.NaN()
			continue
		}
		res.Means[i] /= float64(res.Cover[i])
		if !c.excluded(i) {
			a[i] = coef[i] / float64(res.Cover[i])
			res.Energy += coef[i] * res.Means[i]
		}
	}
	// Pass 2: readout bias, and the spread of the per-shot contributions.
	vsum := 0.0
	var z []float64
	for g := range rec.Groups() {
		t := rec.GroupLen(g)
		gr.load(rec.Setting(g))
		top := 0.0
		if cap(z) < t {
			z = make([]float64, t)
		}
		z = z[:t]
		clear(z)
		for j, i := range gr.rows {
			if a[i] == 0 {
				continue
			}
			half, bias := gr.bounds(j)
			res.ReadoutBias += float64(t) * math.Abs(a[i]) * bias
			top += math.Abs(a[i]) * half
			if t > 1 {
				for s := range t {
					z[s] += a[i] * gr.sample(j, rec.Outcome(g, s))
				}
			}
		}
		if t == 1 {
			vsum += top * top // no spread to measure: the largest possible
			continue
		}
		vsum += float64(t) * sampleVariance(z)
	}
	res.StdErr = math.Sqrt(vsum)
	readoutBias := res.ReadoutBias
	c.finish(h, res, func(i int) bool { return res.Cover[i] == 0 })
	res.ReadoutBias = readoutBias
	return res, nil
}

// maskGroups finds, setting by setting, the covered terms with the masks
// they are read on: local settings through a cover index and each term's
// support (with the term's range and bias bounds computed once), entangled
// settings by testing every term and reading its Z-image.
type maskGroups struct {
	t         *pauli.Table
	m         *Mitigation
	w         int
	index     *coverindex.Index
	localHalf []float64 // per term, for local settings (mask = support)
	localBias []float64
	found     []int32
	rows      []int
	local     bool
	masks     []uint64 // entangled: w words per row
	signs     []float64
	supp      []uint64 // per term support words, w per term
}

func newMaskGroups(h *hamiltonian.Hamiltonian, m *Mitigation) *maskGroups {
	t := h.Table()
	w := pauli.Words(h.Qubits())
	g := &maskGroups{t: t, m: m, w: w, index: coverindex.New(h.Qubits(), t.Len(), t.Words),
		localHalf: make([]float64, t.Len()), localBias: make([]float64, t.Len()), supp: make([]uint64, 0, w*t.Len())}
	for i := range t.Len() {
		x, z := t.Words(i)
		for k := range x {
			g.supp = append(g.supp, x[k]|z[k])
		}
		g.localHalf[i], g.localBias[i] = m.Half(g.supp[i*w:(i+1)*w]), m.Bias(g.supp[i*w:(i+1)*w])
	}
	return g
}

// load finds the terms setting s covers.
func (g *maskGroups) load(s pauli.Setting) {
	g.rows = g.rows[:0]
	g.local = s.IsLocal()
	if g.local {
		x, z := s.Words()
		g.found = g.index.AppendCovered(g.found[:0], x, z)
		for _, i := range g.found {
			g.rows = append(g.rows, int(i))
		}
		return
	}
	g.rows = g.t.Covered(g.rows, s)
	g.masks, g.signs = g.masks[:0], g.signs[:0]
	for _, i := range g.rows {
		var sign float64
		g.masks, sign = TermMask(g.masks, g.t, i, s)
		g.signs = append(g.signs, sign)
	}
}

// sample returns row j's mitigated sample from outcome b.
func (g *maskGroups) sample(j int, b pauli.Bits) float64 {
	if g.local {
		i := g.rows[j]
		return g.m.Sample(g.supp[i*g.w:(i+1)*g.w], b)
	}
	return g.signs[j] * g.m.Sample(g.masks[j*g.w:(j+1)*g.w], b)
}

// bounds returns row j's largest |sample| and calibration bias bound.
func (g *maskGroups) bounds(j int) (half, bias float64) {
	if g.local {
		i := g.rows[j]
		return g.localHalf[i], g.localBias[i]
	}
	mask := g.masks[j*g.w : (j+1)*g.w]
	return g.m.Half(mask), g.m.Bias(mask)
}
