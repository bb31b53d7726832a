// Command custom shows how to write your own allocation strategy, certify
// its plan and compare it with built-in ones, on the built-in 12-qubit spin
// ladder:
//
//	go run ./examples/custom [-shots 1000] [-seed 1]
//
// The strategy, anchored (in anchored.go), is an allocate.Stepper: Init
// once, then Next writes one setting at a time. Everything else — the budget,
// cover counts, the certificate, simulation and estimation — comes from the
// library and works for it exactly as for the built-in strategies. Its tests
// run the library's conformance suite (allocate/allocatetest) on it.
package main
