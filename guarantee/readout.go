package guarantee

import (
	"fmt"
	"math"

	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// ReadoutOptions adjusts [CalibratedBounds]. A nil *ReadoutOptions means
// the defaults.
type ReadoutOptions struct {
	// CalibrationDelta is the part of δ spent on the calibration
	// intervals (all 2n Clopper–Pearson intervals hold at once with
	// probability ≥ 1 − CalibrationDelta); the shots get δ − CalibrationDelta.
	// Zero means δ/4. It must be in (0, δ).
	CalibrationDelta float64
	// Exclude marks terms left out of the estimate, as in
	// [EmpiricalOptions]; their |h_i| is added to the bias.
	Exclude []bool
	// Pairs, if not nil, makes [PlanReadoutBudget] plan a calibration of
	// these disjoint pairs read through their 4×4 design matrices (MATH.md
	// §2.1.5): four preparations ([estimate.PairCalibrationPreparations])
	// instead of two.
	Pairs []estimate.PairReadout
}

// ReadoutBound holds the bounds of a readout-mitigated grouped estimate
// ([estimate.Mitigated]; MATH.md §2.1.1, §2.1.2): each of Certified and Data
// covers |Energy − E| with probability at least 1 − Delta over the
// calibration shots and the measurement shots together, under the
// independent-qubit readout model of MATH.md §2.1 (or, for a calibration
// with pairs, the model of disjoint pairs of MATH.md §2.1.5).
type ReadoutBound struct {
	// Energy is the mitigated estimate, and Delta the failure probability
	// of each bound: CalibrationDelta for the calibration intervals plus
	// ShotDelta = Delta − CalibrationDelta for the shots.
	Energy                             float64
	Delta, CalibrationDelta, ShotDelta float64
	// CalibrationBias bounds the bias the mitigation can leave when every
	// rate lies in its interval (worst case over the intervals, MATH.md
	// §2.1.1); Bias = Σ|h_i| over the excluded and never-covered terms.
	CalibrationBias, Bias float64
	// Radius is the shot-wise Hoeffding radius of the mitigated samples
	// at ShotDelta, from the plan and the calibration alone (MATH.md
	// §2.1.2), and Certified = Radius + CalibrationBias + Bias.
	Radius, Certified float64
	// Data is the data bound of the mitigated samples at ShotDelta
	// (empirical, pooled form of MATH.md §4.3) with its Bias field
	// including CalibrationBias: Data.Bound bounds the error.
	Data *DataBound
	// Mitigation is what the estimate used: the intervals and the plug-in
	// rates.
	Mitigation *estimate.Mitigation
}

// CalibratedBounds estimates the energy from rec with readout mitigation
// made from the calibration cal and bounds its error two ways (MATH.md
// §2.1.2): an a-priori certificate from the plan's settings and the
// calibration, and a data bound from the mitigated samples. The
// calibration must come from shots independent of rec's (a separate run).
//
// δ is split: CalibrationDelta for the calibration intervals (every
// qubit's two Clopper–Pearson intervals, each at CalibrationDelta/(2n);
// with pairs, the 16 cells of each pair and the two rates of each unpaired
// qubit, each at CalibrationDelta/J, MATH.md §2.1.5), the rest for the
// shots. On the event that every rate lies in its
// interval the mitigated estimate's mean is within CalibrationBias of the
// energy of the measured terms; given the calibration, the shots are
// independent and each mitigated sample of a term read on mask M lies in
// ±[estimate.Mitigation.Half](M), which gives both bounds at the rest of δ.
// A union bound over the two events gives 1 − δ.
//
// It returns an error for δ outside (0, 1), a CalibrationDelta outside
// (0, δ), a calibration or records of another width, no records, or rates
// whose intervals leave 1 − P01 − P10 ≤ 0 at their centres.
func CalibratedBounds(h *hamiltonian.Hamiltonian, rec *estimate.Records, cal *estimate.Calibration, delta float64, opts *ReadoutOptions) (*ReadoutBound, error) {
	var o ReadoutOptions
	if opts != nil {
		o = *opts
	}
	if h == nil || rec == nil || cal == nil {
		return nil, fmt.Errorf("guarantee: nil Hamiltonian, records or calibration")
	}
	if !validDelta(delta) {
		return nil, fmt.Errorf("guarantee: confidence parameter δ = %v is not in [1e-300, 1) (MinDelta ≤ δ < 1)", delta)
	}
	dc, err := o.calibrationDelta(delta)
	if err != nil {
		return nil, err
	}
	if cal.Qubits() != h.Qubits() {
		return nil, fmt.Errorf("guarantee: calibration of %d qubits, Hamiltonian has %d", cal.Qubits(), h.Qubits())
	}
	m, err := cal.Mitigation(dc)
	if err != nil {
		return nil, err
	}
	ds := delta - dc
	data, calBias, err := MitigatedData(h, rec, m, ds, o.Exclude)
	if err != nil {
		return nil, err
	}
	settings := make([]pauli.Setting, rec.Groups())
	shots := make([]int, rec.Groups())
	for g := range settings {
		settings[g], shots[g] = rec.Setting(g), rec.GroupLen(g)
	}
	radius, bias, err := MitigatedRadius(h, settings, shots, m, ds, o.Exclude)
	if err != nil {
		return nil, err
	}
	return &ReadoutBound{
		Energy: data.Energy, Delta: delta, CalibrationDelta: dc, ShotDelta: ds,
		CalibrationBias: calBias, Bias: bias, Radius: radius, Certified: radius + calBias + bias,
		Data: data, Mitigation: m,
	}, nil
}

// mitigatedGroup is one distinct setting's kept covered terms: their
// weights h_i/N_i times the sign of the read, the masks they are read on,
// and the largest |sample| and the calibration bias bound of each.
type mitigatedGroup struct {
	setting pauli.Setting
	mult    int
	masks   []uint64
	coef    []float64
	half    []float64
	bias    []float64
}

// mitigatedGroups walks the distinct settings of a plan, handing each
// group to fn in turn (the group's slices are reused for the next), after
// computing the weights; it returns the bias Σ|h_i| of the terms left out.
// Nothing is kept across groups, so memory stays O(terms + the largest
// group).
func mitigatedGroups(h *hamiltonian.Hamiltonian, settings []pauli.Setting, shots []int, m *estimate.Mitigation, exclude []bool, fn func(q int, g *mitigatedGroup)) (float64, error) {
	if h == nil || m == nil {
		return 0, fmt.Errorf("guarantee: nil Hamiltonian or mitigation")
	}
	if m.Qubits() != h.Qubits() {
		return 0, fmt.Errorf("guarantee: mitigation of %d qubits, Hamiltonian has %d", m.Qubits(), h.Qubits())
	}
	if err := checkExclude(h, exclude); err != nil {
		return 0, err
	}
	c, err := newCoverage(h, settings, shots)
	if err != nil {
		return 0, err
	}
	coef, bias := estimatorWeights(h, c.cover, 1, exclude)
	tab := h.Table()
	w := pauli.Words(h.Qubits())
	// A local setting reads a term on its support: its bounds are the
	// term's own, computed once.
	supp := make([]uint64, 0, w*h.Len())
	localHalf, localBias := make([]float64, h.Len()), make([]float64, h.Len())
	for i := range h.Len() {
		x, z := tab.Words(i)
		for k := range x {
			supp = append(supp, x[k]|z[k])
		}
		localHalf[i], localBias[i] = m.Half(supp[i*w:(i+1)*w]), m.Bias(supp[i*w:(i+1)*w])
	}
	var g mitigatedGroup
	for q, s := range c.settings {
		g.setting, g.mult = s, c.mult[q]
		g.masks, g.coef, g.half, g.bias = g.masks[:0], g.coef[:0], g.half[:0], g.bias[:0]
		local := s.IsLocal()
		for _, i32 := range c.terms(q) {
			i := int(i32)
			if coef[i] == 0 {
				continue
			}
			if local {
				g.masks = append(g.masks, supp[i*w:(i+1)*w]...)
				g.coef = append(g.coef, coef[i])
				g.half = append(g.half, localHalf[i])
				g.bias = append(g.bias, localBias[i])
				continue
			}
			var sign float64
			k := len(g.masks)
			g.masks, sign = estimate.TermMask(g.masks, tab, i, s)
			mask := g.masks[k : k+w]
			g.coef = append(g.coef, coef[i]*sign)
			g.half = append(g.half, m.Half(mask))
			g.bias = append(g.bias, m.Bias(mask))
		}
		fn(q, &g)
	}
	return bias, nil
}

// MitigatedRadius returns the shot-wise Hoeffding radius at confidence
// 1 − δ of the mitigated grouped estimate of a plan (MATH.md §2.1.2):
// sqrt(2 V ln(2/δ)) with V = Σ_Q m_Q (Σ_{i◁Q} |h_i| Half_{i,Q}/N_i)², where
// Half_{i,Q} = Π_{q∈mask}(1 + |ã_q|)/λ̃_q bounds term i's mitigated sample
// in setting Q, and the bias Σ|h_i| of the excluded and uncovered terms. It
// holds given the mitigation (for rates fixed before the shots). The
// calibration bias is not included; see [CalibratedBounds].
func MitigatedRadius(h *hamiltonian.Hamiltonian, settings []pauli.Setting, shots []int, m *estimate.Mitigation, delta float64, exclude []bool) (radius, bias float64, err error) {
	if !validDelta(delta) {
		return 0, 0, fmt.Errorf("guarantee: confidence parameter δ = %v is not in [1e-300, 1) (MinDelta ≤ δ < 1)", delta)
	}
	v := 0.0
	bias, err = mitigatedGroups(h, settings, shots, m, exclude, func(_ int, g *mitigatedGroup) {
		s := 0.0
		for j := range g.coef {
			s += math.Abs(g.coef[j]) * g.half[j]
		}
		v += float64(g.mult) * s * s
	})
	if err != nil {
		return 0, 0, err
	}
	return math.Sqrt(2 * v * math.Log(2/delta)), bias, nil
}

// MitigatedData returns the data bound (pooled form, MATH.md §4.3) of the
// mitigated grouped estimate ([estimate.Mitigated]) from rec at confidence
// 1 − δ given the mitigation, and the calibration bias Σ_Q m_Q Σ_{i◁Q}
// (|h_i|/N_i)·Bias_{i,Q} that holds when the true rates lie in the
// mitigation's boxes (MATH.md §2.1.1). The DataBound's Bias and Total
// include the calibration bias; its Energy is the mitigated estimate.
func MitigatedData(h *hamiltonian.Hamiltonian, rec *estimate.Records, m *estimate.Mitigation, delta float64, exclude []bool) (*DataBound, float64, error) {
	if rec == nil {
		return nil, 0, fmt.Errorf("guarantee: nil records")
	}
	if !validDelta(delta) {
		return nil, 0, fmt.Errorf("guarantee: confidence parameter δ = %v is not in [1e-300, 1) (MinDelta ≤ δ < 1)", delta)
	}
	if h != nil && rec.Qubits() != h.Qubits() {
		return nil, 0, fmt.Errorf("guarantee: records have %d qubits, Hamiltonian has %d", rec.Qubits(), h.Qubits())
	}
	if rec.Len() == 0 {
		return nil, 0, fmt.Errorf("guarantee: no shots in the records")
	}
	settings := make([]pauli.Setting, rec.Groups())
	shots := make([]int, rec.Groups())
	for g := range settings {
		settings[g], shots[g] = rec.Setting(g), rec.GroupLen(g)
	}
	// Every group of the records holds shots, so distinct setting q is
	// group q.
	w := pauli.Words(h.Qubits())
	calBias := 0.0
	var gs []*groupStat
	bias, err := mitigatedGroups(h, settings, shots, m, exclude, func(g int, x *mitigatedGroup) {
		st := &groupStat{setting: x.setting, weight: float64(x.mult)}
		for j := range x.coef {
			st.half += math.Abs(x.coef[j]) * x.half[j]
			calBias += float64(x.mult) * math.Abs(x.coef[j]) * x.bias[j]
		}
		for s := range x.mult {
			b := rec.Outcome(g, s)
			v := 0.0
			for j := range x.coef {
				v += x.coef[j] * m.Sample(x.masks[j*w:(j+1)*w], b)
			}
			st.add(v)
		}
		gs = append(gs, st)
	})
	if err != nil {
		return nil, 0, err
	}
	d := finishBound(h, gs, bias+calBias, rec.Len(), delta, Pooled, nil)
	return d, calBias, nil
}

// calibrationDelta returns the part of δ spent on the calibration intervals:
// CalibrationDelta, or δ/4 when it is zero (MATH.md §2.1.1).
func (o ReadoutOptions) calibrationDelta(delta float64) (float64, error) {
	dc := o.CalibrationDelta
	if dc == 0 {
		dc = delta / 4
	}
	if !(dc > 0 && dc < delta) {
		return 0, fmt.Errorf("guarantee: calibration δ = %v is not in (0, δ = %v)", o.CalibrationDelta, delta)
	}
	return dc, nil
}
