package estimate

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strconv"

	"github.com/shotplan/shotplan/internal/atomicfile"
	"github.com/shotplan/shotplan/pauli"
)

// InputsProgramName is the name of the one program [ExportQASMInputs]
// writes.
const InputsProgramName = "measure.qasm"

// AppendQASMInputs appends to dst one OpenQASM 3 program that measures
// every local setting of n qubits, chosen at run time by n integer inputs:
// input basis_q selects the letter measured on qubit q, 0 for Z,
// 1 for X and 2 for Y. The gates are those of [AppendQASM]: h for X, sdg
// then h for Y, nothing for Z. Bit c[q] holds qubit q.
func AppendQASMInputs(dst []byte, n int) []byte {
	dst = append(dst, "OPENQASM 3.0;\ninclude \"stdgates.inc\";\n"...)
	dst = append(dst, "// every local setting of "+strconv.Itoa(n)+" qubits: input basis_q picks the letter measured\n"...)
	dst = append(dst, "// on qubit q, 0 = Z, 1 = X, 2 = Y; bit c[q] holds qubit q\n"...)
	for q := range n {
		dst = append(dst, "input uint[2] basis_"...)
		dst = strconv.AppendInt(dst, int64(q), 10)
		dst = append(dst, ";\n"...)
	}
	nq := strconv.Itoa(n)
	dst = append(dst, "qubit["+nq+"] q;\nbit["+nq+"] c;\n"...)
	for q := range n {
		k := strconv.Itoa(q)
		dst = append(dst, "if (basis_"+k+" == 1) { h q["+k+"]; }\n"...)
		dst = append(dst, "if (basis_"+k+" == 2) { sdg q["+k+"]; h q["+k+"]; }\n"...)
	}
	return append(dst, "c = measure q;\n"...)
}

// QASMInput returns the value of input basis_q of the program of
// [AppendQASMInputs] for letter l: 1 for X, 2 for Y, 0 otherwise (Z).
func QASMInput(l pauli.Letter) int {
	switch l {
	case pauli.X:
		return 1
	case pauli.Y:
		return 2
	}
	return 0
}

// ExportQASMInputs writes, into the new directory dir, the one program of
// [AppendQASMInputs] as measure.qasm and a manifest as [ExportQASM] does,
// whose program column is measure.qasm on every row: the setting column
// gives the inputs (letter q sets basis_q, see [QASMInput]). It is the
// compact form for plans with many distinct settings: two files instead of
// one program per setting. Only local settings can be chosen by inputs; an
// entangled setting is an error. The directory appears complete or not at
// all, as with ExportQASM, which also lists the other errors.
func ExportQASMInputs(dir string, settings []pauli.Setting, shots []int) error {
	distinct, total, err := mergeSettings("ExportQASMInputs", settings, shots)
	if err != nil {
		return err
	}
	for k, s := range distinct {
		if !s.IsLocal() {
			return fmt.Errorf("estimate: setting %d (%s) is entangled: its circuit cannot be chosen by basis inputs", k, s)
		}
	}
	if entries, err := os.ReadDir(dir); err == nil && len(entries) > 0 {
		return fmt.Errorf("estimate: directory %s is not empty", dir)
	} else if err != nil && !errors.Is(err, os.ErrNotExist) {
		return err
	}
	return atomicfile.WriteDir(dir, func(tmp string) error {
		prog := AppendQASMInputs(nil, distinct[0].Qubits())
		if err := os.WriteFile(filepath.Join(tmp, InputsProgramName), prog, 0o666); err != nil {
			return err
		}
		names := make([]string, len(distinct))
		for d := range names {
			names[d] = InputsProgramName
		}
		return writeManifest(filepath.Join(tmp, ManifestName), distinct, names, total)
	})
}
