package allocate

import (
	"slices"

	"github.com/shotplan/shotplan/pauli"
)

// Internal functions exposed to the external tests.
var (
	CheckFinite       = checkFinite
	LargestRemainder  = largestRemainder
	PairIndexMaxQubit = pairIndexMaxQubits
)

// CoveredByIndex returns the rows of h's table that s covers, found through
// a coverIndex, sorted.
func CoveredByIndex(t *pauli.Table, settings []pauli.Setting) [][]int {
	ci := newCoverIndex(t.Qubits(), t.Len(), t.Words)
	var out [][]int
	for _, s := range settings {
		x, z := s.Words()
		var rows []int
		for _, r := range ci.appendCovered(nil, x, z) {
			rows = append(rows, int(r))
		}
		slices.Sort(rows)
		out = append(out, rows)
	}
	return out
}
