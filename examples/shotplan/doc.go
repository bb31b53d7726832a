// Command shotplan runs the file-based workflow of the shotplan library, one
// subcommand per step. Every step reads and writes files, so the steps can
// run on different machines (plan on a laptop, measure on the device's host,
// estimate anywhere):
//
//	shotplan info     [-exact] [-json] HAMILTONIAN
//	shotplan convert  [-encoding jw|bk|parity] [-frozen K] [-active M] -o HAMILTONIAN FCIDUMP
//	shotplan plan     -ham H -strategy NAME -shots N [-seed S] [-cost-budget B -shot-cost T -circuit-cost T] -o PLAN
//	shotplan certify  -ham H -plan PLAN [-delta 0.05]
//	shotplan export   -plan PLAN [-max-shots-per-circuit N] [-max-circuits-per-job N] -o DIR
//	shotplan simulate -ham H -plan PLAN [-seed S] [-readout P] -o RECORDS
//	shotplan estimate -ham H -plan PLAN -records RECORDS [-delta 0.05]
//
// Every subcommand takes -h for its flags and -json for machine-readable
// output on standard output. Hamiltonian files are in the text or JSON
// format of package hamiltonian, plan files in the compact layout of
// allocate.WriteCompactPlan (one line per distinct setting) or, for a name
// ending in .json, the full layout of allocate.WritePlan, records in the CSV
// or JSON form of package estimate (chosen by the file name's extension,
// .json or anything else).
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
