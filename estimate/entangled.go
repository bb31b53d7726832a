package estimate

import (
	"fmt"

	"github.com/shotplan/shotplan/pauli"
)

// Entangled settings ([pauli.NewFamilySetting]) run a Clifford circuit
// before a Z readout of every qubit, so they have no letter per qubit and
// the letter-indexed sweep of the estimators does not see them. This file
// holds their path: the terms an entangled setting covers, with the
// Z-string and sign of each term's image, and the circuit applied to a
// state vector.

// entangledCovers lists, for one entangled group, the terms it covers with
// what each is read as: term rows[j] has sample signs[j]·(−1)^(parity of
// the outcome on masks[j·w:(j+1)·w]).
type entangledCovers struct {
	g     int // group
	rows  []int
	masks []uint64
	signs []float64
}

// entangledGroups returns the covers of every entangled group of rec against
// the terms of t, and whether there are any.
func entangledGroups(rec *Records, t *pauli.Table) []entangledCovers {
	var out []entangledCovers
	for g := range rec.Groups() {
		s := rec.Setting(g)
		if s.IsLocal() {
			continue
		}
		ec := entangledCovers{g: g, rows: t.Covered(nil, s)}
		for _, i := range ec.rows {
			z, sign, _ := s.Diagonal(t.At(i))
			_, zw := z.Words()
			ec.masks = append(ec.masks, zw...)
			ec.signs = append(ec.signs, float64(sign))
		}
		out = append(out, ec)
	}
	return out
}

// noEntangled returns an error naming the first entangled setting of rec,
// for estimators that read settings letter by letter.
func noEntangled(rec *Records, what string) error {
	for g := range rec.Groups() {
		if s := rec.Setting(g); !s.IsLocal() {
			return fmt.Errorf("estimate: %s: setting %s is entangled; this estimator needs local settings (use Grouped)", what, s)
		}
	}
	return nil
}

// groupedEntangledCounts adds to cover and ones, for pass 1 of [Grouped],
// the cover counts and the numbers of −1 samples that the entangled groups
// give every term.
func groupedEntangledCounts(sw *sweep, eg []entangledCovers, cover, ones []int) {
	w := sw.w
	for _, e := range eg {
		lo, hi := sw.off[e.g], sw.off[e.g+1]
		out := sw.flat[lo*w : hi*w]
		for j, i := range e.rows {
			odd := countOdd(out, e.masks[j*w:(j+1)*w])
			if e.signs[j] < 0 {
				odd = hi - lo - odd
			}
			cover[i] += hi - lo
			ones[i] += odd
		}
	}
}

// groupedEntangledSums adds, for pass 2 of [Grouped], every entangled
// group's contributions: a_i·s to z at each shot's position for a group of
// several shots, and the leave-one-out residual terms to r[g] for a group
// of one shot (see [Grouped]).
func groupedEntangledSums(sw *sweep, eg []entangledCovers, a, raw []float64, cover []int, z, r []float64) {
	w := sw.w
	for _, e := range eg {
		lo, hi := sw.off[e.g], sw.off[e.g+1]
		out := sw.flat[lo*w : hi*w]
		for j, i := range e.rows {
			ai := a[i]
			if ai == 0 {
				continue
			}
			mask := e.masks[j*w : (j+1)*w]
			if hi-lo > 1 {
				addSamples(z[lo:hi], out, mask, ai*e.signs[j])
				continue
			}
			if n := cover[i]; n > 1 {
				di := ai * float64(n) / float64(n-1)
				s := e.signs[j] * (1 - 2*float64(pauli.Bits(out).Parity(mask)))
				r[e.g] += di * (s - raw[i])
			}
		}
	}
}

// readoutEntangled returns an error if readout mitigation is asked for with
// entangled settings: the mitigation factor of a term is a product over the
// qubits its sample reads, which for an entangled setting are those of its
// image, not of the term.
func readoutEntangled(opts *Options, rec *Records, what string) error {
	if opts == nil || opts.Readout == nil {
		return nil
	}
	for g := range rec.Groups() {
		if s := rec.Setting(g); !s.IsLocal() {
			return fmt.Errorf("estimate: %w: %s: readout mitigation is not supported for entangled setting %s", ErrFormat, what, s)
		}
	}
	return nil
}

// anyEntangled reports whether some setting with shots is entangled.
func anyEntangled(settings []pauli.Setting, shots []int) bool {
	for k, s := range settings {
		if shots[k] > 0 && !s.IsLocal() {
			return true
		}
	}
	return false
}
