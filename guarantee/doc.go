// Package guarantee bounds the error of an energy estimate rigorously: before
// any shot, from a plan's settings and shot counts alone (a certificate), and
// after the shots, from the data (empirical Bernstein bounds and a sequential
// mode that stops as soon as a target accuracy is certified). It also plans
// budgets for a target accuracy and advises which terms to drop.
//
// # What a guarantee covers
//
// Every bound in this package covers shot noise only: the randomness of
// measuring independent, identically prepared copies of one state with ideal
// readout. Device noise, readout error, drift between shots and
// state-preparation error are not covered; neither is the difference between
// the prepared state and the state one meant to prepare. A bound "at
// confidence 1 − δ" fails with probability at most δ under those assumptions.
//
// # Sources
//
// The formulas are those of the project's MATH.md §3–§4: the shot-wise
// Hoeffding bound (§3.1, Hoeffding 1963, Theorem 2), its one-norm relaxation
// (§3.2), truncation (§3.3), budget planning (§3.4, §3.5), and the empirical
// Bernstein bounds of Maurer & Pontil (2009, Theorem 4) and of Audibert, Munos
// & Szepesvári (2009, Theorem 1) with the stopping schedule of Mnih,
// Szepesvári & Audibert (2008). Each function cites its source.
//
// # Domains and errors
//
// The tail-bound formulas ([HoeffdingRadius], [BernsteinRadius], ...) are
// pure functions that return NaN for arguments outside their domain, as the
// math package does. Everything that takes a Hamiltonian, a plan or data
// checks it and returns an error naming the offending setting or term.
package guarantee
