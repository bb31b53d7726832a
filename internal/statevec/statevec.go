// Package statevec holds the state-vector kernels shared by the simulator
// (estimate), the figure of merit and budgets of a state (guarantee) and the
// classical variance proxies of the strategies (allocate): the basis change
// of a measurement setting applied to 2^n amplitudes, and the fast
// Walsh–Hadamard transform of outcome probabilities. Qubit q is bit q of
// the index into a vector (the module's convention, MATH.md §7).
package statevec

import (
	"math"

	"github.com/shotplan/shotplan/pauli"
)

// Rotate applies to a the basis change of setting s on all n qubits: the
// local rotations of [RotateQubits] (without the 1/√2 factors), or the
// circuit of an entangled setting ([ApplyCircuit]). Afterwards |a[b]|²,
// normalised, is the probability of outcome b.
func Rotate(a []complex128, s pauli.Setting, n int) {
	if s.IsLocal() {
		RotateQubits(a, s, 0, n)
		return
	}
	ApplyCircuit(a, s.Circuit())
}

// RotateQubits applies to the amplitudes a, in place, the basis change of s
// on qubits lo..hi−1, qubit q being bit q of the index into a (a may be a
// block that holds only the lowest qubits): Hadamard for X, S† then
// Hadamard for Y, nothing for Z. The factor 1/√2 of each Hadamard is left
// out; callers normalise.
//
// The X-basis outcome 0 is |+⟩ = (|0⟩+|1⟩)/√2, which H maps to |0⟩; the
// Y-basis outcome 0 is |+i⟩ = (|0⟩+i|1⟩)/√2, which S† maps to |+⟩ and H to
// |0⟩ (Nielsen & Chuang, §4.2; common practice).
func RotateQubits(a []complex128, s pauli.Setting, lo, hi int) {
	for q := lo; q < hi; q++ {
		l := s.At(q)
		if l == pauli.Z {
			continue
		}
		h := 1 << q
		for base := 0; base < len(a); base += 2 * h {
			lo := a[base : base+h]
			hi := a[base+h : base+2*h]
			if l == pauli.X {
				for j, u := range lo {
					v := hi[j]
					lo[j], hi[j] = u+v, u-v
				}
				continue
			}
			for j, u := range lo {
				v := hi[j]
				w := complex(imag(v), -real(v)) // −i·v
				lo[j], hi[j] = u+w, u-w
			}
		}
	}
}

// ApplyCircuit applies the gates of c, in order, to the amplitudes a, in
// place; qubit q is bit q of the index into a. H maps (u, v) to
// ((u+v)/√2, (u−v)/√2); S multiplies the amplitudes with the qubit at 1 by
// i and S† by −i; CNOT swaps the target's 0 and 1 amplitudes where the
// control is 1; CZ negates the amplitudes with both qubits at 1 (the
// matrices of Nielsen & Chuang §4.2 and §4.3, as in package pauli). It
// panics on a gate kind it does not know (a programmer error).
func ApplyCircuit(a []complex128, c *pauli.Circuit) {
	r := complex(1/math.Sqrt2, 0)
	for _, g := range c.Gates() {
		switch g.Kind {
		case pauli.GateH:
			h := 1 << g.Q0
			for base := 0; base < len(a); base += 2 * h {
				lo, hi := a[base:base+h], a[base+h:base+2*h]
				for j, u := range lo {
					v := hi[j]
					lo[j], hi[j] = (u+v)*r, (u-v)*r
				}
			}
		case pauli.GateS, pauli.GateSdg:
			ph := complex(0, 1)
			if g.Kind == pauli.GateSdg {
				ph = complex(0, -1)
			}
			m := 1 << g.Q0
			for i := range a {
				if i&m != 0 {
					a[i] *= ph
				}
			}
		case pauli.GateCNOT:
			cm, tm := 1<<g.Q0, 1<<g.Q1
			for i := range a {
				if i&cm != 0 && i&tm == 0 {
					a[i], a[i|tm] = a[i|tm], a[i]
				}
			}
		case pauli.GateCZ:
			m := 1<<g.Q0 | 1<<g.Q1
			for i := range a {
				if i&m == m {
					a[i] = -a[i]
				}
			}
		default:
			panic("statevec: unknown gate " + g.String())
		}
	}
}

// WalshHadamard replaces p by its Walsh–Hadamard transform in place:
// p'[m] = Σ_b p[b] (−1)^{popcount(b∧m)}. len(p) must be a power of two.
// The butterfly is the textbook fast transform (common practice). The
// transform is its own inverse up to the factor len(p).
func WalshHadamard(p []float64) {
	for h := 1; h < len(p); h <<= 1 {
		for i := 0; i < len(p); i += h << 1 {
			for j := i; j < i+h; j++ {
				x, y := p[j], p[j+h]
				p[j], p[j+h] = x+y, x-y
			}
		}
	}
}
