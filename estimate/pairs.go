package estimate

import (
	"fmt"
	"io"
	"math"
	"math/bits"
	"os"

	"gonum.org/v1/gonum/mat"

	"github.com/shotplan/shotplan/pauli"
)

// Correlated readout of qubit pairs (MATH.md §2.1.5). Chosen disjoint
// pairs of qubits are read through a 4×4 confusion model each: the two
// read bits of a pair may flip together, and their distribution given the
// pair's true bits is any stochastic matrix. The read bits of different
// pairs and of the unpaired qubits are independent given the true bits, as
// in MATH.md §2.1. A pair's two bits are indexed s = bit(A) + 2·bit(B).

// PairCounts holds the calibration counts of a pair of qubits A and B:
// Counts[s][r] shots prepared the pair in s and read it as r, where
// s, r = bit(A) + 2·bit(B).
type PairCounts struct {
	A, B   int
	Counts [4][4]int
}

// checkPairs validates disjoint pairs of distinct qubits below n.
func checkPairs(pairs [][2]int, n int) error {
	if why := pairsProblem(pairs, n); why != "" {
		return fmt.Errorf("estimate: %w: %s", ErrFormat, why)
	}
	return nil
}

// pairsProblem says what is wrong with pairs for n qubits ("" for nothing).
func pairsProblem(pairs [][2]int, n int) string {
	seen := make(map[int]bool, 2*len(pairs))
	for k, p := range pairs {
		for _, q := range p {
			if q < 0 || q >= n {
				return fmt.Sprintf("pair %d (%d, %d): qubit %d is not in 0..%d", k, p[0], p[1], q, n-1)
			}
		}
		if p[0] == p[1] {
			return fmt.Sprintf("pair %d (%d, %d): a pair needs two different qubits", k, p[0], p[1])
		}
		for _, q := range p {
			if seen[q] {
				return fmt.Sprintf("pair %d (%d, %d): qubit %d is in another pair (pairs must be disjoint)", k, p[0], p[1], q)
			}
			seen[q] = true
		}
	}
	return ""
}

// PairReadout is a design readout model of a pair of qubits A and B:
// Matrix[r][s] = P(read r | true s), s, r = bit(A) + 2·bit(B); every
// column sums to 1.
type PairReadout struct {
	A, B   int
	Matrix [4][4]float64
}

// ObservedPairs returns the pairs' readout matrices observed in the
// calibration (the fractions of each prepared state's reads); a pair never
// prepared in one of its states is an error.
func (c *Calibration) ObservedPairs() ([]PairReadout, error) {
	out := make([]PairReadout, len(c.Pairs))
	for k, p := range c.Pairs {
		out[k].A, out[k].B = p.A, p.B
		for s := range 4 {
			tot := 0
			for r := range 4 {
				tot += p.Counts[s][r]
			}
			if tot == 0 {
				return nil, fmt.Errorf("estimate: %w: pair (%d, %d) was never prepared in %d%d", ErrFormat, p.A, p.B, s&1, s>>1)
			}
			for r := range 4 {
				out[k].Matrix[r][s] = float64(p.Counts[s][r]) / float64(tot)
			}
		}
	}
	return out, nil
}

// ExpectedPairCalibration returns the calibration of shots shots of each of
// the four preparations of [PairCalibrationPreparations] whose counts are
// the expected ones, rounded: round(P·2·shots) flips of each unpaired
// qubit's rates (from rates, one per qubit; entries of paired qubits are
// ignored) and round(Matrix[r][s]·shots) reads r of each pair prepared in
// s. It plans calibrations (guarantee's PlanReadoutBudget).
func ExpectedPairCalibration(rates []Readout, pairs []PairReadout, shots int) (*Calibration, error) {
	n := len(rates)
	list := make([][2]int, len(pairs))
	for k, p := range pairs {
		list[k] = [2]int{p.A, p.B}
		for s := range 4 {
			sum := 0.0
			for r := range 4 {
				v := p.Matrix[r][s]
				if !(v >= 0 && v <= 1) {
					return nil, fmt.Errorf("estimate: %w: pair (%d, %d): P(read %d | %d) = %v is not a probability", ErrFormat, p.A, p.B, r, s, v)
				}
				sum += v
			}
			if math.Abs(sum-1) > 1e-9 {
				return nil, fmt.Errorf("estimate: %w: pair (%d, %d): the reads of state %d have probabilities summing to %v, not 1", ErrFormat, p.A, p.B, s, sum)
			}
		}
	}
	c, err := NewPairCalibration(n, list)
	if err != nil {
		return nil, err
	}
	if shots < 0 {
		return nil, fmt.Errorf("estimate: %w: %d calibration shots", ErrFormat, shots)
	}
	for q, e := range rates {
		c.Counts[q] = QubitCounts{
			Zero: 2 * shots, Flips01: int(math.Round(e.P01 * float64(2*shots))),
			One: 2 * shots, Flips10: int(math.Round(e.P10 * float64(2*shots))),
		}
	}
	for k, p := range pairs {
		for s := range 4 {
			for r := range 4 {
				c.Pairs[k].Counts[s][r] = int(math.Round(p.Matrix[r][s] * float64(shots)))
			}
		}
	}
	return c, nil
}

// NewPairCalibration returns an empty calibration of n qubits that also
// counts every pair of pairs in its 4×4 form ([Calibration.Add] fills
// both). The pairs must be disjoint, of distinct qubits below n.
func NewPairCalibration(n int, pairs [][2]int) (*Calibration, error) {
	if err := checkPairs(pairs, n); err != nil {
		return nil, err
	}
	c := NewCalibration(n)
	for _, p := range pairs {
		c.Pairs = append(c.Pairs, PairCounts{A: p[0], B: p[1]})
	}
	return c, nil
}

// addPairs counts one shot in every pair's table.
func (c *Calibration) addPairs(prepared, read pauli.Bits) {
	for k := range c.Pairs {
		p := &c.Pairs[k]
		s := prepared.Get(p.A) + 2*prepared.Get(p.B)
		r := read.Get(p.A) + 2*read.Get(p.B)
		p.Counts[s][r]++
	}
}

// PairCalibrationPreparations returns the minimal set of preparations that
// puts every pair in each of its four basis states (MATH.md §2.1.5): all
// qubits 0; every pair's A in 1 (B and the unpaired qubits in 0); every
// pair's B in 1 (A in 0, the unpaired qubits in 1); all qubits 1. Each
// unpaired qubit is prepared twice in 0 and twice in 1. The pairs must be
// disjoint.
func PairCalibrationPreparations(n int, pairs [][2]int) ([]pauli.Bits, error) {
	if err := checkPairs(pairs, n); err != nil {
		return nil, err
	}
	out := CalibrationPreparations(n)
	paired := make([]bool, n)
	for _, p := range pairs {
		paired[p[0]], paired[p[1]] = true, true
	}
	onA, onB := pauli.NewBits(n), pauli.NewBits(n)
	for q := range n {
		if !paired[q] {
			onB.Set(q, 1)
		}
	}
	for _, p := range pairs {
		onA.Set(p[0], 1)
		onB.Set(p[1], 1)
	}
	return []pauli.Bits{out[0], onA, onB, out[1]}, nil
}

// ReadCalibrationPairs reads calibration records as [ReadCalibration] does
// and also counts the pairs' 4×4 tables; the pairs must be disjoint and
// inside the file's width.
func ReadCalibrationPairs(r io.Reader, pairs [][2]int) (*Calibration, error) {
	return readCalibration(r, pairs)
}

// ReadCalibrationPairsFile reads the calibration records file at path with
// pairs ([ReadCalibrationPairs]).
func ReadCalibrationPairsFile(path string, pairs [][2]int) (*Calibration, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	c, err := readCalibration(f, pairs)
	if err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	return c, nil
}

// pairBlock is a pair's inverse readout model: for each nonempty subset S
// of the pair the term's mask meets (1: A, 2: B, 3: both), g[S][r] is the
// mitigated value of read r, half[S] = max_r |g[S][r]| and eps[S] the bound
// on the bias of its mean over the calibration's confidence region.
type pairBlock struct {
	a, b int
	lo   int // min(a, b): the qubit a term reading both is mitigated at
	g    [4][4]float64
	half [4]float64
	eps  [4]float64
}

// newPairBlock builds a pair's inverse model (MATH.md §2.1.5) from its
// counts, with Clopper–Pearson intervals at level alpha for each of the 16
// cells.
func newPairBlock(p PairCounts, alpha float64) (pairBlock, error) {
	blk := pairBlock{a: p.A, b: p.B, lo: min(p.A, p.B)}
	var at [16]float64    // Ãᵀ: at[s*4+r] = Ã[r][s] = P̃(read r | prepared s)
	var dev [4][4]float64 // dev[s][r]: largest |A − Ã| in the cell's interval
	for s := range 4 {
		tot := 0
		for r := range 4 {
			tot += p.Counts[s][r]
		}
		if tot == 0 {
			return blk, fmt.Errorf("estimate: %w: pair (%d, %d) was never prepared in %d%d", ErrFormat, p.A, p.B, s&1, s>>1)
		}
		for r := range 4 {
			k := p.Counts[s][r]
			hat := float64(k) / float64(tot)
			lo, hi, err := ClopperPearson(k, tot, alpha)
			if err != nil {
				return blk, err
			}
			at[s*4+r] = hat
			dev[s][r] = max(hi-hat, hat-lo)
		}
	}
	var lu mat.LU
	lu.Factorize(mat.NewDense(4, 4, at[:]))
	if c := lu.Cond(); !(c < 1e12) {
		return blk, fmt.Errorf("estimate: %w: pair (%d, %d): the calibrated 4×4 readout matrix is singular (condition number %.3g): nothing to mitigate", ErrFormat, p.A, p.B, c)
	}
	for S := 1; S < 4; S++ {
		chi := mat.NewVecDense(4, nil)
		for s := range 4 {
			chi.SetVec(s, float64(1-2*(bits.OnesCount(uint(s&S))&1)))
		}
		var g mat.VecDense
		if err := lu.SolveVecTo(&g, false, chi); err != nil {
			return blk, fmt.Errorf("estimate: %w: pair (%d, %d): %v", ErrFormat, p.A, p.B, err)
		}
		lo, hi := math.Inf(1), math.Inf(-1)
		for r := range 4 {
			blk.g[S][r] = g.AtVec(r)
			lo, hi = min(lo, blk.g[S][r]), max(hi, blk.g[S][r])
			blk.half[S] = max(blk.half[S], math.Abs(blk.g[S][r]))
		}
		// MATH.md §2.1.5: the columns of A and Ã both sum to 1, so the
		// bias Σ_r (A − Ã)[r][s]·g(r) is unchanged by subtracting the
		// midrange c of g; bound it cell by cell.
		c := (lo + hi) / 2
		for s := range 4 {
			e := 0.0
			for r := range 4 {
				e += dev[s][r] * math.Abs(blk.g[S][r]-c)
			}
			blk.eps[S] = max(blk.eps[S], e)
		}
	}
	return blk, nil
}

// pairMitigation returns the mitigation of a calibration with pairs
// (MATH.md §2.1.5): every rate interval and every cell interval at
// δ/J, J = 2·(unpaired qubits) + 16·(pairs), so that all hold at once with
// probability at least 1 − δ.
func (c *Calibration) pairMitigation(delta float64) (*Mitigation, error) {
	n := c.Qubits()
	if err := checkPairs(c.pairList(), n); err != nil {
		return nil, err
	}
	j := 2*(n-2*len(c.Pairs)) + 16*len(c.Pairs)
	alpha := delta / float64(j)
	boxes := make([]ReadoutBounds, n)
	pairOf := make([]int32, n)
	for q := range pairOf {
		pairOf[q] = -1
	}
	for k, p := range c.Pairs {
		pairOf[p.A], pairOf[p.B] = int32(k), int32(k)
	}
	for q, k := range c.Counts {
		if pairOf[q] >= 0 {
			continue // read through its pair's model; the box stays [0, 0]
		}
		lo, hi, err := ClopperPearson(k.Flips01, k.Zero, alpha)
		if err != nil {
			return nil, fmt.Errorf("qubit %d: %w", q, err)
		}
		boxes[q].P01 = [2]float64{lo, hi}
		if lo, hi, err = ClopperPearson(k.Flips10, k.One, alpha); err != nil {
			return nil, fmt.Errorf("qubit %d: %w", q, err)
		}
		boxes[q].P10 = [2]float64{lo, hi}
	}
	m, err := NewMitigation(boxes)
	if err != nil {
		return nil, err
	}
	m.pairOf = pairOf
	for _, p := range c.Pairs {
		blk, err := newPairBlock(p, alpha)
		if err != nil {
			return nil, err
		}
		m.pairs = append(m.pairs, blk)
	}
	return m, nil
}

// pairList returns the calibration's pairs.
func (c *Calibration) pairList() [][2]int {
	out := make([][2]int, len(c.Pairs))
	for k, p := range c.Pairs {
		out[k] = [2]int{p.A, p.B}
	}
	return out
}

// Pairs returns the pairs read through a 4×4 model (nil for none).
func (m *Mitigation) Pairs() [][2]int {
	var out [][2]int
	for _, p := range m.pairs {
		out = append(out, [2]int{p.a, p.b})
	}
	return out
}

// pairSubset returns the subset of pair k the mask meets (1: A, 2: B,
// 3: both).
func (m *Mitigation) pairSubset(mask []uint64, k int) int {
	p := &m.pairs[k]
	return int(mask[p.a>>6]>>(p.a&63)&1) | int(mask[p.b>>6]>>(p.b&63)&1)<<1
}

// firstOfPair reports whether q is the lowest qubit of its pair in the
// mask, the one the pair's factor is taken at.
func (m *Mitigation) firstOfPair(mask []uint64, q, k int) (int, bool) {
	s := m.pairSubset(mask, k)
	p := &m.pairs[k]
	switch s {
	case 3:
		return s, q == min(p.a, p.b)
	default:
		return s, true
	}
}

// pairSample is Sample with pairs.
func (m *Mitigation) pairSample(mask []uint64, b pauli.Bits) float64 {
	v := 1.0
	for w, x := range mask {
		bw := b[w]
		for ; x != 0; x &= x - 1 {
			t := bits.TrailingZeros64(x)
			q := w<<6 + t
			k := m.pairOf[q]
			if k < 0 {
				v *= m.f[q][bw>>t&1]
				continue
			}
			p := &m.pairs[k]
			sa := mask[p.a>>6] >> (p.a & 63) & 1
			sb := mask[p.b>>6] >> (p.b & 63) & 1
			if sa&sb == 1 && q != p.lo {
				continue // both read: the factor is taken at the lower qubit
			}
			r := b[p.a>>6]>>(p.a&63)&1 | (b[p.b>>6]>>(p.b&63)&1)<<1
			v *= p.g[sa|sb<<1][r]
		}
	}
	return v
}

// pairFold multiplies, over the blocks the mask meets, single(q) for an
// unpaired qubit and pair(block, S) for a pair.
func (m *Mitigation) pairFold(mask []uint64, single func(q int) float64, pair func(p *pairBlock, s int) float64) float64 {
	v := 1.0
	for w, x := range mask {
		for ; x != 0; x &= x - 1 {
			q := w<<6 + bits.TrailingZeros64(x)
			k := m.pairOf[q]
			if k < 0 {
				v *= single(q)
				continue
			}
			if s, first := m.firstOfPair(mask, q, int(k)); first {
				v *= pair(&m.pairs[k], s)
			}
		}
	}
	return v
}
