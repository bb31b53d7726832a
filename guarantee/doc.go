// Package guarantee bounds the error of an energy estimate rigorously: before
// any shot, from a plan's settings and shot counts alone (a [Certificate]),
// and after the shots, from the data ([Empirical], [RandomizedBound], and
// [Sequential], which stops as soon as a target accuracy is certified). It
// also plans budgets for a target accuracy ([BudgetOf], in copies of one
// plan and in one coverage scan, with the anytime route's expected shots;
// [BudgetWith] adds that route's baseline; [PlanBudget], the exact smallest prefix of
// a plan, much slower; [ImportanceShots]) and advises which terms to drop
// ([Truncation]).
//
// # What a guarantee covers
//
// Every bound in this package covers shot noise only: the randomness of
// measuring independent, identically prepared copies of one state with ideal
// readout. Device noise, readout error, drift between shots and
// state-preparation error are NOT covered; neither is the difference between
// the prepared state and the state one meant to prepare. The exception is
// readout error with independent per-qubit flips, or with disjoint pairs of
// qubits whose reads may flip together (MATH.md §2.1.5): [CalibratedBounds]
// bounds the readout-mitigated estimate from calibration shots, covering
// shot noise and the uncertainty of the calibrated rates (MATH.md §2.1.2),
// [CertifyAll] does so for several observables at once (AllOptions.Calibration),
// and [PlanReadoutBudget] plans its calibration and measurement shots. A bound "at
// confidence 1 − δ" fails with probability at most δ under those
// assumptions. Intervals from the normal approximation
// ([DataBound].ApproxRadius, and the estimate package's ApproxInterval) are
// approximate and are labelled so; they are not guarantees.
//
// # Before the shots
//
// [Certify] (a list of settings with shot counts) and [CertifyPlan] (a plan
// from any allocator; identical result, except that a plan's coefficient
// split is certified as the split estimator of MATH.md §2.5) compute, at confidence 1 − δ, the
// shot-wise Hoeffding radius sqrt(2 V ln(2/δ)) of MATH.md §3.1 with V
// computed exactly, its relaxation by the scaled one-norm ‖h'‖_1 sqrt(2 ln(2/δ)) (§3.2),
// the bias of never-covered terms, their sum, each term's share of the
// bound (an Euler allocation that adds up to the total; see
// [Certificate].Share) and the largest contributors. The certificate also
// reports two truncations (§3.3): the δ-only threshold rule and the dropped
// set that minimises bias plus exact radius. Their Drop lists are exclusion
// lists for the estimator (estimate.Options.Exclude).
//
// A certificate needs a plan fixed before the data. Adaptive strategies
// (settings chosen from earlier outcomes) are not covered; [PlanBudget]
// refuses them.
//
// # After the shots
//
// [Empirical] bounds the grouped estimate from the records of fixed settings,
// either pooled over all shots (the default: per-setting variance bounds and
// one Bernstein bound for the sum) or with empirical Bernstein bounds per
// distinct setting and an explicit union bound over the settings' shares of
// δ ([EmpiricalForm]). [RandomizedBound] does the same for plans whose
// settings are drawn i.i.d. ([Randomized], MATH.md §4.1). [Sequential] runs an
// estimate.Device in rounds and applies the bound after each round at
// δ_k from a [StoppingSchedule], so that the bound at whichever round it
// stops holds with probability 1 − δ.
//
// # Stopping whenever you like
//
// [Anytime] runs i.i.d. shots of a randomised plan ([IID], MATH.md §4.1) on
// an estimate.Device and feeds a confidence sequence — [BettingCS] (the
// betting sequence of Waudby-Smith & Ramdas, arXiv:2010.09686) or
// [BernsteinCS] (empirical Bernstein at stated epochs) — whose interval is
// valid at every time at once, so the user may stop after looking at the
// data. An optional pilot re-weights the plan with allocate.Moments; its
// shots only choose the distribution and never enter the certificate
// (sample splitting). [AnytimeMethod] documents which bound fits which plan.
//
// # Sources
//
// The formulas are those of the project's MATH.md §3–§4: the shot-wise
// Hoeffding bound (§3.1, Hoeffding 1963, Theorem 2), its relaxation by the scaled one-norm
// (§3.2), truncation (§3.3), budget planning (§3.4, §3.5), and the empirical
// Bernstein bounds of Maurer & Pontil (2009, Theorem 4) and of Audibert, Munos
// & Szepesvári (2009, Theorem 1) with the stopping schedule of Mnih,
// Szepesvári & Audibert (2008). Each function cites its source.
//
// # Domains, errors and cost
//
// The tail-bound formulas ([HoeffdingRadius], [BernsteinRadius], ...) are
// pure functions that return NaN for arguments outside their domain, as the
// math package does. Everything that takes a Hamiltonian, a plan or data
// checks it and returns an error naming the offending setting, term or
// field; nothing panics on bad input.
//
// A certificate costs one coverage scan of the terms per distinct setting
// and keeps the covered-term lists (4 bytes per covered pair, up to 2^27
// pairs; past that it scans again instead of storing).
package guarantee
