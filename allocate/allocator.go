package allocate

import (
	"errors"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// Allocator is a strategy that chooses measurement settings. [Run] calls
// Init once, then asks for settings until the budget is spent: through
// NextBatch if the allocator is a [Batcher], otherwise through Next, so an
// Allocator must also be a [Stepper] or a [Batcher] (Run returns an error
// wrapping [ErrStrategy] for one that is neither). An Allocator is used by
// one run at a time; Init must reset every piece of state, so that running
// the same value twice gives the same plan.
type Allocator interface {
	// Init prepares the allocator to plan budget shots for h. It must not
	// modify h. It returns an error if the allocator cannot plan for h.
	// [Run] prefixes the errors of Init and Next with "allocate: " and the
	// strategy's name, so they should not name the strategy themselves.
	Init(h *hamiltonian.Hamiltonian, budget int) error
}

// Stepper is an [Allocator] that gives one local setting at a time.
type Stepper interface {
	// Next writes the basis of every qubit of the next setting into dst,
	// which the driver owns and which has one entry per qubit (the entries
	// hold the previous setting on entry), and returns how many consecutive
	// shots the setting gets, at least 1. The driver gives the last setting
	// only the shots left in the budget. Every entry must be X, Y or Z.
	Next(dst []pauli.Letter) (shots int, err error)
}

// Observer is an optional interface of adaptive allocators, which read the
// outcome of every shot before choosing the next setting. The driver detects
// it once, before the loop; it then needs [Options].Measure to obtain the
// outcomes and calls Observe once per shot, in shot order, after the setting
// of that shot has been produced and before the next call to Next or
// NextBatch. Observe must not keep b, which the driver reuses.
type Observer interface {
	Observe(s pauli.Setting, b pauli.Bits)
}

// Batcher is an [Allocator] that produces many settings at once, local or
// entangled. When an allocator implements it, the driver calls NextBatch
// and never Next, so a Batcher need not be a [Stepper]. NextBatch appends one or more settings and their
// consecutive shot counts (each at least 1) to settings and shots, and
// returns the extended slices; remaining is the number of shots left in the
// budget, and settings past it are cut.
type Batcher interface {
	NextBatch(settings []pauli.Setting, shots []int, remaining int) ([]pauli.Setting, []int, error)
}

// Counter is an optional interface of allocators that keep every term's
// cover count N_i as they go. After the loop the driver reads the counts
// with Cover and checks them against its own count (through the shared
// cover index); a disagreement is an [ErrStrategy]. Cover writes N_i into
// dst[i] for every term of the Hamiltonian given to Init.
type Counter interface {
	Cover(dst []int)
}

// TermDrawer is an optional interface of allocators that draw one term per
// shot, such as [Importance]. Drawn returns the index of the term drawn for
// each shot, in shot order; the driver checks that each is a term the
// shot's setting covers and copies the list into [Plan].Drawn.
type TermDrawer interface {
	Drawn() []int
}

// Splitter is an optional interface of allocators that split the
// coefficients of terms among the settings that measure them (MATH.md
// §2.5), such as [Overlap]. After the loop the driver reads the split,
// checks it against the plan ([hamiltonian.Split.Check]; a failure is an
// [ErrStrategy]) and copies it into [Plan].Split.
type Splitter interface {
	Split() hamiltonian.Split
}

// QubitLimit is an optional interface of allocators that support at most
// MaxQubits qubits. The driver checks the limit before Init and returns an
// error wrapping [ErrTooManyQubits].
type QubitLimit interface {
	MaxQubits() int
}

// Errors returned by [Run], wrapped with the details; test them with
// errors.Is.
var (
	// ErrEmpty: the Hamiltonian has no non-identity term to measure.
	ErrEmpty = errors.New("allocate: Hamiltonian has no non-identity terms")
	// ErrBudget: the budget of shots is not positive.
	ErrBudget = errors.New("allocate: budget must be positive")
	// ErrTooManyQubits: the strategy supports fewer qubits than the
	// Hamiltonian has.
	ErrTooManyQubits = errors.New("allocate: too many qubits for the strategy")
	// ErrNonFinite: a coefficient is NaN or infinite.
	ErrNonFinite = errors.New("allocate: coefficient is not finite")
	// ErrStrategy: the strategy broke its contract (an identity letter, a
	// non-positive shot count, a setting of the wrong width).
	ErrStrategy = errors.New("allocate: strategy broke the Allocator contract")
)
