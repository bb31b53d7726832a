// Package allocatetest checks that an [allocate.Allocator] keeps the
// contract of package allocate: the conformance suite that every built-in
// strategy and every user-written strategy can run from its own tests.
//
// A strategy's own tests run it in one line:
//
//	func TestMyStrategy(t *testing.T) {
//		allocatetest.Test(t, func(seed uint64) allocate.Allocator {
//			return &MyStrategy{Seed: seed}
//		}, nil)
//	}
//
// Outside a test (a program, or an Example), [Check] runs the same suite and
// returns the failures as an error.
//
// # What the suite checks
//
// [Test] runs the strategy through [allocate.Run] on a set of Hamiltonians
// (small invented ones by default, including one wider than 64 qubits) and
// budgets (skipping a Hamiltonian wider than the strategy's
// [allocate.QubitLimit]), and checks that
//
//   - the plan is reproducible: two values made with the same seed, and one
//     value run twice, give the same plan;
//   - the budget is respected exactly (TotalShots equals the budget), every
//     shot count is positive and consecutive repeats are merged;
//   - every setting has the Hamiltonian's width and no identity letter;
//   - the Hamiltonian is not modified;
//   - an [allocate.Observer] is called once per shot, in shot order, with the
//     setting of that shot and the outcome the measurement produced;
//   - the plan's Cover equals [allocate.CoverCounts] of its settings, and its
//     Drawn (when present) has one term per shot, covered by that shot;
//   - bad input is refused: an empty Hamiltonian ([allocate.ErrEmpty]), a
//     budget ≤ 0 ([allocate.ErrBudget]), and, for a strategy with an
//     [allocate.QubitLimit], a Hamiltonian one qubit too wide
//     ([allocate.ErrTooManyQubits]).
//
// # Randomness
//
// The fake measurement that feeds an Observer draws its bits from a PCG
// source with a fixed seed, fresh for every run, so that adaptive strategies
// are reproducible too.
package allocatetest
