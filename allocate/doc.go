// Package allocate decides which single-qubit basis to read on every qubit
// in every shot: it runs a strategy to a budget of shots and returns a
// [Plan].
//
// # The driver and the strategy contract
//
// [Run] is the one driver of every strategy, in the manner of gonum's
// optimize.Minimize: a strategy is a small synchronous [Allocator] — Init
// once, then Next (a [Stepper]) or NextBatch (a [Batcher]) until the budget
// is spent. Next writes the next setting's letters into a buffer the driver
// owns and says how many consecutive shots it gets. The driver owns
// the loop, the budget (the plan has exactly the budget's shots; the last
// setting is cut to fit), stopping, the progress callback of [Options], the
// merging of consecutive repeats and the cover counts N_i. It detects the
// optional interfaces once, before the loop:
//
//   - [Observer]: an adaptive strategy reads every shot's outcome back, in
//     shot order; the outcomes come from [Options].Measure.
//   - [Batcher]: the strategy produces many settings at once.
//   - [Counter]: the strategy keeps N_i itself, saving the driver a pass.
//   - [TermDrawer]: the strategy draws one term per shot ([Plan].Drawn).
//   - [QubitLimit]: the strategy supports at most so many qubits.
//
// No goroutines or channels are part of the contract. Package
// [github.com/shotplan/shotplan/allocate/allocatetest] checks that a
// strategy keeps it.
//
// # Strategies
//
// One file each, with the source and the cost per setting in its doc:
//
//	name        type            method
//	greedy      [Greedy]        greedy one-norm descent (ShadowGrouping, MATH §5.1)
//	derand      [Derandomized]  derandomized classical shadows, weighted (§5.2)
//	random      [Random]        uniformly random bases (§5.3)
//	biased      [Biased]        locally biased random bases (§5.4)
//	sorted      [Sorted]        sorted insertion, shots ∝ group one-norm (§5.5)
//	importance  [Importance]    single-term importance sampling (§3.5)
//	fixed       [Fixed]         a user's list of settings, cycled
//	sorted-gc   [SortedGC]      sorted insertion by general commutation (§5.5)
//	color-gc    [ColorGC]       largest-degree-first colouring, general commutation (§5.6)
//	greedy-gc   [GreedyGC]      greedy one-norm descent, settings grown as commuting families (§5.1)
//	overlap     [Overlap]       overlapped grouping, iterative coefficient splitting (§2.5)
//	overlap-gc  [OverlapGC]     overlap on generally commuting groups, entangled settings (§2.5)
//
// [ByName] makes one from its short name, [Names] lists the names.
//
// # Entangled settings
//
// The "-gc" strategies group terms that commute as operators, not only
// qubit-wise, and measure each group with an entangled setting
// ([pauli.NewFamilySetting]): a Clifford circuit of H, S, S†, CNOT and CZ
// gates before a Z readout (MATH §8). They hand their settings out through
// [Batcher] and have no Next, since an entangled setting has no letter per
// qubit to write; [Fixed] accepts entangled settings too. Plans, plan files, cover
// counts and the conformance suite work for both kinds.
//
// # Randomness and reproducibility
//
// A strategy that draws at random takes a seed in its Seed field and wraps
// one math/rand/v2 PCG source around it in Init; library code never uses the
// global source. The same seed gives the same plan, and running the same
// value twice gives the same plan, because Init resets all state.
//
// # Errors
//
// [Run] refuses an empty Hamiltonian ([ErrEmpty]), a budget ≤ 0
// ([ErrBudget]), a non-finite coefficient ([ErrNonFinite]), a Hamiltonian
// wider than the strategy supports ([ErrTooManyQubits]) and a strategy that
// breaks the contract ([ErrStrategy]), with messages naming the strategy,
// round, setting or term. A strategy's own cover counts and drawn terms are
// verified, not trusted, and a panic inside a strategy's methods is
// recovered into an [ErrStrategy] naming the strategy and the method. The
// Hamiltonian is never modified.
//
// # Plan files
//
// Three layouts, told apart by their first line and all read by
// [ReadPlan]: the full one of [WritePlan] (version 1, one entry per run of
// shots), the compact one of [WriteCompactPlan] (version 2, one line per
// distinct setting) and the seed plan of [WriteSeedPlan] (version 5). A
// seed plan stores, for the strategies whose every shot is an independent
// draw from one distribution (random, biased, importance; MATH §4.1), the
// distribution, the seed, the shots and the generator ([SeedGenerator]),
// never the shots themselves, so 10^8 shots take a few lines
// ([NewSeedPlan]). [SeedPlan.Stream] regenerates its entries in constant
// memory, bit for bit those [Run] gives with the same strategy and seed;
// [SeedPlan.Distinct] streams them into distinct settings; ReadPlan expands
// one up to [MaxExpandBytes] and refuses a larger one with the estimate
// ([ErrPlanTooLarge]), which [ReadSeedPlan] reads. Every reader caps its
// lines and its file and names the line of any problem.
//
// # Figures of merit
//
// [ScaledOneNorm] gives the plan objective Σ_i |h_i|/sqrt(N_i) of MATH §3.2.
// The closed-form budget of importance sampling, and every other guarantee,
// is in the guarantee package (guarantee.ImportanceShots).
package allocate
