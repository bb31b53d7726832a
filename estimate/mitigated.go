package estimate

import (
	"fmt"
	"math"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// ReadMasks returns the terms of t that setting s covers, in table order,
// with what each is read from: term rows[j] has the ideal sample
// signs[j]·(−1)^(parity of the outcome on masks[j·w:(j+1)·w]), w =
// pauli.Words(n). For a local setting the mask is the term's support and
// the sign +1; for an entangled setting the mask is the support of the
// term's Z-image after the setting's circuit. Readout error acts on the
// measured bits, so readout mitigation of a term is a product over its
// mask (MATH.md §2.1.1).
func ReadMasks(t *pauli.Table, s pauli.Setting) (rows []int, masks []uint64, signs []float64) {
	rows = t.Covered(nil, s)
	for _, i := range rows {
		z, sign, _ := s.Diagonal(t.At(i))
		_, zw := z.Words()
		masks = append(masks, zw...)
		signs = append(signs, float64(sign))
	}
	return rows, masks, signs
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
		return nil, fmt.Errorf("estimate: Mitigated: nil mitigation")
	}
	if m.Qubits() != h.Qubits() {
		return nil, fmt.Errorf("estimate: %w: Mitigated: mitigation of %d qubits for %d", ErrFormat, m.Qubits(), h.Qubits())
	}
	n, mt := h.Qubits(), h.Len()
	w := pauli.Words(n)
	coef := h.Coeffs()
	tab := h.Table()
	type group struct {
		rows       []int
		masks      []uint64
		signs      []float64
		half, bias []float64
		sums       []float64 // per row: Σ of the mitigated samples
	}
	gs := make([]group, rec.Groups())
	res := &Result{Means: make([]float64, mt), Cover: make([]int, mt), Shots: rec.Len(), Energy: h.Offset()}
	for g := range gs {
		gr := &gs[g]
		gr.rows, gr.masks, gr.signs = ReadMasks(tab, rec.Setting(g))
		k := len(gr.rows)
		gr.half, gr.bias, gr.sums = make([]float64, k), make([]float64, k), make([]float64, k)
		for j := range k {
			mask := gr.masks[j*w : (j+1)*w]
			gr.half[j], gr.bias[j] = m.Half(mask), m.Bias(mask)
		}
		t := rec.GroupLen(g)
		for s := range t {
			b := rec.Outcome(g, s)
			for j := range k {
				gr.sums[j] += gr.signs[j] * m.Sample(gr.masks[j*w:(j+1)*w], b)
			}
		}
		for j, i := range gr.rows {
			res.Cover[i] += t
			res.Means[i] += gr.sums[j]
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
	vsum := 0.0
	for g := range gs {
		gr := &gs[g]
		t := rec.GroupLen(g)
		top := 0.0
		for j, i := range gr.rows {
			res.ReadoutBias += float64(t) * math.Abs(a[i]) * gr.bias[j]
			top += math.Abs(a[i]) * gr.half[j]
		}
		if t == 1 {
			vsum += top * top
			continue
		}
		// Sample variance of the per-shot contributions, by a second pass.
		mean, ssq := 0.0, 0.0
		for j, i := range gr.rows {
			mean += a[i] * gr.sums[j] / float64(t)
		}
		for s := range t {
			b := rec.Outcome(g, s)
			z := 0.0
			for j, i := range gr.rows {
				if a[i] != 0 {
					z += a[i] * gr.signs[j] * m.Sample(gr.masks[j*w:(j+1)*w], b)
				}
			}
			ssq += (z - mean) * (z - mean)
		}
		vsum += float64(t) * ssq / float64(t-1)
	}
	res.StdErr = math.Sqrt(vsum)
	readoutBias := res.ReadoutBias
	c.finish(h, res, func(i int) bool { return res.Cover[i] == 0 })
	res.ReadoutBias = readoutBias
	return res, nil
}
