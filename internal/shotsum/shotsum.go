// Package shotsum accumulates, shot by shot, the running sums from which the
// grouped estimate of a fixed plan (MATH.md §2) and its data bounds (§4.3,
// §4.7) are computed, in memory that depends on the plan and the
// Hamiltonian but not on the number of shots (MATH.md §4.10).
//
// Package estimate feeds it (estimate.Stream) and package guarantee reads
// it (guarantee.EmpiricalStream). Settings may be local or entangled
// (pauli.NewFamilySetting): a term covered by an entangled setting is read
// through its image under the setting's circuit, sign·(−1)^(parity of the
// outcome on the image's Z support) (MATH.md §8, §4.10). Every per-shot
// value is computed with the same floating-point operations in the same
// order as the in-memory path, so that the two agree to the last bit
// wherever the in-memory path is itself a running sum.
package shotsum

import (
	"encoding/binary"
	"fmt"
	"math"
	"math/bits"
	"slices"
	"unsafe"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/internal/coverindex"
	"github.com/shotplan/shotplan/pauli"
)

// Folds is the number of folds of the residual data bound: shot n, counted
// through the groups in the order their settings first appear and through
// each group's shots in order, belongs to fold n mod Folds (as
// guarantee's residual form).
const Folds = 2

// batch is the number of shots of one setting processed together: their
// outcomes are bit-sliced, one word per qubit, so that a term's 64
// parities cost one XOR per support qubit.
const batch = 64

// Group is one distinct setting of the plan and the sums of its shots so
// far. Z is a shot's value Σ_i A_i s_i over the setting's covered terms
// with non-zero weight, summed in table order.
type Group struct {
	Setting pauli.Setting
	// Planned is the plan's shot count and T the shots added (and
	// processed) so far.
	Planned, T int
	// Rows are the covered terms in table order; Kept the ones with a
	// non-zero weight and Coef their weights. For a local setting they are
	// nil when the plan covers more pairs than are stored: read them
	// through Sums.Lists. An entangled setting always keeps them.
	Rows []int32
	Kept []int32
	Coef []float64
	// Half is Σ|Coef| in table order, the bound on |Z|.
	Half float64
	// Seen reports that a shot of the setting was added; Off is then the
	// number of shots of the groups that appeared before it (their planned
	// counts): the index of its first shot in group order.
	Seen bool
	Off  int
	// Shift is the first Z; Sum and SumSq are Σ (Z − Shift) and
	// Σ (Z − Shift)² over the shots in order.
	Shift, Sum, SumSq float64
	// FoldT, FoldSum and FoldSq are the count, Σ (Z − Shift) and
	// Σ (Z − Shift)² of the shots of each fold.
	FoldT           [Folds]int
	FoldSum, FoldSq [Folds]float64
	// One is the outcome of the group's shot when the plan asks for one.
	One pauli.Bits
	// RowOnes[k] is the number of −1 samples of term Rows[k] in the
	// group's shots, kept when CountRows was called (nil otherwise).
	RowOnes []int64

	// For an entangled setting, term Rows[k] is read through its image
	// U P U† = ±Z' under the setting's circuit (MATH.md §8): its sample is
	// −1 when the parity of the outcome on the qubits
	// imgIdx[imgOff[k]:imgOff[k+1]] (the support of Z') differs from bit k
	// of imgNeg (set for the sign −1). Nil for a local setting, whose terms
	// read the parity on their own support.
	imgOff []int32
	imgIdx []uint16
	imgNeg []uint64

	pend  []uint64 // outcomes waiting for the next batch, W words each
	npend int
	// Counts of Z-cache lookups and hits; the cache is no longer asked
	// for this group once it has missed too often (noCache).
	zLook, zHit int
	noCache     bool
}

// Sums is the accumulator. Its exported fields are read-only to callers.
type Sums struct {
	H      *hamiltonian.Hamiltonian
	Qubits int
	W      int // words per outcome
	// Cover[i] is N_i of the plan; A[i] the weight of term i in Z (zero for
	// terms left out), set by SetWeights before the first shot.
	Cover []int
	A     []float64
	// Groups are the plan's distinct settings in plan order; Order lists
	// them in the order their first shot arrived.
	Groups []*Group
	Order  []int32
	// Ones[i] is the number of −1 samples of term i; FoldOnes and FoldCnt
	// split samples and −1 samples by fold.
	Ones              []int64
	FoldOnes, FoldCnt [Folds][]int64
	// Shots is the number of shots added.
	Shots int
	// Mitigated reports weights scaled for readout mitigation, and Exclude
	// the terms the caller left out (nil for none).
	Mitigated bool
	Exclude   []bool

	ci       *coverindex.Index // finds the lists again when they are not stored
	stored   bool
	weighted bool    // SetWeights has run
	lrows    []int32 // scratch of Lists
	lkept    []int32
	lcoef    []float64
	index    map[string]int32 // by appendKey
	cache    [256]cacheEntry
	key      []byte
	nextOff  int
	qOff     []int32  // term i's support qubits are qIdx[qOff[i]:qOff[i+1]]
	qIdx     []uint16 //
	slice    []uint64 // one word per qubit: bit j is qubit q of shot j of the batch
	z        [batch]float64
	zc       zCache
}

// MaxStored is the number of (setting, term) cover pairs an accumulator
// keeps; past it the lists are found again per batch of shots. Tests lower
// it.
var MaxStored = coverindex.MaxStored

// cacheEntry remembers the group of the setting whose words start at p.
type cacheEntry struct {
	p uintptr
	g int32
}

// New returns the accumulator of the plan that measures settings[k] for
// shots[k] shots (repeated settings merged, entries with zero shots
// ignored). Local and entangled settings are both taken; an entangled
// setting's covered terms and their images under its circuit are found
// here, once, and kept whatever MaxStored says (4 bytes a pair, 2 a qubit
// of an image). It refuses settings of the wrong width and negative counts,
// naming the setting.
func New(h *hamiltonian.Hamiltonian, settings []pauli.Setting, shots []int) (*Sums, error) {
	if h == nil {
		return nil, fmt.Errorf("nil Hamiltonian")
	}
	if len(settings) != len(shots) {
		return nil, fmt.Errorf("%d settings but %d shot counts", len(settings), len(shots))
	}
	n := h.Qubits()
	if n > math.MaxUint16 {
		return nil, fmt.Errorf("%d qubits is more than a stream handles", n)
	}
	if h.Len() > math.MaxInt32 {
		return nil, fmt.Errorf("%d terms is more than a stream handles", h.Len())
	}
	for k, s := range settings {
		if s.Qubits() != n {
			return nil, fmt.Errorf("setting %d (%s) has %d qubits, Hamiltonian has %d", k, s, s.Qubits(), n)
		}
		if shots[k] < 0 {
			return nil, fmt.Errorf("setting %d (%s) has negative shot count %d", k, s, shots[k])
		}
	}
	distinct, mult := pauli.MergeSettings(settings, shots)
	m := h.Len()
	s := &Sums{
		H: h, Qubits: n, W: pauli.Words(n), Cover: make([]int, m), A: make([]float64, m),
		Ones: make([]int64, m), index: make(map[string]int32, len(distinct)),
		slice: make([]uint64, n),
	}
	for k := range Folds {
		s.FoldOnes[k] = make([]int64, m)
		s.FoldCnt[k] = make([]int64, m)
	}
	tab := h.Table()
	s.qOff = make([]int32, m+1)
	for i := range m {
		x, z := tab.Words(i)
		for k := range x {
			for u := x[k] | z[k]; u != 0; u &= u - 1 {
				s.qIdx = append(s.qIdx, uint16(k<<6+bits.TrailingZeros64(u)))
			}
		}
		s.qOff[i+1] = int32(len(s.qIdx))
	}
	s.ci = coverindex.New(n, m, tab.Words)
	s.stored = true
	total := 0
	var rows []int32
	for q, st := range distinct {
		g := &Group{Setting: st, Planned: mult[q]}
		if st.IsLocal() {
			x, z := st.Words()
			rows = s.ci.AppendCovered(rows[:0], x, z)
		} else {
			var err error
			if rows, err = g.images(rows[:0], tab); err != nil {
				return nil, err
			}
		}
		for _, i := range rows {
			s.Cover[i] += mult[q]
		}
		// Past the cap the lists of local settings are found again when
		// needed (a scan per batch of shots): time instead of memory.
		if total += len(rows); total > MaxStored && s.stored {
			s.stored = false
			for _, g := range s.Groups {
				if !s.keeps(g) {
					g.Rows = nil
				}
			}
		}
		if s.keeps(g) {
			// An entangled setting's rows are in table order already, and
			// its images follow that order.
			g.Rows = slices.Clone(rows)
			if st.IsLocal() {
				slices.Sort(g.Rows)
			}
		}
		s.Groups = append(s.Groups, g)
		s.index[string(appendKey(nil, st))] = int32(q)
	}
	return s, nil
}

// images appends to rows the terms that g's entangled setting covers, in
// table order ([pauli.Table.Covered]), and keeps the image of each under
// the setting's circuit ([pauli.Setting.Diagonal]) as the qubits of its
// Z support and its sign.
func (g *Group) images(rows []int32, tab *pauli.Table) ([]int32, error) {
	st := g.Setting
	if tab.Qubits() > math.MaxUint16+1 {
		return nil, fmt.Errorf("setting %s: %d qubits, more than the %d an entangled setting's images are kept for", st, tab.Qubits(), math.MaxUint16+1)
	}
	cov := tab.Covered(nil, st)
	g.imgOff = make([]int32, 1, len(cov)+1)
	g.imgNeg = make([]uint64, (len(cov)+63)/64)
	for k, i := range cov {
		if k > 0 && i <= cov[k-1] {
			return nil, fmt.Errorf("setting %s: covered terms not in table order", st)
		}
		z, sign, ok := st.Diagonal(tab.At(i))
		if !ok {
			return nil, fmt.Errorf("setting %s: term %d is listed as covered but has no Z image", st, i)
		}
		_, zw := z.Words()
		for w, v := range zw {
			for ; v != 0; v &= v - 1 {
				g.imgIdx = append(g.imgIdx, uint16(w<<6+bits.TrailingZeros64(v)))
			}
		}
		if len(g.imgIdx) > math.MaxInt32 {
			return nil, fmt.Errorf("setting %s: the images of its %d terms are more than a stream handles", st, len(cov))
		}
		g.imgOff = append(g.imgOff, int32(len(g.imgIdx)))
		if sign < 0 {
			g.imgNeg[k>>6] |= 1 << (k & 63)
		}
		rows = append(rows, int32(i))
	}
	return rows, nil
}

// appendKey appends a map key of setting st among settings of one width
// that a lookup can build without allocating: the words of a local
// setting, [pauli.Setting.Key] of an entangled one (whose length differs
// from every local key's).
func appendKey(dst []byte, st pauli.Setting) []byte {
	if !st.IsLocal() {
		return append(dst, st.Key()...)
	}
	x, z := st.Words()
	for _, v := range x {
		dst = binary.LittleEndian.AppendUint64(dst, v)
	}
	for _, v := range z {
		dst = binary.LittleEndian.AppendUint64(dst, v)
	}
	return dst
}

// SetWeights sets the weight A_i of every term in Z (zero leaves a term
// out of Z; its samples are still counted). It must be called before the
// first shot.
func (s *Sums) SetWeights(a []float64) {
	copy(s.A, a)
	s.weighted = false
	for _, g := range s.Groups {
		_, kept, coef := s.Lists(g)
		g.Half = 0
		for _, c := range coef {
			g.Half += math.Abs(c)
		}
		if s.keeps(g) {
			g.Kept, g.Coef = slices.Clone(kept), slices.Clone(coef)
		}
	}
	s.weighted = true
}

// keeps reports whether group g keeps its own lists (Rows, Kept, Coef):
// every group while the plan's pairs are stored, an entangled one always.
func (s *Sums) keeps(g *Group) bool { return s.stored || !g.Setting.IsLocal() }

// Stored reports whether the groups keep their covered terms (Rows, Kept,
// Coef); past MaxStored cover pairs those of local settings are found again
// when needed (entangled settings keep theirs).
func (s *Sums) Stored() bool { return s.stored }

// SetGroupWeights sets group g's own weights, after SetWeights and before
// the first shot: coef[k] is the weight of term g.Rows[k] in g's Z (zero
// leaves it out of g's Z), for a plan whose estimate weighs a term
// differently in different settings. Only with stored lists; it panics
// otherwise, or if coef does not match g.Rows.
func (s *Sums) SetGroupWeights(g *Group, coef []float64) {
	if !s.stored || len(coef) != len(g.Rows) {
		panic("shotsum: SetGroupWeights without stored lists or with the wrong length")
	}
	g.Kept, g.Coef, g.Half = g.Kept[:0], g.Coef[:0], 0
	for k, c := range coef {
		if c != 0 {
			g.Kept = append(g.Kept, g.Rows[k])
			g.Coef = append(g.Coef, c)
			g.Half += math.Abs(c)
		}
	}
}

// CountRows makes every group count the −1 samples of each of its terms
// (Group.RowOnes), before the first shot. Only with stored lists; it
// panics otherwise.
func (s *Sums) CountRows() {
	if !s.stored {
		panic("shotsum: CountRows without stored lists")
	}
	for _, g := range s.Groups {
		g.RowOnes = make([]int64, len(g.Rows))
	}
}

// Lists returns g's covered terms in table order, those with a non-zero
// weight and their weights: g's own lists when they are stored, else
// lists found again through the cover index, valid until the next call.
func (s *Sums) Lists(g *Group) (rows, kept []int32, coef []float64) {
	own := s.keeps(g)
	if own && s.weighted {
		return g.Rows, g.Kept, g.Coef
	}
	if own {
		rows = g.Rows
	} else {
		x, z := g.Setting.Words()
		s.lrows = s.ci.AppendCovered(s.lrows[:0], x, z)
		slices.Sort(s.lrows)
		rows = s.lrows
	}
	s.lkept, s.lcoef = s.lkept[:0], s.lcoef[:0]
	for _, i := range rows {
		if c := s.A[i]; c != 0 {
			s.lkept = append(s.lkept, i)
			s.lcoef = append(s.lcoef, c)
		}
	}
	return rows, s.lkept, s.lcoef
}

// Add adds one shot: setting st gave outcome b. It returns an error, and
// changes nothing, for a setting outside the plan, a shot beyond the plan's
// count for its setting, or an outcome of the wrong length or with bits
// set beyond the last qubit. It does not allocate once every setting has
// been seen.
func (s *Sums) Add(st pauli.Setting, b pauli.Bits) error {
	if err := s.checkBits(b); err != nil {
		return err
	}
	gi, ok := s.lookup(st)
	if !ok {
		return fmt.Errorf("setting %s is not in the plan", st)
	}
	return s.AddGroup(gi, b)
}

// Group returns the index in Groups of setting st, or false for a setting
// outside the plan.
func (s *Sums) Group(st pauli.Setting) (int32, bool) { return s.lookup(st) }

// AddGroup adds one shot of the setting Groups[gi] (from [Sums.Group]),
// as Add does without finding the setting again. It returns an error, and
// changes nothing, for a shot beyond the plan's count, or an outcome of
// the wrong length or with bits set beyond the last qubit.
func (s *Sums) AddGroup(gi int32, b pauli.Bits) error {
	if err := s.checkBits(b); err != nil {
		return err
	}
	g := s.Groups[gi]
	if g.T+g.npend >= g.Planned {
		return fmt.Errorf("more than %d shots of setting %s, the plan's count", g.Planned, g.Setting)
	}
	if !g.Seen {
		g.Seen, g.Off = true, s.nextOff
		s.nextOff += g.Planned
		s.Order = append(s.Order, gi)
		g.pend = make([]uint64, min(g.Planned, batch)*s.W)
	}
	if s.W == 1 {
		g.pend[g.npend] = b[0]
	} else {
		copy(g.pend[g.npend*s.W:], b)
	}
	g.npend++
	s.Shots++
	if g.npend == len(g.pend)/s.W {
		s.flush(gi, g)
	}
	return nil
}

// checkBits reports an outcome of the wrong length or with bits set
// beyond the last qubit.
func (s *Sums) checkBits(b pauli.Bits) error {
	if len(b) != s.W {
		return fmt.Errorf("outcome has %d words, want %d for %d qubits", len(b), s.W, s.Qubits)
	}
	if k := s.Qubits & 63; k != 0 && b[s.W-1]>>k != 0 {
		return fmt.Errorf("outcome has bits set beyond qubit %d", s.Qubits-1)
	}
	return nil
}

// lookup returns the group of st. Readers pass the same setting values
// again and again, so a small cache keyed by the address of the setting's
// words (of an entangled setting: of its key) answers most lookups with one
// comparison of the words; the others go through the map.
func (s *Sums) lookup(st pauli.Setting) (int32, bool) {
	if st.Qubits() != s.Qubits {
		return 0, false
	}
	var p uintptr
	if st.IsLocal() {
		x, _ := st.Words()
		p = uintptr(unsafe.Pointer(unsafe.SliceData(x)))
	} else {
		// An entangled setting's key is shared by the copies of the value.
		p = uintptr(unsafe.Pointer(unsafe.StringData(st.Key())))
	}
	e := &s.cache[(p>>4^p>>12)%uintptr(len(s.cache))]
	if e.p == p && s.Groups[e.g].Setting.Equal(st) {
		return e.g, true
	}
	s.key = appendKey(s.key[:0], st)
	gi, ok := s.index[string(s.key)]
	if ok {
		*e = cacheEntry{p, gi}
	}
	return gi, ok
}

// Flush processes the shots waiting in partial batches. The sums do not
// depend on where batches end, so shots may be added after a Flush.
func (s *Sums) Flush() {
	for _, gi := range s.Order {
		if g := s.Groups[gi]; g.npend > 0 {
			s.flush(gi, g)
		}
	}
}

// flush processes the pending shots of group gi (g): counts of −1 samples
// per term and fold, then every shot's Z in order. A term's 64 parities
// are the XOR of the bit-sliced outcomes over its support qubits, or for
// an entangled setting over the qubits of its image, complemented for the
// sign −1. A shot's Z depends only on its setting and outcome, so the Z of
// outcomes met before are taken from a fixed-size cache (zCache) instead
// of summed again: the same value, computed by the same operations in the
// same order.
func (s *Sums) flush(gi int32, g *Group) {
	nb := g.npend
	w := s.W
	clear(s.slice)
	for j := range nb {
		out := g.pend[j*w : (j+1)*w]
		for k, v := range out {
			for ; v != 0; v &= v - 1 {
				s.slice[k<<6+bits.TrailingZeros64(v)] |= 1 << j
			}
		}
	}
	valid := ^uint64(0)
	if nb < 64 {
		valid = 1<<nb - 1
	}
	// Shot j of the batch is shot Off+T+j in group order.
	var fm [Folds]uint64
	fm[0] = 0x5555555555555555 & valid
	if (g.Off+g.T)&1 == 1 {
		fm[0] = 0xAAAAAAAAAAAAAAAA & valid
	}
	fm[1] = valid &^ fm[0]
	c0, c1 := int64(bits.OnesCount64(fm[0])), int64(bits.OnesCount64(fm[1]))
	z := s.z[:nb]
	rows, gk, gc := s.Lists(g)
	// miss: the shots whose Z is not in the cache. Caching pays only for
	// settings of several terms, and only while outcomes repeat.
	miss := valid
	cached := !g.noCache && len(gk) >= zCacheMinTerms
	if cached {
		s.zc.init(w)
		for j := range nb {
			if v, ok := s.zc.get(gi, g.pend[j*w:(j+1)*w]); ok {
				z[j] = v
				miss &^= 1 << j
			}
		}
		g.zLook += nb
		g.zHit += nb - bits.OnesCount64(miss)
		if g.zLook >= zCacheProbe && g.zHit < g.zLook/4 {
			g.noCache = true
		}
	}
	// Few misses: add the terms shot by shot for those alone; else for
	// the whole batch (the same sums for every shot either way).
	sparse := bits.OnesCount64(miss) <= batch/2 && cached
	if sparse {
		for m := miss; m != 0; m &= m - 1 {
			z[bits.TrailingZeros64(m)] = 0
		}
	} else {
		clear(z)
	}
	kept := 0
	local := g.imgOff == nil
	for r, i := range rows {
		var qs []uint16
		p := uint64(0)
		if local {
			qs = s.qIdx[s.qOff[i]:s.qOff[i+1]]
		} else {
			qs = g.imgIdx[g.imgOff[r]:g.imgOff[r+1]]
			p = -(g.imgNeg[r>>6] >> (r & 63) & 1)
		}
		for _, q := range qs {
			p ^= s.slice[q]
		}
		p &= valid
		s.Ones[i] += int64(bits.OnesCount64(p))
		if g.RowOnes != nil {
			g.RowOnes[r] += int64(bits.OnesCount64(p))
		}
		s.FoldOnes[0][i] += int64(bits.OnesCount64(p & fm[0]))
		s.FoldOnes[1][i] += int64(bits.OnesCount64(p & fm[1]))
		s.FoldCnt[0][i] += c0
		s.FoldCnt[1][i] += c1
		if kept < len(gk) && gk[kept] == i {
			a := gc[kept]
			kept++
			// The sample is 1 − 2·parity: add a·s, that is a or −a (its
			// sign bit flipped by the parity), exactly what a·(±1) gives.
			ab := math.Float64bits(a)
			if sparse {
				for m := miss; m != 0; m &= m - 1 {
					j := bits.TrailingZeros64(m)
					z[j&(batch-1)] += math.Float64frombits(ab ^ (p>>j&1)<<63)
				}
				continue
			}
			for j := range z {
				z[j] += math.Float64frombits(ab ^ (p>>j&1)<<63)
			}
		}
	}
	if cached {
		for m := miss; m != 0; m &= m - 1 {
			j := bits.TrailingZeros64(m)
			s.zc.put(gi, g.pend[j*w:(j+1)*w], z[j])
		}
	}
	// The running sums, in shot order, kept in locals for the loop (the
	// same additions in the same order).
	if g.T == 0 && len(z) > 0 {
		g.Shift = z[0]
	}
	shift, sum, ssq := g.Shift, g.Sum, g.SumSq
	fs, fq := g.FoldSum, g.FoldSq
	k := (g.Off + g.T) & 1
	for _, v := range z {
		d := v - shift
		sum += d
		ssq += d * d
		g.FoldT[k]++
		fs[k] += d
		fq[k] += d * d
		k ^= 1
	}
	g.T += len(z)
	g.Sum, g.SumSq, g.FoldSum, g.FoldSq = sum, ssq, fs, fq
	if g.Planned == 1 {
		g.One = pauli.Bits(g.pend[:w:w])
	}
	g.npend = 0
}

// zCacheMinTerms is the fewest weighted terms for which a setting's Z
// values are cached; zCacheProbe the lookups after which a setting whose
// outcomes hit the cache less than a quarter of the time stops asking.
const (
	zCacheMinTerms = 8
	zCacheProbe    = 4096
)

// zCache maps (group, outcome) to the outcome's Z, direct-mapped: a new
// entry replaces whatever shared its slot. Its size is fixed (about
// 1 MB), whatever the number of shots.
type zCache struct {
	w    int      // words per outcome
	mask uint64   // slots − 1
	g    []int32  // group of the slot's entry, −1 for none
	key  []uint64 // outcome of the slot's entry, w words
	val  []float64
}

func (c *zCache) init(w int) {
	if c.g != nil {
		return
	}
	slots := 1 << 15
	for slots > 64 && slots*(8*w+12) > 1<<20 {
		slots >>= 1
	}
	c.w, c.mask = w, uint64(slots-1)
	c.g = make([]int32, slots)
	for k := range c.g {
		c.g[k] = -1
	}
	c.key = make([]uint64, slots*w)
	c.val = make([]float64, slots)
}

// slot returns the slot of (gi, out).
func (c *zCache) slot(gi int32, out []uint64) uint64 {
	h := uint64(gi) * 0x9E3779B97F4A7C15
	for _, v := range out {
		h = (h ^ v) * 0xFF51AFD7ED558CCD
		h ^= h >> 29
	}
	return h & c.mask
}

func (c *zCache) get(gi int32, out []uint64) (float64, bool) {
	k := c.slot(gi, out)
	if c.g[k] != gi {
		return 0, false
	}
	key := c.key[int(k)*c.w : int(k+1)*c.w]
	for i, v := range out {
		if key[i] != v {
			return 0, false
		}
	}
	return c.val[k], true
}

func (c *zCache) put(gi int32, out []uint64, z float64) {
	k := c.slot(gi, out)
	c.g[k] = gi
	copy(c.key[int(k)*c.w:int(k+1)*c.w], out)
	c.val[k] = z
}

// Check reports the first setting, in plan order, whose shots added differ
// from the plan's count.
func (s *Sums) Check() error {
	for _, g := range s.Groups {
		if n := g.T + g.npend; n != g.Planned {
			if n == 0 {
				return fmt.Errorf("no shot of setting %s, the plan asks for %d", g.Setting, g.Planned)
			}
			return fmt.Errorf("%d shots of setting %s, the plan asks for %d", n, g.Setting, g.Planned)
		}
	}
	return nil
}

// Odd reports whether outcome b of group g's setting gives term i, which
// the setting covers, the sample −1: b has odd parity on the term's
// support, or for an entangled setting the parity on the support of the
// term's image differs from the image's sign bit (MATH.md §8). It panics
// if an entangled setting does not cover term i.
func (s *Sums) Odd(g *Group, i int32, b pauli.Bits) bool {
	qs, p := s.qIdx[s.qOff[i]:s.qOff[i+1]], uint64(0)
	if g.imgOff != nil {
		r, ok := slices.BinarySearch(g.Rows, i)
		if !ok {
			panic("shotsum: Odd: the entangled setting does not cover the term")
		}
		qs = g.imgIdx[g.imgOff[r]:g.imgOff[r+1]]
		p = g.imgNeg[r>>6] >> (r & 63)
	}
	for _, q := range qs {
		p ^= b[q>>6] >> (q & 63)
	}
	return p&1 == 1
}

// Variance returns the unbiased sample variance of g's Z from its running
// sums, zero for fewer than two shots.
func (g *Group) Variance() float64 {
	if g.T < 2 {
		return 0
	}
	m := g.Sum / float64(g.T)
	return max(0, (g.SumSq-float64(g.T)*m*m)/float64(g.T-1))
}
