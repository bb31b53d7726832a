package estimate

import (
	"fmt"
	"iter"
	"sort"

	"github.com/shotplan/shotplan/pauli"
)

// Records holds the outcomes of shots: for every shot its setting and its
// measured bit-string. Shots of identical settings are stored together, each
// outcome as packed [pauli.Bits] words, so the estimators visit every
// distinct setting once; the order in which shots were added is kept as runs
// of consecutive shots of one setting and can be walked with
// [Records.Shots] or looked up with [Records.Shot].
//
// A group is one distinct setting with all its outcomes; groups are numbered
// in the order their setting first appears. A Records is used through a
// pointer; the zero value is not usable, call [NewRecords].
type Records struct {
	n     int
	w     int // words per outcome
	set   []pauli.Setting
	out   [][]uint64 // out[g] holds the outcomes of group g, w words each
	index map[string]int

	// Shot order as runs of consecutive shots of one group: run r covers
	// shots [runStart[r], runStart[r+1]) (the last run ends at the total),
	// of group runGroup[r], starting at outcome runPos[r] of that group.
	runStart []int
	runGroup []int32
	runPos   []int
	shots    int
}

// NewRecords returns empty records for settings on n qubits. It panics if
// n < 1.
func NewRecords(n int) *Records {
	if n < 1 {
		panic("estimate: NewRecords: qubit count must be at least 1")
	}
	return &Records{n: n, w: pauli.Words(n), index: make(map[string]int)}
}

// Qubits returns the width of the settings.
func (r *Records) Qubits() int { return r.n }

// Len returns the number of shots.
func (r *Records) Len() int { return r.shots }

// Groups returns the number of distinct settings.
func (r *Records) Groups() int { return len(r.set) }

// Setting returns the setting of group g.
func (r *Records) Setting(g int) pauli.Setting { return r.set[g] }

// GroupLen returns the number of shots of group g.
func (r *Records) GroupLen(g int) int { return len(r.out[g]) / r.w }

// Outcome returns outcome j of group g, in the order the group's shots were
// added. The bits alias the records and must not be modified.
func (r *Records) Outcome(g, j int) pauli.Bits {
	o := j * r.w
	return pauli.Bits(r.out[g][o : o+r.w : o+r.w])
}

// Group returns the index of the group of setting s, or false if no shot of
// s has been added.
func (r *Records) Group(s pauli.Setting) (int, bool) {
	g, ok := r.index[s.Key()]
	return g, ok
}

// Add appends one shot: setting s gave outcome b. The bits are copied. Add
// returns an error, and changes nothing, if s does not have the records'
// width, b does not have [pauli.Words] words for it, or b has a bit set
// beyond the last qubit.
func (r *Records) Add(s pauli.Setting, b pauli.Bits) error {
	if s.Qubits() != r.n {
		return fmt.Errorf("estimate: setting %s has %d qubits, records have %d", s, s.Qubits(), r.n)
	}
	if err := r.checkBits(b); err != nil {
		return err
	}
	r.appendShot(r.group(s), b)
	return nil
}

// checkBits reports an outcome of the wrong length or with stray bits.
func (r *Records) checkBits(b pauli.Bits) error {
	if len(b) != r.w {
		return fmt.Errorf("estimate: outcome has %d words, want %d for %d qubits", len(b), r.w, r.n)
	}
	if k := r.n & 63; k != 0 && b[r.w-1]>>k != 0 {
		return fmt.Errorf("estimate: outcome has bits set beyond qubit %d", r.n-1)
	}
	return nil
}

// group returns the group of s, creating it if s is new. The last group
// used is checked first, which makes runs of one setting cheap.
func (r *Records) group(s pauli.Setting) int {
	if k := len(r.runGroup); k > 0 {
		if g := int(r.runGroup[k-1]); r.set[g].Equal(s) {
			return g
		}
	}
	key := s.Key()
	if g, ok := r.index[key]; ok {
		return g
	}
	g := len(r.set)
	r.index[key] = g
	r.set = append(r.set, s)
	r.out = append(r.out, nil)
	return g
}

// appendShot appends outcome b (already checked) to group g.
func (r *Records) appendShot(g int, b []uint64) {
	pos := len(r.out[g]) / r.w
	r.out[g] = append(r.out[g], b[:r.w]...)
	if k := len(r.runGroup); k == 0 || int(r.runGroup[k-1]) != g {
		r.runStart = append(r.runStart, r.shots)
		r.runGroup = append(r.runGroup, int32(g))
		r.runPos = append(r.runPos, pos)
	}
	r.shots++
}

// Shot returns the group and outcome of shot k, counted in the order shots
// were added. The bits alias the records and must not be modified. It
// panics if k is out of range.
func (r *Records) Shot(k int) (g int, b pauli.Bits) {
	if k < 0 || k >= r.shots {
		panic("estimate: shot index out of range")
	}
	run := sort.Search(len(r.runStart), func(i int) bool { return r.runStart[i] > k }) - 1
	g = int(r.runGroup[run])
	return g, r.Outcome(g, r.runPos[run]+k-r.runStart[run])
}

// Shot is one shot as seen by [Records.Shots].
type Shot struct {
	Group   int           // the group of the shot's setting
	Setting pauli.Setting // the setting
	Outcome pauli.Bits    // the measured bits; they alias the records
}

// Shots iterates over the shots in the order they were added, yielding each
// shot's index and the shot.
func (r *Records) Shots() iter.Seq2[int, Shot] {
	return func(yield func(int, Shot) bool) {
		for run, start := range r.runStart {
			end := r.shots
			if run+1 < len(r.runStart) {
				end = r.runStart[run+1]
			}
			g := int(r.runGroup[run])
			for k := start; k < end; k++ {
				if !yield(k, Shot{Group: g, Setting: r.set[g], Outcome: r.Outcome(g, r.runPos[run]+k-start)}) {
					return
				}
			}
		}
	}
}

// Equal reports whether r and o hold the same shots in the same order.
func (r *Records) Equal(o *Records) bool {
	if r.n != o.n || r.shots != o.shots || len(r.set) != len(o.set) || len(r.runStart) != len(o.runStart) {
		return false
	}
	for g := range r.set {
		if !r.set[g].Equal(o.set[g]) || len(r.out[g]) != len(o.out[g]) {
			return false
		}
		for i, v := range r.out[g] {
			if o.out[g][i] != v {
				return false
			}
		}
	}
	for k := range r.runStart {
		if r.runStart[k] != o.runStart[k] || r.runGroup[k] != o.runGroup[k] {
			return false
		}
	}
	return true
}
