// Command shotplan runs the file-based workflow of the shotplan library, one
// subcommand per step. Every step reads and writes files, so the steps can
// run on different machines (plan on a laptop, measure on the device's host,
// estimate anywhere):
//
//	shotplan info     [-exact [-electrons N] [-spin MS2]] [-json] HAMILTONIAN
//	shotplan convert  [-encoding jw|bk|parity] [-frozen K] [-active M] -o HAMILTONIAN FCIDUMP
//	shotplan plan     -ham H [-strategy NAME] [-shots N] [-seed S] [-settings FILE] [-cost-budget B -shot-cost T -circuit-cost T] [-observables N,Sz,S2 -targets E,...] [-proxy worst|hf|exact|BITS|FILE [-electrons N] [-spin MS2]] [-by-seed] -o PLAN
//	shotplan certify  -ham H -plan PLAN [-delta δ] [-top N] [-readout P|p01=X,p10=Y|@FILE] [-calibration CALIB [-calibration-delta D] [-pairs A-B,...]] [-observables N,Sz,S2]
//	shotplan export   -plan PLAN [-max-shots-per-circuit N] [-max-circuits-per-job N] [-one-program] -o DIR
//	shotplan simulate -ham H -plan PLAN [-seed S] [-prepare ground|hf|FILE] [-readout P|p01=X,p10=Y|@FILE] [-depolarizing P] [-dephasing P] [-pair-flip P [-pairs A-B,...]] [-calibration-shots M -calibration-o CALIB] [-electrons N] [-spin MS2] [-state FILE] -o RECORDS
//	shotplan estimate -ham H -plan PLAN -records RECORDS... [-delta δ] [-readout P|p01=X,p10=Y|@FILE] [-calibration CALIB [-calibration-delta D] [-pairs A-B,...]] [-observables N,Sz,S2]
//	shotplan budget   -ham H -eps E [-delta 0.05] [-strategy NAME|all] [-proxy worst|hf|exact|BITS|FILE [-electrons N] [-spin MS2]] [-readout P|p01=X,p10=Y|@FILE | -calibration CALIB [-pairs A-B,...]] [-calibration-delta D]
//	shotplan calibrate -qubits N -shots M [-pairs A-B,...] -o PLAN
//	shotplan rounds start  -ham H -eps E [-delta 0.05] [-strategy NAME] [-baseline none] -o STATE
//	shotplan rounds next   -state STATE -o PLAN
//	shotplan rounds add    -state STATE -records RECORDS...
//	shotplan rounds status -state STATE
//	shotplan version
//
// plan -proxy gives sorted, sorted-gc and color-gc their group shares (and
// overlap its coefficient split and shares, MATH.md §2.5) from a state
// computed classically before any shot (allocate.Proxy, MATH.md §2.4):
// group g gets shots in proportion to the standard deviation of its terms'
// sum in that state, floored at 1% of the group's one-norm, one
// shot per group first. hf is the Hartree–Fock determinant of an FCIDUMP
// -ham (molecule.Integrals.HartreeFockBits), exact the ground state of the
// sector (at most 20 qubits), BITS a basis state, FILE an amplitude file.
// The plan is fixed before any shot, so certify, estimate and rounds stay
// rigorous with it; a poor proxy costs shots, not correctness.
//
// budget counts the shots a target accuracy needs, per strategy, in copies
// of one reference plan (guarantee.BudgetOf). The rounds commands run an
// anytime-valid certified measurement round by round: the state file (JSON,
// "format": "shotplan rounds", versioned) holds the Hamiltonian, the
// distribution the shots draw their settings from, and every added round's
// outcomes with a SHA-256 of its records. It is replaced atomically after
// each round; the plan of a round is drawn from the run's seed and the
// round's number, so asking again after a crash gives the same plan; adding
// the same records twice is refused; every read checks the digests, and
// rounds add and rounds status replay the rounds and check the recorded
// intervals.
//
// -records may be repeated (or hold names separated by commas) to combine
// files, and "-" reads standard input. A flag that takes one value refuses a
// second. Every subcommand takes -h for its flags and -json for
// machine-readable output on standard output. Hamiltonian files are in the text or JSON
// format of package hamiltonian, plan files in the compact layout of
// allocate.WriteCompactPlan (one line per distinct setting), for a name
// ending in .json the full layout of allocate.WritePlan, or with plan
// -by-seed the seed plan of allocate.WriteSeedPlan (the distribution and
// seed of random, biased or importance, a few lines whatever the shots;
// certify takes one too large to expand from its distribution, the other
// commands stream it into its distinct settings), records in the CSV
// or JSON form of package estimate (chosen by the file name's extension,
// .json or anything else). Wherever a
// Hamiltonian file is read, an FCIDUMP file (recognised by its "&FCI"
// header) may be given instead; it is mapped with the Jordan–Wigner encoding,
// spin orbitals interleaved α, β.
//
// Exact ground states (info -exact, simulate) are taken among the states of
// -electrons N with 2S_z = -spin MS2 when these are given, or by default
// NELEC and MS2 of an FCIDUMP; "-electrons all" (the default for other
// Hamiltonian files) searches every electron number. The sector needs a
// Jordan–Wigner Hamiltonian with interleaved spin orbitals; others are
// refused. simulate -state FILE keeps the ground state in FILE (a header
// naming the Hamiltonian's hash and the sector, then the non-zero amplitudes)
// so that later runs with the same Hamiltonian and sector skip the solver.
// simulate -prepare hf measures the determinant that fills the lowest
// orbitals with the sector's α and β electrons (the Hartree–Fock state of an
// FCIDUMP, whose orbitals come in energy order); -prepare FILE reads a state
// from an amplitude file (estimate.ReadAmplitudes: a line "shotplan
// amplitudes 1", a line "qubits N", then "INDEX RE IM" per non-zero
// amplitude). -depolarizing, -dephasing and -pair-flip add the simulator's
// noise models (estimate.SimulatorOptions) with one rate for every qubit or
// neighbouring pair.
//
// Bad input — a missing or malformed file, an unknown strategy, a plan made
// for another Hamiltonian — ends the command with exit status 2 and one line
// on standard error naming the file, the line and the problem. Output files
// are written atomically: a failed step leaves no partial file. Only regular
// files are written; -o - writes a plan, records or Hamiltonian to standard
// output. SIGINT and SIGTERM remove the temporary files of a step and end it
// with status 130 or 143. Costly steps are estimated before they start and
// refused past a limit that a flag raises (plan -shot-limit, info -exact and
// simulate -memory-limit, export -program-limit; see the README's "Limits
// and bad input").
package main
