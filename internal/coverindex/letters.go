package coverindex

import (
	"math/bits"

	"github.com/shotplan/shotplan/internal/symplectic"
	"github.com/shotplan/shotplan/internal/workshare"
	"github.com/shotplan/shotplan/pauli"
)

// Letters is the transpose of a list of local settings, for plans with so
// many (setting, term) cover pairs that they are not stored: for every block
// of 64 settings and every qubit and letter, the set of the block's settings
// with that letter on that qubit. The settings that cover a term are the
// intersection of the sets of its letters, 64 settings a word, so a term's
// cover count costs about weight·G/64 word operations for G settings, with
// no per-pair work, and sums over the pairs visit them term by term in
// table order. The work is shared among GOMAXPROCS goroutines in a way that
// does not change any result.
type Letters struct {
	n     int
	words int      // ⌈G/64⌉
	g     int      // settings
	sets  []uint64 // sets[(3q+l)*words + w]: settings 64w.. with letter code l on qubit q
	mult  []int    // m_Q
	mbits int      // bit length of the largest m_Q
	mw    []uint64 // mw[w*mbits + b]: settings 64w.. whose m_Q has bit b set

	off []int32 // term i's letters are idx[off[i]:off[i+1]], each 3q + l
	idx []int32
}

// NewLetters builds the transpose of settings (local, n qubits, distinct)
// with multiplicities mult, for the rows strings on n qubits that row(i)
// returns (the Hamiltonian's table).
func NewLetters(n int, settings []pauli.Setting, mult []int, rows int, row func(i int) (x, z []uint64)) *Letters {
	l := &Letters{n: n, g: len(settings), words: (len(settings) + 63) >> 6, mult: mult}
	l.sets = make([]uint64, l.words*3*n)
	mx := 0
	for q, s := range settings {
		x, z := s.Words()
		for k := range n {
			if c := int(symplectic.Code(x, z, k)) - 1; c >= 0 {
				l.sets[(3*k+c)*l.words+q>>6] |= 1 << (q & 63)
			}
		}
		mx = max(mx, mult[q])
	}
	l.mbits = max(1, bits.Len(uint(mx)))
	l.mw = make([]uint64, l.words*l.mbits)
	for q, m := range mult {
		for b := range l.mbits {
			if m>>b&1 == 1 {
				l.mw[(q>>6)*l.mbits+b] |= 1 << (q & 63)
			}
		}
	}
	l.off = make([]int32, rows+1)
	for i := range rows {
		x, z := row(i)
		for k := range x {
			for u := x[k] | z[k]; u != 0; u &= u - 1 {
				q := k<<6 + bits.TrailingZeros64(u)
				l.idx = append(l.idx, int32(3*q+int(symplectic.Code(x, z, q))-1))
			}
		}
		l.off[i+1] = int32(len(l.idx))
	}
	return l
}

// andInto sets out[k] to the word of settings 64(lo+k).. that cover term
// i, for the words lo ≤ w < lo+len(out). Bits past the last setting are
// clear: no letter set has them, and the identity (no letters) is cut.
func (l *Letters) andInto(out []uint64, i, lo int) {
	cs := l.idx[l.off[i]:l.off[i+1]]
	row := func(k int) []uint64 {
		o := int(cs[k])*l.words + lo
		return l.sets[o : o+len(out)]
	}
	switch len(cs) {
	case 0:
		for k := range out {
			out[k] = ^uint64(0)
		}
		if w := lo + len(out) - 1; w == l.words-1 && l.g&63 != 0 {
			out[len(out)-1] = 1<<(l.g&63) - 1
		}
	case 1:
		copy(out, row(0))
	case 2:
		r0, r1 := row(0), row(1)
		for k := range out {
			out[k] = r0[k] & r1[k]
		}
	case 3:
		r0, r1, r2 := row(0), row(1), row(2)
		for k := range out {
			out[k] = r0[k] & r1[k] & r2[k]
		}
	default:
		r0, r1, r2, r3 := row(0), row(1), row(2), row(3)
		for k := range out {
			out[k] = r0[k] & r1[k] & r2[k] & r3[k]
		}
		for c := 4; c < len(cs); c++ {
			r := row(c)
			for k := range out {
				out[k] &= r[k]
			}
		}
	}
}

// Counts returns N_i = Σ_{Q covers i} m_Q for every term and the number of
// (distinct setting, term) cover pairs.
func (l *Letters) Counts() ([]int, int64) {
	rows := len(l.off) - 1
	cover := make([]int, rows)
	distinct := make([]int, rows)
	workshare.Chunks(rows, 256, func(lo, hi int) {
		and := make([]uint64, l.words)
		for i := lo; i < hi; i++ {
			l.andInto(and, i, 0)
			n, d := 0, 0
			if l.mbits == 1 {
				for _, v := range and {
					d += bits.OnesCount64(v)
				}
				n = d
			} else {
				for w, v := range and {
					if v == 0 {
						continue
					}
					d += bits.OnesCount64(v)
					for b, m := range l.mw[w*l.mbits : (w+1)*l.mbits] {
						n += bits.OnesCount64(v&m) << b
					}
				}
			}
			cover[i], distinct[i] = n, d
		}
	})
	var pairs int64
	for _, d := range distinct {
		pairs += int64(d)
	}
	return cover, pairs
}

// SumOver returns s_Q = Σ_{i ◁ Q, keep(i)} a_i for every setting, the terms
// added in table order; terms with a_i = 0 or dropped (drop non-nil and
// drop[i]) are skipped.
func (l *Letters) SumOver(a []float64, drop []bool) []float64 {
	s := make([]float64, l.words*64)
	rows := len(l.off) - 1
	workshare.Chunks(l.words, 16, func(lo, hi int) {
		and := make([]uint64, hi-lo)
		sc := s[lo<<6 : hi<<6]
		for i := range rows {
			ai := a[i]
			if ai == 0 || (drop != nil && drop[i]) {
				continue
			}
			l.andInto(and, i, lo)
			for k, v := range and {
				sw := sc[k<<6 : k<<6+64]
				for ; v != 0; v &= v - 1 {
					sw[bits.TrailingZeros64(v)] += ai
				}
			}
		}
	})
	return s[:l.g]
}

// Gather returns out_i = Σ_{Q covers i} f_Q for every term, the settings
// added in their order.
func (l *Letters) Gather(f []float64) []float64 {
	rows := len(l.off) - 1
	out := make([]float64, rows)
	fp := make([]float64, l.words*64)
	copy(fp, f)
	workshare.Chunks(rows, 256, func(lo, hi int) {
		and := make([]uint64, l.words)
		for i := lo; i < hi; i++ {
			l.andInto(and, i, 0)
			sum := 0.0
			for w, v := range and {
				fw := fp[w<<6 : w<<6+64]
				for ; v != 0; v &= v - 1 {
					sum += fw[bits.TrailingZeros64(v)]
				}
			}
			out[i] = sum
		}
	})
	return out
}

// AppendCovering appends to dst the settings that cover term i, in
// increasing order.
func (l *Letters) AppendCovering(dst []int32, i int) []int32 {
	and := make([]uint64, l.words)
	l.andInto(and, i, 0)
	for w, v := range and {
		for ; v != 0; v &= v - 1 {
			dst = append(dst, int32(w<<6+bits.TrailingZeros64(v)))
		}
	}
	return dst
}

// Words returns the number of words of 64 settings.
func (l *Letters) Words() int { return l.words }

// Covering sets out[k] to the word of settings 64(lo+k).. that cover term
// i, for lo ≤ lo+k < lo+len(out) ≤ Words().
func (l *Letters) Covering(out []uint64, i, lo int) { l.andInto(out, i, lo) }
