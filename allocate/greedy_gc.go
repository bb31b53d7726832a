package allocate

import (
	"cmp"
	"encoding/binary"
	"errors"
	"slices"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// GreedyGC is greedy one-norm descent (ShadowGrouping, arXiv:2301.03385;
// MATH §5.1) with settings grown as generally commuting families. Each round
// weighs the terms as [Greedy] does — the terms not yet covered first, by
// |h_i|, then by the marginal gain w_i = |h_i|(1/sqrt(N_i) − 1/sqrt(N_i+1)),
// ties by |h_i| and term index — and walks them from the largest weight
// down, accepting a term when it commutes (as an operator) with every term
// accepted so far. The walk stops when the accepted terms span a maximal
// commuting subspace (n independent generators: every further commuting
// term is a product of them) or the list ends. The setting is the accepted
// family's entangled setting ([pauli.NewFamilySetting]; a family that
// commutes qubit-wise gives a local setting with Z on untouched qubits). It
// gets one shot, and N_i grows by one for every term it covers (which
// includes every accepted term and may include more).
//
// # Cost
//
// A round sorts the M terms by weight, O(M log M), and tests each against a
// reduced basis of at most n accepted vectors, O(M·n·⌈n/64⌉). A family seen
// before is looked up by its accepted terms; a new one costs one
// [pauli.Diagonalize] and one coverage scan of the terms. GreedyGC is slower
// per setting than [Greedy] and meant for moderate M.
//
// GreedyGC is deterministic. It implements [Batcher] and [Counter]. The zero
// value is ready to use.
type GreedyGC struct {
	rk    *ranked
	tab   *pauli.Table // terms in rank order
	cnt   []int        // N per rank
	order []int32
	key   []float64
	acc   []int32
	kbuf  []byte
	cache map[string]gcFamily
}

// gcFamily is a setting the walk produced before, with the ranks it covers.
type gcFamily struct {
	s      pauli.Setting
	covers []int
}

// String returns "greedy-gc".
func (g *GreedyGC) String() string { return "greedy-gc" }

// Init implements [Allocator].
func (g *GreedyGC) Init(h *hamiltonian.Hamiltonian, budget int) error {
	g.rk = newRanked(h)
	m := len(g.rk.order)
	g.tab = pauli.NewTable(g.rk.n, m)
	for r := range m {
		x, z := g.rk.row(r)
		g.tab.Append(pauli.FromWords(g.rk.n, x, z))
	}
	g.cnt = make([]int, m)
	g.order = make([]int32, m)
	g.key = make([]float64, m)
	g.cache = make(map[string]gcFamily)
	return nil
}

// NextBatch implements [Batcher]: one setting with one shot.
func (g *GreedyGC) NextBatch(settings []pauli.Setting, shots []int, remaining int) ([]pauli.Setting, []int, error) {
	s, err := g.round()
	if err != nil {
		return settings, shots, err
	}
	return append(settings, s), append(shots, 1), nil
}

// Cover implements [Counter].
func (g *GreedyGC) Cover(dst []int) {
	for r, i := range g.rk.order {
		dst[i] = g.cnt[r]
	}
}

// round chooses the next setting and records its covers.
func (g *GreedyGC) round() (pauli.Setting, error) {
	rk := g.rk
	if rk == nil {
		return pauli.Setting{}, errors.New("Next before Init")
	}
	// Uncovered terms sort above every covered one: their key is |h|
	// plus a tier above every marginal gain (each gain is below |h|).
	tier := 1.0
	if len(rk.abs) > 0 {
		tier += rk.abs[0]
	}
	for r := range g.order {
		g.order[r] = int32(r)
		if n := g.cnt[r]; n == 0 {
			g.key[r] = tier + rk.abs[r]
		} else {
			g.key[r] = rk.abs[r] * marginalGain(n)
		}
	}
	slices.SortFunc(g.order, func(a, b int32) int {
		if c := cmp.Compare(g.key[b], g.key[a]); c != 0 {
			return c
		}
		return cmp.Compare(a, b) // ranks: |h| descending, then term index
	})
	gs := newCommutingGroups(rk.w)
	g.acc = g.acc[:0]
	for _, r := range g.order {
		x, z := rk.row(int(r))
		if gs.len() > 0 && !gs.fits(0, x, z) {
			continue
		}
		gs.add(0, x, z)
		g.acc = append(g.acc, r)
		if gs.rank(0) == rk.n {
			break
		}
	}
	slices.Sort(g.acc)
	g.kbuf = g.kbuf[:0]
	for _, r := range g.acc {
		g.kbuf = binary.LittleEndian.AppendUint32(g.kbuf, uint32(r))
	}
	f, ok := g.cache[string(g.kbuf)]
	if !ok {
		fam := make([]pauli.String, len(g.acc))
		for j, r := range g.acc {
			fam[j] = g.tab.At(int(r))
		}
		s, err := pauli.NewFamilySetting(fam)
		if err != nil {
			return pauli.Setting{}, err
		}
		f = gcFamily{s: s, covers: g.tab.Covered(nil, s)}
		g.cache[string(g.kbuf)] = f
	}
	for _, r := range f.covers {
		g.cnt[r]++
	}
	return f.s, nil
}
