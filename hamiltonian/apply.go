package hamiltonian

import (
	"fmt"
	"math"
	"math/bits"
	"runtime"
	"sync"
	"unsafe"

	"github.com/shotplan/shotplan/pauli"
)

// MaxExactQubits is the widest Hamiltonian that [Hamiltonian.Apply],
// [Hamiltonian.Energy], [Expectation] and [GroundState] accept. A state on
// n qubits holds 2^n complex128 amplitudes: 16 MiB at n = 20, 256 MiB at
// n = 24.
const MaxExactQubits = 24

// operator applies a Hamiltonian to state vectors without building a matrix
// (MATH.md §7). With P ↔ (x, z) and Y = iXZ,
//
//	P|b⟩ = i^{|x∧z|} (−1)^{|z∧b|} |b⊕x⟩,
//
// so, writing a = b⊕x and using (−1)^{|z∧b|} = (−1)^{|z∧a|}(−1)^{|z∧x|},
//
//	(Hψ)[a] = Σ_P h_P (−i)^{|x∧z|} (−1)^{|z∧a|} ψ[a⊕x].
//
// Terms are grouped by their x mask, so each group is one pass over the
// vector with a fixed partner index a⊕x; the factor (−i)^{|x∧z|} is real or
// imaginary, and the two kinds are kept apart.
type operator struct {
	n      int
	offset float64
	diag   []float64 // the whole diagonal, offset included; nil if not precomputed
	dz     []uint64  // diagonal (Z-only) terms when diag is nil
	dc     []float64
	groups []group
}

type group struct {
	x      uint64
	zr, zi []uint64  // z masks of the terms with a real / imaginary factor
	cr, ci []float64 // their real coefficients (imaginary parts for ci)
}

// newOperator groups the terms of h by x mask. If withDiag, the diagonal is
// precomputed (2^n float64s), which pays off when the operator is applied
// many times.
func newOperator(h *Hamiltonian, withDiag bool) *operator {
	op := &operator{n: h.n, offset: h.offset}
	index := make(map[uint64]int)
	t := h.Table()
	for i, c := range h.coef {
		xs, zs := t.Words(i)
		x, z := xs[0], zs[0]
		if x == 0 {
			op.dz = append(op.dz, z)
			op.dc = append(op.dc, c)
			continue
		}
		k, ok := index[x]
		if !ok {
			k = len(op.groups)
			index[x] = k
			op.groups = append(op.groups, group{x: x})
		}
		g := &op.groups[k]
		// (−i)^m for m = |x∧z| mod 4 is 1, −i, −1, i.
		switch bits.OnesCount64(x&z) & 3 {
		case 0:
			g.zr, g.cr = append(g.zr, z), append(g.cr, c)
		case 1:
			g.zi, g.ci = append(g.zi, z), append(g.ci, -c)
		case 2:
			g.zr, g.cr = append(g.zr, z), append(g.cr, -c)
		case 3:
			g.zi, g.ci = append(g.zi, z), append(g.ci, c)
		}
	}
	if withDiag {
		op.withDiag()
	}
	return op
}

// withDiag precomputes the whole diagonal (2^n float64s), which pays off
// when the operator is applied many times.
func (op *operator) withDiag() {
	op.diag = make([]float64, 1<<op.n)
	parallel(len(op.diag), func(lo, hi int) {
		for a := lo; a < hi; a++ {
			op.diag[a] = op.diagAt(uint64(a))
		}
	})
}

// diagAt returns ⟨a|H|a⟩.
func (op *operator) diagAt(a uint64) float64 {
	d := op.offset
	for t, z := range op.dz {
		d += flip(op.dc[t], z&a)
	}
	return d
}

// flip returns c·(−1)^{|m|}, without a branch.
func flip(c float64, m uint64) float64 {
	return math.Float64frombits(math.Float64bits(c) ^ uint64(bits.OnesCount64(m)&1)<<63)
}

// applyRange sets out[i] = (Hψ)[lo+i] for i < len(out).
func (op *operator) applyRange(out, src []complex128, lo int) {
	if op.diag != nil {
		for i := range out {
			out[i] = complex(op.diag[lo+i], 0) * src[lo+i]
		}
	} else {
		for i := range out {
			out[i] = complex(op.diagAt(uint64(lo+i)), 0) * src[lo+i]
		}
	}
	mask := uint64(len(src) - 1) // len(src) is a power of two
	for gi := range op.groups {
		g := &op.groups[gi]
		x := g.x
		switch {
		case len(g.zr) == 1 && len(g.zi) == 0:
			// One term with a real factor, the common case.
			z, c := g.zr[0], g.cr[0]
			for i := range out {
				a := uint64(lo + i)
				v := flip(c, z&a)
				s := src[(a^x)&mask]
				out[i] += complex(v*real(s), v*imag(s))
			}
		case len(g.zr) == 0 && len(g.zi) == 1:
			// One term with an imaginary factor i·c.
			z, c := g.zi[0], g.ci[0]
			for i := range out {
				a := uint64(lo + i)
				v := flip(c, z&a)
				s := src[(a^x)&mask]
				out[i] += complex(-v*imag(s), v*real(s))
			}
		default:
			for i := range out {
				a := uint64(lo + i)
				var fr, fi float64
				for t, z := range g.zr {
					fr += flip(g.cr[t], z&a)
				}
				for t, z := range g.zi {
					fi += flip(g.ci[t], z&a)
				}
				s := src[(a^x)&mask]
				out[i] += complex(fr*real(s)-fi*imag(s), fr*imag(s)+fi*real(s))
			}
		}
	}
}

// chunk is the number of amplitudes one pass of applyRange handles; 4096
// complex128 (64 KiB) of output stay in cache while every group runs over
// them, and the partner indices a⊕x fall in one aligned block of src.
const chunk = 1 << 12

// apply sets dst = Hψ.
func (op *operator) apply(dst, src []complex128) {
	parallel(len(dst), func(lo, hi int) {
		for c := lo; c < hi; c += chunk {
			op.applyRange(dst[c:min(c+chunk, hi)], src, c)
		}
	})
}

// energy returns ⟨ψ|H|ψ⟩ (complex; its imaginary part is rounding error).
// Each block of chunk amplitudes has its own partial sum and the blocks are
// added in order, so the value does not depend on the number of goroutines.
func (op *operator) energy(psi []complex128) complex128 {
	part := make([]complex128, (len(psi)+chunk-1)/chunk)
	parallel(len(psi), func(lo, hi int) {
		buf := make([]complex128, min(chunk, hi-lo))
		for c := lo; c < hi; c += chunk {
			out := buf[:min(chunk, hi-c)]
			op.applyRange(out, psi, c)
			var s complex128
			for i, v := range out {
				p := psi[c+i]
				s += complex(real(p), -imag(p)) * v
			}
			part[c/chunk] = s
		}
	})
	var sum complex128
	for _, s := range part {
		sum += s
	}
	return sum
}

// parallelMin is the vector length below which work stays on one goroutine.
const parallelMin = 1 << 15

// parallel calls f on contiguous ranges covering [0, n), aligned to chunk,
// on up to GOMAXPROCS goroutines, and waits for all of them.
func parallel(n int, f func(lo, hi int)) {
	workers := runtime.GOMAXPROCS(0)
	if n < parallelMin || workers < 2 {
		f(0, n)
		return
	}
	per := (n/workers + chunk - 1) / chunk * chunk
	var wg sync.WaitGroup
	for lo := 0; lo < n; lo += per {
		wg.Go(func() { f(lo, min(lo+per, n)) })
	}
	wg.Wait()
}

// checkState panics unless h is narrow enough and v has 2^n amplitudes.
func checkState(n int, v []complex128, what string) {
	if n > MaxExactQubits {
		panic(fmt.Sprintf("hamiltonian: %s: %d qubits exceed MaxExactQubits", what, n))
	}
	if len(v) != 1<<n {
		panic(fmt.Sprintf("hamiltonian: %s: state has %d amplitudes, want 2^%d", what, len(v), n))
	}
}

// Apply sets dst = H·src without building a matrix (MATH.md §7). Amplitude a
// belongs to the basis state with bit q of a on qubit q. The work is spread
// over GOMAXPROCS goroutines for long vectors. Apply panics if h has more
// than [MaxExactQubits] qubits, if a slice does not have 2^n elements, or if
// dst and src overlap.
func (h *Hamiltonian) Apply(dst, src []complex128) {
	checkState(h.n, src, "Apply")
	checkState(h.n, dst, "Apply")
	if len(dst) > 0 && overlap(dst, src) {
		panic("hamiltonian: Apply: dst and src overlap")
	}
	newOperator(h, false).apply(dst, src)
}

// overlap reports whether two non-empty slices share memory.
func overlap(a, b []complex128) bool {
	pa, pb := uintptr(unsafe.Pointer(&a[0])), uintptr(unsafe.Pointer(&b[0]))
	return pa < pb+uintptr(16*len(b)) && pb < pa+uintptr(16*len(a))
}

// Energy returns ⟨ψ|H|ψ⟩ for a state ψ of 2^n amplitudes; ψ should be
// normalised (the value is not divided by ⟨ψ|ψ⟩). It panics as
// [Hamiltonian.Apply] does.
func (h *Hamiltonian) Energy(psi []complex128) float64 {
	checkState(h.n, psi, "Energy")
	return real(newOperator(h, false).energy(psi))
}

// Expectation returns ⟨ψ|P|ψ⟩ for a state ψ of 2^n amplitudes on p's qubits;
// ψ should be normalised. The value is real because P is Hermitian. It panics
// if p has more than [MaxExactQubits] qubits or ψ has the wrong length.
func Expectation(psi []complex128, p pauli.String) float64 {
	checkState(p.Qubits(), psi, "Expectation")
	if p.Qubits() == 0 {
		return real(psi[0])*real(psi[0]) + imag(psi[0])*imag(psi[0])
	}
	xs, zs := p.Words()
	x, z := xs[0], zs[0]
	// ⟨ψ|P|ψ⟩ = Σ_a conj(ψ[a]) (−i)^{|x∧z|} (−1)^{|z∧a|} ψ[a⊕x]; only the
	// real part survives.
	var sum complex128
	for a, p := range psi {
		q := psi[uint64(a)^x]
		v := complex(real(p), -imag(p)) * q
		if bits.OnesCount64(z&uint64(a))&1 == 1 {
			v = -v
		}
		sum += v
	}
	sum *= [4]complex128{1, -1i, -1, 1i}[bits.OnesCount64(x&z)&3]
	return real(sum)
}
