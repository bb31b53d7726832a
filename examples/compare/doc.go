// Command compare runs every allocation strategy side by side on one
// Hamiltonian — the built-in 12-qubit spin ladder, or a file given with -ham
// — and reports, for each:
//
//   - the certified bound of its plan at confidence 1 − δ (valid for every
//     state, before any shot), and
//   - the root-mean-square error of the energy estimated from shots simulated
//     on the exact ground state, over -reps repetitions (random strategies
//     draw a fresh plan each time),
//
// as an aligned table (-json prints it as JSON instead; -csv FILE also
// writes it as CSV, with the bound at every -sweep budget). Only when asked
// with -plot FILE does it write a plot of the certified bound against the
// number of shots, one line per strategy on log–log axes, each strategy in
// its own colour and marker, to a PNG or SVG file.
//
//	go run ./examples/compare -reps 20 -plot bounds.svg
//	go run ./examples/compare -ham h2.txt -shots 500 -sweep 100,1000,10000 -json
//
// Every strategy's shots are estimated with the grouped estimator, which
// fits every plan and is the estimator the certificate is about. The
// "fixed" strategy cycles through the three settings all-X, all-Y, all-Z.
// A progress bar appears on standard error when the run takes more than
// two seconds and standard error is a terminal.
package main
