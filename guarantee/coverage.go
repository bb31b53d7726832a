package guarantee

import (
	"fmt"
	"math"
	"slices"
	"sync/atomic"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/internal/coverindex"
	"github.com/shotplan/shotplan/internal/workshare"
	"github.com/shotplan/shotplan/pauli"
)

// coverage is a plan reduced to its distinct settings, their multiplicities
// m_Q, the terms each covers (a compressed row list) and every term's cover
// count N_i. It is built by one scan of the Hamiltonian's table per distinct
// setting.
type coverage struct {
	h        *hamiltonian.Hamiltonian
	settings []pauli.Setting // distinct, in order of first use
	mult     []int           // m_Q
	rows     [][]int32       // rows[q] are the terms setting q covers; nil when not stored
	cover    []int           // N_i
	shots    int             // Σ m_Q

	index   *coverindex.Index
	letters *coverindex.Letters // set when the rows are not stored and every setting is local
	b32     []int32             // scratch for rescans
	sorted  bool                // terms returns the terms in table order
	pairs   int64               // stored (setting, term) pairs, set by storeRows

	sp *splitState // the coefficient split, nil for the implicit weights (setSplit)
}

// newCoverage checks a plan against h and builds its coverage. Entries with
// zero shots are ignored.
func newCoverage(h *hamiltonian.Hamiltonian, settings []pauli.Setting, shots []int) (*coverage, error) {
	return newCoverageStoring(h, settings, shots, coverindex.MaxStored)
}

// newCoverageStoring is newCoverage keeping at most maxStored (setting, term)
// cover pairs in memory (4 bytes each); past it, the covered terms of a
// setting are found again by a scan when needed, which costs time instead of
// memory. Tests lower it to exercise the rescans.
func newCoverageStoring(h *hamiltonian.Hamiltonian, settings []pauli.Setting, shots []int, maxStored int) (*coverage, error) {
	if h == nil {
		return nil, fmt.Errorf("guarantee: nil Hamiltonian")
	}
	if len(settings) != len(shots) {
		return nil, fmt.Errorf("guarantee: %d settings but %d shot counts", len(settings), len(shots))
	}
	if h.Len() > math.MaxInt32 {
		return nil, fmt.Errorf("guarantee: %d terms is more than this package indexes", h.Len())
	}
	c := &coverage{h: h, cover: make([]int, h.Len())}
	for k, s := range settings {
		if s.Qubits() != h.Qubits() {
			return nil, fmt.Errorf("guarantee: setting %d (%s) has %d qubits, Hamiltonian has %d", k, s, s.Qubits(), h.Qubits())
		}
		if shots[k] < 0 {
			return nil, fmt.Errorf("guarantee: setting %d (%s) has negative shot count %d", k, s, shots[k])
		}
		if shots[k] == 0 {
			continue
		}
		if c.shots > math.MaxInt-shots[k] {
			return nil, fmt.Errorf("guarantee: setting %d (%s): total shot count overflows", k, s)
		}
		c.shots += shots[k]
	}
	c.settings, c.mult = pauli.MergeSettings(settings, shots)
	// Plans that may cover more pairs than are stored are counted through
	// the transposed settings first; if they do cover more, the sums over
	// pairs go through it too, term by term (see coverindex.Letters). When
	// the pairs are known to fit (fit), they are found and stored on all
	// cores (storeRows).
	fit := int64(len(c.settings))*int64(h.Len()) <= int64(maxStored)
	if !fit && !slices.ContainsFunc(c.settings, func(s pauli.Setting) bool { return !s.IsLocal() }) {
		l := coverindex.NewLetters(h.Qubits(), c.settings, c.mult, h.Len(), h.Table().Words)
		cover, pairs := l.Counts()
		if pairs > int64(maxStored) {
			c.cover, c.letters, c.rows = cover, l, nil
			c.index = coverindex.New(h.Qubits(), h.Len(), h.Table().Words)
			return c, nil
		}
		fit = true
	}
	if fit {
		c.index = coverindex.New(h.Qubits(), h.Len(), h.Table().Words)
		c.storeRows()
		return c, nil
	}
	// Plans with entangled settings that may cover more pairs than are
	// stored: one setting at a time, storing until the cap. The rows are
	// cut from blocks of up to 1<<20 entries, so that no stored index is
	// ever copied by a growing slice.
	c.index = coverindex.New(h.Qubits(), h.Len(), h.Table().Words)
	c.rows = make([][]int32, len(c.settings))
	var block []int32
	stored := 0
	for q, s := range c.settings {
		if c.rows == nil {
			c.b32 = c.covered(c.b32[:0], s)
			for _, i := range c.b32 {
				c.cover[i] += c.mult[q]
			}
			continue
		}
		// Write straight into the block; when it is nearly full, start a
		// new one sized from this far (the rows cut from the old one stay
		// valid).
		if low := min(h.Len(), 1<<12); cap(block)-len(block) < low {
			guess := h.Len()
			if q > 0 {
				guess = stored / q * (len(c.settings) - q)
			}
			block = make([]int32, 0, min(max(guess, low), 1<<20))
		}
		start := len(block)
		block = c.covered(block, s)
		row := block[start:len(block):len(block)]
		for _, i := range row {
			c.cover[i] += c.mult[q]
		}
		if stored += len(row); stored > maxStored {
			c.rows, block = nil, nil
			continue
		}
		c.rows[q] = row
	}
	return c, nil
}

// storeChunk is the number of distinct settings whose covered terms are
// found, and stored in one block, at a time.
const storeChunk = 64

// storeSplitMin is the least work, in distinct settings times terms, that
// storeRows splits among goroutines.
const storeSplitMin = 1 << 22

// loadsSplitMin is the least number of stored pairs whose loads are
// summed on several goroutines.
const loadsSplitMin = 1 << 16

// storeRows finds and stores the terms every distinct setting covers, and
// their cover counts N_i, for a plan whose pairs are known to be stored.
// The settings go by chunks of storeChunk to up to GOMAXPROCS goroutines,
// each with its own query scratch of the index and its own counts; a chunk's
// rows are cut from one block of exactly their length. A setting's row is
// the index's answer whichever goroutine asks, and the counts are integer
// sums, so nothing depends on the split.
func (c *coverage) storeRows() {
	g, m := len(c.settings), c.h.Len()
	c.rows = make([][]int32, g)
	workers := 1
	if int64(g)*int64(m) >= storeSplitMin {
		workers = workshare.Workers(g, storeChunk)
	}
	part := make([][]int, workers)
	var pairs atomic.Int64
	workshare.PerWorker(g, storeChunk, workers, func(t int) func(lo, hi int) {
		w := &coverage{h: c.h, index: c.index}
		cover := c.cover
		if t > 0 {
			w.index = c.index.Clone()
			cover = make([]int, m)
			part[t] = cover
		}
		var buf []int32
		var end [storeChunk + 1]int
		return func(lo, hi int) {
			buf = buf[:0]
			for q := lo; q < hi; q++ {
				buf = w.covered(buf, c.settings[q])
				end[q-lo+1] = len(buf)
			}
			block := make([]int32, len(buf))
			copy(block, buf)
			pairs.Add(int64(len(buf)))
			for q := lo; q < hi; q++ {
				row := block[end[q-lo]:end[q-lo+1]:end[q-lo+1]]
				c.rows[q] = row
				for _, i := range row {
					cover[i] += c.mult[q]
				}
			}
		}
	})
	c.pairs = pairs.Load()
	for _, p := range part[1:] {
		for i, v := range p {
			c.cover[i] += v
		}
	}
}

// terms returns the indices of the terms distinct setting q covers. The
// slice is valid until the next call.
func (c *coverage) terms(q int) []int32 {
	if c.rows != nil {
		return c.rows[q]
	}
	c.b32 = c.covered(c.b32[:0], c.settings[q])
	if c.sorted {
		slices.Sort(c.b32)
	}
	return c.b32
}

// sortTerms puts the terms of every setting in table order from now on:
// the stored lists are sorted in place, rescans as they are made.
func (c *coverage) sortTerms() {
	for _, r := range c.rows {
		slices.Sort(r)
	}
	c.sorted = true
}

// weights returns a_i = |h_i|/N_i, zero for uncovered terms.
func (c *coverage) weights() []float64 {
	a := make([]float64, len(c.cover))
	for i, n := range c.cover {
		if n > 0 {
			a[i] = math.Abs(c.h.Coeff(i)) / float64(n)
		}
	}
	return a
}

// loads returns s_Q = Σ_{i ◁ Q, keep} a_i for every distinct setting, where a
// nil drop keeps every term.
func (c *coverage) loads(a []float64, drop []bool) []float64 {
	if c.letters != nil {
		return c.letters.SumOver(a, drop)
	}
	s := make([]float64, len(c.settings))
	sum := func(lo, hi int) {
		for q := lo; q < hi; q++ {
			sum := 0.0
			for _, i := range c.terms(q) {
				if drop == nil || !drop[i] {
					sum += a[i]
				}
			}
			s[q] = sum
		}
	}
	if c.rows == nil || c.pairs < loadsSplitMin {
		// Rescans share the coverage's scratch: one goroutine; so do
		// small plans.
		sum(0, len(s))
		return s
	}
	// Each s_Q is its own sum, in the order of its stored row, whichever
	// goroutine adds it.
	workshare.Chunks(len(s), 256, sum)
	return s
}

// termLoads returns load_i = Σ_{Q ∋ i} m_Q s_Q for every term, the
// settings added in their order.
func (c *coverage) termLoads(s []float64) []float64 {
	f := make([]float64, len(s))
	for q := range s {
		f[q] = float64(c.mult[q]) * s[q]
	}
	if c.letters != nil {
		return c.letters.Gather(f)
	}
	load := make([]float64, c.h.Len())
	for q := range c.settings {
		for _, i := range c.terms(q) {
			load[i] += f[q]
		}
	}
	return load
}

// variance returns V = Σ_Q m_Q s_Q² of MATH.md §3.1.
func (c *coverage) variance(s []float64) float64 {
	v := 0.0
	for q, sq := range s {
		v += float64(c.mult[q]) * sq * sq
	}
	return v
}

// planCoverage returns the coverage of a plan with at least one shot,
// with the plan's coefficient split (MATH.md §2.5) if it has one.
func planCoverage(h *hamiltonian.Hamiltonian, p *allocate.Plan) (*coverage, error) {
	c, err := newCoverage(h, p.Settings, p.Shots)
	if err != nil {
		return nil, err
	}
	if c.shots == 0 {
		return nil, fmt.Errorf("guarantee: the plan has no shots")
	}
	if err := c.setSplit(p.Split); err != nil {
		return nil, err
	}
	return c, nil
}
