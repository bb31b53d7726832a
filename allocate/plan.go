package allocate

import (
	"fmt"
	"time"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// Plan is what an allocation produces: the settings in the order they are to
// be measured, how many consecutive shots each gets, and every term's cover
// count. A setting may appear more than once in Settings (a strategy that
// comes back to it later); consecutive repeats are merged into one entry.
type Plan struct {
	// Qubits is the width of every setting.
	Qubits int
	// Settings lists the settings in measurement order.
	Settings []pauli.Setting
	// Shots[k] is the number of consecutive shots of Settings[k]; every entry
	// is positive.
	Shots []int
	// Cover[i] is N_i, the number of shots whose setting covers term i of the
	// Hamiltonian the plan was made for.
	Cover []int
	// Stats describes the run that made the plan.
	Stats Stats
	// Drawn is, for strategies that sample one term per shot (importance
	// sampling, see [Importance] and [TermDrawer]), the index of the term
	// drawn for each shot, in shot order; nil otherwise.
	Drawn []int
}

// Stats describes an allocation run.
type Stats struct {
	Strategy string        // the strategy's name
	Rounds   int           // calls to the strategy that produced settings
	Elapsed  time.Duration // wall-clock time of the run
}

// TotalShots returns the sum of Shots.
func (p *Plan) TotalShots() int {
	t := 0
	for _, s := range p.Shots {
		t += s
	}
	return t
}

// Distinct returns each distinct setting once, in order of first use, with
// its total number of shots ([pauli.MergeSettings]).
func (p *Plan) Distinct() (settings []pauli.Setting, shots []int) {
	return pauli.MergeSettings(p.Settings, p.Shots)
}

// CoverCounts returns N_i for every term of h under the given settings and
// shot counts: the number of shots whose setting covers term i. It returns an
// error if h is nil, the lengths or widths disagree or a count is negative.
func CoverCounts(h *hamiltonian.Hamiltonian, settings []pauli.Setting, shots []int) ([]int, error) {
	if h == nil {
		return nil, fmt.Errorf("allocate: CoverCounts: nil Hamiltonian")
	}
	if len(settings) != len(shots) {
		return nil, fmt.Errorf("allocate: %d settings but %d shot counts", len(settings), len(shots))
	}
	cover := make([]int, h.Len())
	var idx []int
	t := h.Table()
	for k, s := range settings {
		if s.Qubits() != h.Qubits() {
			return nil, fmt.Errorf("allocate: setting %d (%s) has %d qubits, Hamiltonian has %d", k, s, s.Qubits(), h.Qubits())
		}
		if shots[k] < 0 {
			return nil, fmt.Errorf("allocate: setting %d (%s) has negative shot count %d", k, s, shots[k])
		}
		idx = t.Covered(idx[:0], s)
		for _, i := range idx {
			cover[i] += shots[k]
		}
	}
	return cover, nil
}
