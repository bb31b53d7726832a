// Command quickstart runs the main job of shotplan on the built-in scenario,
// a 12-qubit two-leg spin ladder in a transverse field, with no input:
//
//	go run ./examples/quickstart
//
// It plans 1000 shots with the greedy strategy, certifies the plan at
// δ = 0.05 before any shot, simulates the shots on the exact ground state,
// estimates the energy from them and prints a short report. Flags change the
// budget (-shots), the simulator's seed (-seed), the strategy (-strategy) and
// the confidence (-delta).
package main
