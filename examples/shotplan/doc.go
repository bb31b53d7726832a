// Command shotplan runs the file-based workflow of the shotplan library, one
// subcommand per step. Every step reads and writes files, so the steps can
// run on different machines (plan on a laptop, measure on the device's host,
// estimate anywhere):
//
//	shotplan info     [-exact [-electrons N] [-spin MS2]] [-json] HAMILTONIAN
//	shotplan convert  [-encoding jw|bk|parity] [-frozen K] [-active M] -o HAMILTONIAN FCIDUMP
//	shotplan plan     -ham H -strategy NAME -shots N [-seed S] -o PLAN
//	shotplan certify  -ham H -plan PLAN [-delta 0.05]
//	shotplan export   -plan PLAN -o DIR
//	shotplan simulate -ham H -plan PLAN [-seed S] [-readout P] [-electrons N] [-spin MS2] [-state FILE] -o RECORDS
//	shotplan estimate -ham H -plan PLAN -records RECORDS [-delta 0.05]
//
// Every subcommand takes -h for its flags and -json for machine-readable
// output on standard output. Hamiltonian files are in the text or JSON
// format of package hamiltonian, plan files in the format of
// allocate.WritePlan, records in the CSV or JSON form of package estimate
// (chosen by the file name's extension, .json or anything else). Wherever a
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
//
// Bad input — a missing or malformed file, an unknown strategy, a plan made
// for another Hamiltonian — ends the command with exit status 2 and one line
// on standard error naming the file, the line and the problem. Output files
// are written atomically: a failed step leaves no partial file.
package main
