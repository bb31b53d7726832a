package allocate

import (
	"fmt"
	"slices"
	"time"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/internal/coverindex"
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
	// Split, if not nil, is the coefficient split of the plan's estimate
	// (MATH.md §2.5): the terms it lists are estimated with its weights
	// α_{ig} from the distinct settings that list them, the others with the
	// implicit weights m_g/N_i of MATH.md §2. Nil (every strategy but
	// [Overlap]) is the grouped estimator unchanged. Pass it to
	// estimate.Options.Split and guarantee.EmpiricalOptions.Split; the
	// certificates of package guarantee read it from the plan.
	Split hamiltonian.Split
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
		return nil, fmt.Errorf("allocate: nil Hamiltonian")
	}
	if len(settings) != len(shots) {
		return nil, fmt.Errorf("allocate: %d settings but %d shot counts", len(settings), len(shots))
	}
	for k, s := range settings {
		if s.Qubits() != h.Qubits() {
			return nil, fmt.Errorf("allocate: setting %d (%s) has %d qubits, Hamiltonian has %d", k, s, s.Qubits(), h.Qubits())
		}
		if shots[k] < 0 {
			return nil, fmt.Errorf("allocate: setting %d (%s) has negative shot count %d", k, s, shots[k])
		}
	}
	// Repeated settings are merged and, for many settings, the terms are
	// found through the letter-bucketed cover index instead of a test of
	// every term per setting.
	// Very many local settings: intersect per-letter sets of settings
	// instead (coverindex.Letters), about weight·G/64 word operations a
	// term, with no work per covered pair.
	if len(settings) >= lettersMin {
		distinct, total := pauli.MergeSettings(settings, shots)
		if len(distinct) >= lettersMin && !slices.ContainsFunc(distinct, func(s pauli.Setting) bool { return !s.IsLocal() }) {
			cover, _ := coverindex.NewLetters(h.Qubits(), distinct, total, h.Len(), h.Table().Words).Counts()
			return cover, nil
		}
	}
	cover := make([]int, h.Len())
	countCover(cover, h.Table(), settings, shots)
	return cover, nil
}

// lettersMin is the number of distinct settings from which CoverCounts
// counts through the transposed settings.
const lettersMin = 4096
