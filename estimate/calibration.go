package estimate

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"math/bits"
	"math/rand/v2"
	"os"
	"strings"

	"gonum.org/v1/gonum/stat/distuv"

	"github.com/shotplan/shotplan/internal/atomicfile"
	"github.com/shotplan/shotplan/pauli"
)

// Readout calibration (MATH.md §2.1.1). Under the independent-qubit readout
// model of §2.1 a shot on a prepared computational-basis state reads every
// qubit once, and qubit q's read bit flips with P01_q if the qubit was
// prepared in 0 and with P10_q if it was prepared in 1. So the two
// preparations all-0 and all-1 give every qubit one sample of each of its two
// rates per shot: this is the minimal set [CalibrationPreparations] returns.
// Any other basis states work too; each shot counts toward the rate its
// prepared bit selects.

// QubitCounts holds one qubit's calibration counts: Zero shots read it after
// it was prepared in 0, of which Flips01 read 1; One shots after it was
// prepared in 1, of which Flips10 read 0.
type QubitCounts struct {
	Zero, Flips01 int
	One, Flips10  int
}

// Calibration holds the calibration counts of every qubit, and of the
// pairs read through a 4×4 model if any ([NewPairCalibration], MATH.md
// §2.1.5).
type Calibration struct {
	Counts []QubitCounts // Counts[q] for qubit q
	Pairs  []PairCounts  // disjoint pairs; nil for independent qubits
}

// NewCalibration returns an empty calibration of n qubits.
func NewCalibration(n int) *Calibration {
	return &Calibration{Counts: make([]QubitCounts, n)}
}

// Qubits returns the qubit count.
func (c *Calibration) Qubits() int { return len(c.Counts) }

// Add counts one calibration shot: the basis state prepared and the outcome
// read, both n-qubit bit-strings.
func (c *Calibration) Add(prepared, read pauli.Bits) {
	for q := range c.Counts {
		p, r := prepared.Get(q), read.Get(q)
		k := &c.Counts[q]
		if p == 0 {
			k.Zero++
			k.Flips01 += int(r)
		} else {
			k.One++
			k.Flips10 += int(r ^ 1)
		}
	}
	c.addPairs(prepared, read)
}

// CalibrationPreparations returns the minimal set of preparations: all
// qubits in 0 and all qubits in 1.
func CalibrationPreparations(n int) []pauli.Bits {
	zero, one := pauli.NewBits(n), pauli.NewBits(n)
	for q := range n {
		one.Set(q, 1)
	}
	return []pauli.Bits{zero, one}
}

// SimulateCalibration returns the calibration from shots shots of each of
// the preparations of [CalibrationPreparations] read through the readout
// error rates (one per qubit; flips independent per qubit and shot, as in
// [Simulator]). The seed fixes the flips.
func SimulateCalibration(rates []Readout, shots int, seed uint64) (*Calibration, error) {
	n := len(rates)
	if err := checkReadout(rates, n, "SimulateCalibration"); err != nil {
		return nil, err
	}
	if shots < 0 || int64(shots) > maxRunShots {
		return nil, fmt.Errorf("estimate: %w: SimulateCalibration: %d shots", ErrFormat, shots)
	}
	rng := rand.New(rand.NewPCG(seed, 0x6361_6c69_6272_6174))
	c := NewCalibration(n)
	for q, e := range rates {
		k := &c.Counts[q]
		k.Zero, k.One = shots, shots
		k.Flips01 = binomial(rng, shots, e.P01)
		k.Flips10 = binomial(rng, shots, e.P10)
	}
	return c, nil
}

// binomial draws a Binomial(n, p) count by n Bernoulli draws.
func binomial(rng *rand.Rand, n int, p float64) int {
	k := 0
	if p <= 0 {
		return 0
	}
	for range n {
		if rng.Float64() < p {
			k++
		}
	}
	return k
}

// ClopperPearson returns the exact two-sided binomial confidence interval of
// Clopper & Pearson (1934) for k successes in n trials at confidence 1 − α:
// lo is the α/2 quantile of Beta(k, n−k+1) (0 for k = 0) and hi the 1 − α/2
// quantile of Beta(k+1, n−k) (1 for k = n). For n = 0 it returns [0, 1].
// It covers the true rate with probability at least 1 − α for every rate.
func ClopperPearson(k, n int, alpha float64) (lo, hi float64, err error) {
	if !(alpha > 0 && alpha < 1) {
		return 0, 0, fmt.Errorf("estimate: %w: ClopperPearson: α = %v outside (0, 1)", ErrFormat, alpha)
	}
	if n < 0 || k < 0 || k > n {
		return 0, 0, fmt.Errorf("estimate: %w: ClopperPearson: %d successes in %d trials", ErrFormat, k, n)
	}
	lo, hi = 0, 1
	if k > 0 {
		lo = distuv.Beta{Alpha: float64(k), Beta: float64(n - k + 1)}.Quantile(alpha / 2)
	}
	if k < n {
		hi = distuv.Beta{Alpha: float64(k + 1), Beta: float64(n - k)}.Quantile(1 - alpha/2)
	}
	return lo, hi, nil
}

// ReadoutBounds is a box of one qubit's readout rates: P01 in
// [P01[0], P01[1]] and P10 in [P10[0], P10[1]].
type ReadoutBounds struct {
	P01, P10 [2]float64
}

// Bounds returns a Clopper–Pearson interval for each of the 2n rates, each
// at confidence 1 − δ/(2n), so that with probability at least 1 − δ every
// rate lies in its interval at once (a union bound over the 2n intervals).
// It describes every qubit by its own two rates and ignores Pairs;
// [Calibration.Mitigation] uses the pairs' 4×4 models.
func (c *Calibration) Bounds(delta float64) ([]ReadoutBounds, error) {
	if !(delta > 0 && delta < 1) {
		return nil, fmt.Errorf("estimate: %w: calibration δ = %v outside (0, 1)", ErrFormat, delta)
	}
	alpha := delta / float64(2*max(1, len(c.Counts)))
	out := make([]ReadoutBounds, len(c.Counts))
	for q, k := range c.Counts {
		lo, hi, err := ClopperPearson(k.Flips01, k.Zero, alpha)
		if err != nil {
			return nil, fmt.Errorf("qubit %d: %w", q, err)
		}
		out[q].P01 = [2]float64{lo, hi}
		if lo, hi, err = ClopperPearson(k.Flips10, k.One, alpha); err != nil {
			return nil, fmt.Errorf("qubit %d: %w", q, err)
		}
		out[q].P10 = [2]float64{lo, hi}
	}
	return out, nil
}

// Mitigation returns the mitigation (MATH.md §2.1.1) made from the
// calibration's intervals at δ ([Calibration.Bounds]): with probability at
// least 1 − δ every true rate lies in the boxes it was made from. With
// pairs the pairs are read through their 4×4 models and every interval is
// at δ/J, J = 2·(unpaired qubits) + 16·(pairs) (MATH.md §2.1.5).
func (c *Calibration) Mitigation(delta float64) (*Mitigation, error) {
	if !(delta > 0 && delta < 1) {
		return nil, fmt.Errorf("estimate: %w: calibration δ = %v outside (0, 1)", ErrFormat, delta)
	}
	if len(c.Pairs) > 0 {
		return c.pairMitigation(delta)
	}
	b, err := c.Bounds(delta)
	if err != nil {
		return nil, err
	}
	return NewMitigation(b)
}

// KnownRates returns the degenerate boxes of rates known exactly.
func KnownRates(r []Readout) []ReadoutBounds {
	out := make([]ReadoutBounds, len(r))
	for q, e := range r {
		out[q] = ReadoutBounds{P01: [2]float64{e.P01, e.P01}, P10: [2]float64{e.P10, e.P10}}
	}
	return out
}

// Mitigation is the inverse of the independent-qubit readout model with
// plug-in rates at the centres of boxes of rates (MATH.md §2.1.1). A term read
// on the qubits of a mask M (its support for a local setting, its Z-image
// for an entangled one) gets the sample Π_{q∈M} f_q(r_q) with
// f_q(0) = (1 − ã_q)/λ̃_q, f_q(1) = (−1 − ã_q)/λ̃_q, λ̃ = 1 − P̃01 − P̃10 and
// ã = P̃10 − P̃01 the plug-in values. With the true rates inside the boxes the
// sample's mean is within [Mitigation.Bias] of the ideal one, and
// |sample| ≤ [Mitigation.Half].
type Mitigation struct {
	rates  []Readout
	f      [][2]float64 // f[q][bit]
	eps    []float64    // per-qubit relative error bound ε_q
	half   []float64    // max_bit |f_q(bit)|
	bounds []ReadoutBounds
	// With pairs (MATH.md §2.1.5): pairOf[q] is the pair of qubit q or
	// −1, and pairs the pairs' inverse models. Nil without pairs.
	pairOf []int32
	pairs  []pairBlock
}

// NewMitigation returns the mitigation for boxes of rates, one per qubit.
// Every box must lie in [0, 1] with lower ends at most upper ends, and the
// plug-in rates must leave λ̃_q = 1 − P̃01 − P̃10 > 0.
func NewMitigation(b []ReadoutBounds) (*Mitigation, error) {
	m := &Mitigation{
		rates: make([]Readout, len(b)), f: make([][2]float64, len(b)),
		eps: make([]float64, len(b)), half: make([]float64, len(b)),
		bounds: append([]ReadoutBounds(nil), b...),
	}
	for q, x := range b {
		for _, iv := range [][2]float64{x.P01, x.P10} {
			if !(iv[0] >= 0 && iv[0] <= iv[1] && iv[1] <= 1) {
				return nil, fmt.Errorf("estimate: %w: qubit %d: rate interval [%v, %v] is not inside [0, 1]", ErrFormat, q, iv[0], iv[1])
			}
		}
		p01 := (x.P01[0] + x.P01[1]) / 2
		p10 := (x.P10[0] + x.P10[1]) / 2
		lam := 1 - p01 - p10
		if !(lam > 0) {
			return nil, fmt.Errorf("estimate: %w: qubit %d: P01 + P10 = %v leaves nothing to mitigate (need < 1)", ErrFormat, q, p01+p10)
		}
		a := p10 - p01
		m.rates[q] = Readout{P01: p01, P10: p10}
		m.f[q] = [2]float64{(1 - a) / lam, (-1 - a) / lam}
		m.half[q] = (1 + math.Abs(a)) / lam
		// MATH.md §2.1.1: f_q has mean v + e with |e| ≤ 2·max|P̃ − P|/λ̃.
		d := max(x.P01[1]-x.P01[0], x.P10[1]-x.P10[0]) / 2
		m.eps[q] = 2 * d / lam
	}
	return m, nil
}

// Qubits returns the qubit count.
func (m *Mitigation) Qubits() int { return len(m.rates) }

// Rates returns the plug-in rates (the centres of the boxes); a qubit of
// a pair (MATH.md §2.1.5) is read through its pair's 4×4 model and has
// zero rates and box here.
func (m *Mitigation) Rates() []Readout { return append([]Readout(nil), m.rates...) }

// Bounds returns the boxes the mitigation was made from.
func (m *Mitigation) Bounds() []ReadoutBounds { return append([]ReadoutBounds(nil), m.bounds...) }

// Sample returns the mitigated sample Π_{q∈mask} f_q(b_q) of a term read on
// the qubits of mask (words as [pauli.String.Words] gives) from outcome b.
func (m *Mitigation) Sample(mask []uint64, b pauli.Bits) float64 {
	if m.pairOf != nil {
		return m.pairSample(mask, b)
	}
	v := 1.0
	for w, x := range mask {
		bw := b[w]
		for ; x != 0; x &= x - 1 {
			t := bits.TrailingZeros64(x)
			v *= m.f[w<<6+t][bw>>t&1]
		}
	}
	return v
}

// Half returns the largest |sample| of a term read on mask: Π_{q∈mask}
// (1 + |ã_q|)/λ̃_q.
func (m *Mitigation) Half(mask []uint64) float64 {
	if m.pairOf != nil {
		return m.pairFold(mask, func(q int) float64 { return m.half[q] }, func(p *pairBlock, s int) float64 { return p.half[s] })
	}
	v := 1.0
	for w, x := range mask {
		for ; x != 0; x &= x - 1 {
			v *= m.half[w<<6+bits.TrailingZeros64(x)]
		}
	}
	return v
}

// Bias returns the bound Π_{q∈mask}(1 + ε_q) − 1 on |E[sample] − ideal| of
// a term read on mask when the true rates lie in the boxes (MATH.md §2.1.1);
// ε_q = 2·max(half-widths of qubit q's two intervals)/λ̃_q.
func (m *Mitigation) Bias(mask []uint64) float64 {
	if m.pairOf != nil {
		return m.pairFold(mask, func(q int) float64 { return 1 + m.eps[q] }, func(p *pairBlock, s int) float64 { return 1 + p.eps[s] }) - 1
	}
	v := 1.0
	for w, x := range mask {
		for ; x != 0; x &= x - 1 {
			v *= 1 + m.eps[w<<6+bits.TrailingZeros64(x)]
		}
	}
	return v - 1
}

// calibrationHeader is the first line of a calibration records file.
const calibrationHeader = "prepared,outcome"

// maxCalibrationLine caps the length of one line of a calibration file.
const maxCalibrationLine = 1 << 16

// ReadCalibration reads calibration records: the header line
// "prepared,outcome", then one line per shot with the prepared basis state
// and the outcome read, both bit-strings of '0' and '1', qubit 0 first, of
// one width for the whole file:
//
//	prepared,outcome
//	0000,0100
//	1111,1101
//
// Blank lines are skipped. It stops at the first bad line and returns a
// [*LineError] naming it; lines longer than 64 KiB are refused.
func ReadCalibration(r io.Reader) (*Calibration, error) {
	return readCalibration(r, nil)
}

// readCalibration is ReadCalibration, also counting pairs if any.
func readCalibration(r io.Reader, pairs [][2]int) (*Calibration, error) {
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 0, 4096), maxCalibrationLine)
	line := 0
	var c *Calibration
	var prep, read pauli.Bits
	for sc.Scan() {
		line++
		text := strings.TrimSpace(strings.TrimSuffix(sc.Text(), "\r"))
		if line == 1 {
			if text != calibrationHeader {
				return nil, &LineError{Reader: "estimate", Line: line, Reason: fmt.Sprintf("want the header %q, got %q", calibrationHeader, clip(text))}
			}
			continue
		}
		if text == "" {
			continue
		}
		p, o, ok := strings.Cut(text, ",")
		if !ok || strings.Contains(o, ",") {
			return nil, &LineError{Reader: "estimate", Line: line, Reason: "want two fields: prepared,outcome"}
		}
		p, o = strings.TrimSpace(p), strings.TrimSpace(o)
		if len(p) == 0 {
			return nil, &LineError{Reader: "estimate", Line: line, Reason: "empty prepared state"}
		}
		if len(o) != len(p) {
			return nil, &LineError{Reader: "estimate", Line: line, Reason: fmt.Sprintf("outcome of %d bits for a prepared state of %d", len(o), len(p))}
		}
		if c == nil {
			if why := pairsProblem(pairs, len(p)); why != "" {
				return nil, &LineError{Reader: "estimate", Line: line, Reason: fmt.Sprintf("the file has %d qubits, which the pairs do not fit: %s", len(p), why)}
			}
			c, _ = NewPairCalibration(len(p), pairs)
			prep, read = pauli.NewBits(len(p)), pauli.NewBits(len(p))
		} else if len(p) != c.Qubits() {
			return nil, &LineError{Reader: "estimate", Line: line, Reason: fmt.Sprintf("%d qubits, earlier lines have %d", len(p), c.Qubits())}
		}
		if err := fillBits(prep, p); err != nil {
			return nil, &LineError{Reader: "estimate", Line: line, Reason: "prepared state: " + err.Error()}
		}
		if err := fillBits(read, o); err != nil {
			return nil, &LineError{Reader: "estimate", Line: line, Reason: "outcome: " + err.Error()}
		}
		c.Add(prep, read)
	}
	if err := sc.Err(); err != nil {
		if err == bufio.ErrTooLong {
			return nil, &LineError{Reader: "estimate", Line: line + 1, Reason: fmt.Sprintf("line longer than %d bytes", maxCalibrationLine)}
		}
		return nil, fmt.Errorf("estimate: reading calibration: %w", err)
	}
	if line == 0 {
		return nil, &LineError{Reader: "estimate", Line: 1, Reason: fmt.Sprintf("empty file: want the header %q", calibrationHeader)}
	}
	if c == nil {
		return nil, fmt.Errorf("estimate: %w: calibration file has no shots", ErrFormat)
	}
	return c, nil
}

// ReadCalibrationFile reads the calibration records file at path.
func ReadCalibrationFile(path string) (*Calibration, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	c, err := ReadCalibration(f)
	if err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	return c, nil
}

// WriteCalibrationShots writes simulated calibration records in the form
// [ReadCalibration] reads: shots outcomes of each preparation of
// [CalibrationPreparations], read through the readout error rates (one per
// qubit, at least one qubit). The seed fixes the flips.
func WriteCalibrationShots(w io.Writer, rates []Readout, shots int, seed uint64) error {
	n := len(rates)
	if n == 0 {
		return fmt.Errorf("estimate: %w: WriteCalibrationShots: no qubits", ErrFormat)
	}
	if err := checkReadout(rates, n, "WriteCalibrationShots"); err != nil {
		return err
	}
	if shots < 0 || int64(shots) > maxRunShots {
		return fmt.Errorf("estimate: %w: WriteCalibrationShots: %d shots", ErrFormat, shots)
	}
	rng := rand.New(rand.NewPCG(seed, 0x6361_6c69_6272_6174))
	bw := bufio.NewWriter(w)
	bw.WriteString(calibrationHeader + "\n")
	buf := make([]byte, 0, 2*n+2)
	read := pauli.NewBits(n)
	for _, prep := range CalibrationPreparations(n) {
		ptext := prep.Format(n)
		for range shots {
			copy(read, prep)
			for q, e := range rates {
				p := e.P01
				if prep.Get(q) == 1 {
					p = e.P10
				}
				if p > 0 && rng.Float64() < p {
					read.Set(q, read.Get(q)^1)
				}
			}
			buf = append(buf[:0], ptext...)
			buf = append(buf, ',')
			buf = read.AppendText(buf, n)
			buf = append(buf, '\n')
			bw.Write(buf)
		}
	}
	return bw.Flush()
}

// WriteCalibrationShotsFile writes [WriteCalibrationShots] to path
// atomically.
func WriteCalibrationShotsFile(path string, rates []Readout, shots int, seed uint64) error {
	return atomicfile.Write(path, func(w io.Writer) error { return WriteCalibrationShots(w, rates, shots, seed) })
}

// fillBits sets b from a text bit-string, qubit 0 first.
func fillBits(b pauli.Bits, s string) error {
	for q := 0; q < len(s); q++ {
		switch s[q] {
		case '0':
			b.Set(q, 0)
		case '1':
			b.Set(q, 1)
		default:
			return fmt.Errorf("character %q at position %d is not 0 or 1", s[q], q+1)
		}
	}
	return nil
}

// clip shortens s for an error message.
func clip(s string) string {
	if len(s) > 40 {
		return s[:40] + "..."
	}
	return s
}
