package estimate

import (
	"fmt"

	"github.com/shotplan/shotplan/pauli"
)

// This file holds the noise models of the [Simulator] beyond independent
// readout error: depolarising and dephasing channels on each qubit before
// the measurement, correlated readout flips of neighbouring pairs, and slow
// drift of the readout rates from one Run to the next. MATH.md §2.1.4
// derives how each acts on the outcome distribution of a product-basis or
// entangled setting.

// checkRates validates a slice of per-qubit (or per-pair) probabilities.
func checkRates(r []float64, n int, what string) error {
	if r == nil {
		return nil
	}
	if len(r) != n {
		return fmt.Errorf("estimate: %w: NewSimulator: %s: %d entries, want %d", ErrFormat, what, len(r), n)
	}
	for q, p := range r {
		if !(p >= 0 && p <= 1) {
			return fmt.Errorf("estimate: %w: NewSimulator: %s[%d] = %v outside [0, 1]", ErrFormat, what, q, p)
		}
	}
	return nil
}

// checkNoise validates the noise fields of set for n qubits.
func checkNoise(set *SimulatorOptions, n int) error {
	if err := checkRates(set.Depolarizing, n, "Depolarizing"); err != nil {
		return err
	}
	if err := checkRates(set.Dephasing, n, "Dephasing"); err != nil {
		return err
	}
	if set.PairFlip != nil && n < 2 {
		return fmt.Errorf("estimate: %w: NewSimulator: PairFlip needs at least 2 qubits", ErrFormat)
	}
	if err := checkRates(set.PairFlip, n-1, "PairFlip"); err != nil {
		return err
	}
	if set.ReadoutDrift != nil {
		if len(set.ReadoutDrift) != n {
			return fmt.Errorf("estimate: %w: NewSimulator: ReadoutDrift: %d entries for %d qubits", ErrFormat, len(set.ReadoutDrift), n)
		}
		for q, d := range set.ReadoutDrift {
			if !(d.P01 >= -1 && d.P01 <= 1 && d.P10 >= -1 && d.P10 <= 1) {
				return fmt.Errorf("estimate: %w: NewSimulator: ReadoutDrift[%d] = (%v, %v) outside [−1, 1]", ErrFormat, q, d.P01, d.P10)
			}
		}
	}
	return nil
}

// hasChannels reports whether a depolarising or dephasing channel is set.
func (sim *Simulator) hasChannels() bool { return sim.depol != nil || sim.dephase != nil }

// channelFlips sets sim.flip[q] to the probability that the channels before
// readout flip qubit q's outcome in local setting s (MATH.md §2.1.4):
// depolarising with probability d flips every basis with probability d/2;
// dephasing with probability f flips an X or Y outcome with probability
// f/2 and a Z outcome never; the two compose as independent flips,
// a + b − 2ab. It returns nil when no channel is set.
func (sim *Simulator) channelFlips(s pauli.Setting) []float64 {
	if !sim.hasChannels() {
		return nil
	}
	if sim.flip == nil {
		sim.flip = make([]float64, sim.n)
	}
	for q := range sim.flip {
		a, b := 0.0, 0.0
		if sim.depol != nil {
			a = sim.depol[q] / 2
		}
		if sim.dephase != nil && s.At(q) != pauli.Z {
			b = sim.dephase[q] / 2
		}
		sim.flip[q] = a + b - 2*a*b
	}
	return sim.flip
}

// driftedRates sets sim.rates to the readout rates of the current round:
// Readout[q] + round·ReadoutDrift[q], each clipped to [0, 1].
func (sim *Simulator) driftedRates() {
	if sim.drift == nil {
		return
	}
	if sim.readoutErr == nil {
		sim.readoutErr = make([]Readout, sim.n)
	}
	r := float64(sim.round)
	for q, d := range sim.drift {
		sim.readoutErr[q] = Readout{
			P01: min(1, max(0, sim.base[q].P01+r*d.P01)),
			P10: min(1, max(0, sim.base[q].P10+r*d.P10)),
		}
	}
}

// noisy applies to a drawn outcome b, in order, the channel flips f (nil
// for none), the independent readout errors, and the pair flips.
func (sim *Simulator) noisy(b uint64, f []float64) uint64 {
	for q, p := range f {
		if p > 0 && sim.rng.Float64() < p {
			b ^= 1 << q
		}
	}
	b = sim.readout(b)
	for q, p := range sim.pair {
		if p > 0 && sim.rng.Float64() < p {
			b ^= 3 << q
		}
	}
	return b
}

// OutcomeProbabilities sets dst[a] to the probability that Run records
// outcome a (bit q of a for qubit q) for local setting s in the next call,
// with every noise model of the simulator applied — the channels before
// readout, the readout errors at the current round's rates, and the pair
// flips — and returns dst; a nil or short dst is replaced. It computes the
// Born distribution (as [Simulator.Probabilities]) and applies to it the
// 2×2 transfer matrix of each qubit and then the flip of each pair, O(n·2^n).
// For an entangled setting the channels act before its circuit U, so a
// Pauli P on qubit q flips the outcome bits where U P U† has an X or Y
// (MATH.md §2.1.4); the distribution is mixed over the four Paulis of each
// qubit, O(4n·2^n). It returns an error if s has the wrong width.
func (sim *Simulator) OutcomeProbabilities(dst []float64, s pauli.Setting) ([]float64, error) {
	if s.Qubits() != sim.n {
		return nil, fmt.Errorf("estimate: setting %s has %d qubits, the simulator %d", s, s.Qubits(), sim.n)
	}
	dst = sim.Probabilities(dst, s)
	var f []float64
	if s.IsLocal() {
		f = sim.channelFlips(s)
	} else if sim.hasChannels() {
		// p'(a) = Σ_c w_c p(a ⊕ mask_c), one qubit's channel at a time.
		sim.pauliFlips(s)
		tmp := make([]float64, len(dst))
		for q, w := range sim.weights {
			if w[0] == 1 {
				continue
			}
			clear(tmp)
			for c, wc := range w {
				if wc == 0 {
					continue
				}
				m := sim.masks[q][c]
				for a := range dst {
					tmp[a] += wc * dst[uint64(a)^m]
				}
			}
			copy(dst, tmp)
		}
	}
	sim.driftedRates()
	for q := range sim.n {
		c := 0.0
		if f != nil {
			c = f[q]
		}
		var e Readout
		if sim.readoutErr != nil {
			e = sim.readoutErr[q]
		}
		// Channel flip, then readout: P(read 1 | 0) and P(read 0 | 1).
		r01 := c*(1-e.P10) + (1-c)*e.P01
		r10 := c*(1-e.P01) + (1-c)*e.P10
		h := 1 << q
		for base := 0; base < len(dst); base += 2 * h {
			for j := base; j < base+h; j++ {
				p0, p1 := dst[j], dst[j+h]
				dst[j] = (1-r01)*p0 + r10*p1
				dst[j+h] = r01*p0 + (1-r10)*p1
			}
		}
	}
	for q, p := range sim.pair {
		if p == 0 {
			continue
		}
		m := 3 << q
		h := 1 << q
		// Mix each outcome with its partner differing in bits q, q+1; visit
		// every unordered pair once (bit q+1 clear).
		for a := range dst {
			if a&(2*h) != 0 {
				continue
			}
			b := a ^ m
			pa, pb := dst[a], dst[b]
			dst[a] = (1-p)*pa + p*pb
			dst[b] = p*pa + (1-p)*pb
		}
	}
	return dst, nil
}

// Round returns the number of Run calls that recorded shots so far: the
// round whose drifted readout rates the next call uses.
func (sim *Simulator) Round() int { return sim.round }

// pauliWeights returns the probabilities of the Paulis I, X, Z, Y (codes 0,
// 1, 2, 3: bit 0 the X part, bit 1 the Z part, so that a product is the XOR
// of codes up to phase) that the channels apply to qubit q: dephasing is Z
// with probability f/2, depolarising each of X, Y, Z with probability d/4
// (MATH.md §2.1.4), composed by convolution over the codes.
func (sim *Simulator) pauliWeights(q int) [4]float64 {
	dep, ph := [4]float64{1}, [4]float64{1}
	if sim.depol != nil {
		d := sim.depol[q]
		dep = [4]float64{1 - 3*d/4, d / 4, d / 4, d / 4}
	}
	if sim.dephase != nil {
		f := sim.dephase[q]
		ph = [4]float64{1 - f/2, 0, f / 2, 0}
	}
	var w [4]float64
	for a := range 4 {
		for b := range 4 {
			w[a^b] += dep[a] * ph[b]
		}
	}
	return w
}

// pauliFlips sets sim.masks[q][c] to the outcome bits that Pauli code c on
// qubit q before entangled setting s's circuit U flips: the X part of
// U P U† (a Pauli after U flips a computational-basis outcome where it has
// X or Y), and sim.weights[q] to the channel's Pauli probabilities.
func (sim *Simulator) pauliFlips(s pauli.Setting) {
	if sim.masks == nil {
		sim.masks = make([][4]uint64, sim.n)
		sim.weights = make([][4]float64, sim.n)
	}
	d := s.Diagonalization()
	id := pauli.Identity(sim.n)
	for q := range sim.n {
		sim.weights[q] = sim.pauliWeights(q)
		for c, l := range [4]pauli.Letter{pauli.I, pauli.X, pauli.Z, pauli.Y} {
			if c == 0 {
				sim.masks[q][0] = 0
				continue
			}
			img, _ := d.Conjugate(id.With(q, l))
			x, _ := img.Words()
			sim.masks[q][c] = x[0]
		}
	}
}

// noisyEntangled applies to outcome b of an entangled setting, prepared by
// pauliFlips, a random Pauli on every qubit drawn from the channels, then
// the readout errors and the pair flips.
func (sim *Simulator) noisyEntangled(b uint64) uint64 {
	for q, w := range sim.weights {
		if w[0] == 1 {
			continue
		}
		u := sim.rng.Float64()
		c := 0
		for c < 3 && u >= w[c] {
			u -= w[c]
			c++
		}
		b ^= sim.masks[q][c]
	}
	return sim.noisy(b, nil)
}
