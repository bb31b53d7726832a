package guarantee

import (
	"fmt"
	"math"

	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// ReadoutBudget is the result of [PlanReadoutBudget]: how many calibration
// and measurement shots reach a target accuracy with the readout-aware
// certificate.
type ReadoutBudget struct {
	// CalibrationShots is the number of shots of each of the
	// Preparations calibration preparations (two,
	// estimate.CalibrationPreparations; four with pairs,
	// estimate.PairCalibrationPreparations), and Repeat how many times the
	// base plan is measured (every setting gets Repeat times its base
	// shots). MeasurementShots = Repeat × the base plan's shots, and
	// TotalShots = Preparations·CalibrationShots + MeasurementShots.
	CalibrationShots, Repeat, MeasurementShots, TotalShots int
	Preparations                                           int
	// CalibrationBias, Radius and Bias are the parts of the planned
	// certificate (see [ReadoutBound]) at the design rates; Certified is
	// their sum, at most the target.
	CalibrationBias, Radius, Bias, Certified float64
}

// PlanReadoutBudget plans the shots of a readout-aware certificate
// ([CalibratedBounds], MATH.md §2.1.3) of accuracy eps at confidence
// 1 − delta for a base plan (settings and shot counts) repeated an integer
// number of times, when the readout rates are expected to be rates (the
// design rates, one per qubit).
//
// For C calibration shots per preparation, the calibration intervals are
// the Clopper–Pearson intervals of the expected counts round(P·C) at
// CalibrationDelta/(2n) each, which give the calibration bias b_cal(C); the
// base plan's mitigated V_0 gives the radius sqrt(2 V_0 ln(2/δ_s)/k) after k
// repetitions (V scales as 1/k under repetition, MATH.md §3.1), so the
// smallest k with radius ≤ eps − b_cal(C) − B_0 is closed-form. C runs over
// a grid (×1.25 steps from 16 to 2^40) and the C with the fewest total
// shots 2C + k·(base shots) is returned. The realised intervals vary with
// the calibration data; the plan is for the expected counts.
//
// With ReadoutOptions.Pairs the calibration has four preparations and
// the pairs' expected counts are round(Matrix[r][s]·C), the unpaired
// qubits' round(P·2C) ([estimate.ExpectedPairCalibration]); the intervals
// and the bias are those of MATH.md §2.1.5, and the total is
// 4C + k·(base shots).
//
// It returns an error for eps ≤ 0, δ outside (0, 1), an empty base plan,
// rates of the wrong length, or a target that no grid point reaches (the
// bias of the terms the plan never covers, B_0, already at or above eps).
func PlanReadoutBudget(h *hamiltonian.Hamiltonian, settings []pauli.Setting, shots []int, rates []estimate.Readout, eps, delta float64, opts *ReadoutOptions) (*ReadoutBudget, error) {
	var o ReadoutOptions
	if opts != nil {
		o = *opts
	}
	if h == nil {
		return nil, fmt.Errorf("guarantee: nil Hamiltonian")
	}
	if !(eps > 0) || math.IsInf(eps, 0) {
		return nil, fmt.Errorf("guarantee: target ε = %v, want a positive number", eps)
	}
	if !validDelta(delta) {
		return nil, fmt.Errorf("guarantee: confidence parameter δ = %v is not in [1e-300, 1) (MinDelta ≤ δ < 1)", delta)
	}
	dc, err := o.calibrationDelta(delta)
	if err != nil {
		return nil, err
	}
	if len(rates) != h.Qubits() {
		return nil, fmt.Errorf("guarantee: %d readout rates for %d qubits", len(rates), h.Qubits())
	}
	base := 0
	for _, s := range shots {
		base += s
	}
	if base <= 0 {
		return nil, fmt.Errorf("guarantee: empty base plan")
	}
	ds := delta - dc
	preps := 2
	if o.Pairs != nil {
		preps = 4
		if _, err := estimate.ExpectedPairCalibration(rates, o.Pairs, 0); err != nil {
			return nil, fmt.Errorf("guarantee: %w", err)
		}
	}
	var best *ReadoutBudget
	for c := 16.0; c <= 1<<40; c = math.Ceil(c * 1.25) {
		cal := int(c)
		var m *estimate.Mitigation
		if o.Pairs != nil {
			counts, err := estimate.ExpectedPairCalibration(rates, o.Pairs, cal)
			if err != nil {
				return nil, err
			}
			if m, err = counts.Mitigation(dc); err != nil {
				continue // too few shots: a plug-in model has nothing to invert
			}
		} else {
			counts := estimate.NewCalibration(h.Qubits())
			for q, r := range rates {
				counts.Counts[q] = estimate.QubitCounts{
					Zero: cal, Flips01: int(math.Round(r.P01 * c)),
					One: cal, Flips10: int(math.Round(r.P10 * c)),
				}
			}
			bounds, err := counts.Bounds(dc)
			if err != nil {
				return nil, err
			}
			if m, err = estimate.NewMitigation(bounds); err != nil {
				continue // too few shots: the interval centres leave λ̃ ≤ 0
			}
		}
		v, calBias := 0.0, 0.0
		bias, err := mitigatedGroups(h, settings, shots, m, o.Exclude, func(_ int, g *mitigatedGroup) {
			s := 0.0
			for j := range g.coef {
				s += math.Abs(g.coef[j]) * g.half[j]
				calBias += float64(g.mult) * math.Abs(g.coef[j]) * g.bias[j]
			}
			v += float64(g.mult) * s * s
		})
		if err != nil {
			return nil, err
		}
		room := eps - calBias - bias
		if !(room > 0) {
			continue
		}
		k := int(math.Ceil(2 * v * math.Log(2/ds) / (room * room)))
		k = max(k, 1)
		// Guard the closed form against rounding: the bound must hold.
		for math.Sqrt(2*v/float64(k)*math.Log(2/ds)) > room {
			k++
		}
		total := preps*cal + k*base
		if best != nil && total >= best.TotalShots {
			if preps*cal > best.TotalShots {
				break // calibration alone costs more than the best found
			}
			continue
		}
		r := math.Sqrt(2 * v / float64(k) * math.Log(2/ds))
		best = &ReadoutBudget{
			CalibrationShots: cal, Repeat: k, MeasurementShots: k * base, TotalShots: total, Preparations: preps,
			CalibrationBias: calBias, Radius: r, Bias: bias, Certified: calBias + r + bias,
		}
	}
	if best == nil {
		return nil, fmt.Errorf("guarantee: no calibration size reaches ε = %v with this plan (bias of uncovered terms and calibration too large)", eps)
	}
	return best, nil
}
