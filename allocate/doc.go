// Package allocate decides which single-qubit basis to read on every qubit
// in every shot: it runs a strategy to a budget of shots and returns a
// [Plan].
package allocate
