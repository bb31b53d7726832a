package estimate

import (
	"bufio"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"github.com/shotplan/shotplan/internal/atomicfile"
	"github.com/shotplan/shotplan/pauli"
)

// AppendQASM appends to dst an OpenQASM 3 program that measures setting s:
// the basis change of every qubit (or, for an entangled setting, its
// Clifford circuit), then a measurement of every qubit q into bit c[q].
func AppendQASM(dst []byte, s pauli.Setting) []byte {
	n := strconv.Itoa(s.Qubits())
	dst = append(dst, "OPENQASM 3.0;\ninclude \"stdgates.inc\";\n"...)
	dst = append(dst, "// setting "...)
	dst = s.AppendText(dst)
	dst = append(dst, "; bit c[q] holds qubit q\n"...)
	dst = append(dst, "qubit["+n+"] q;\nbit["+n+"] c;\n"...)
	dst = appendBasisChange(dst, s)
	return append(dst, "c = measure q;\n"...)
}

// appendBasisChange appends the gates that rotate each qubit of s into its
// measurement basis, one statement a line: X needs h (Hadamard), Y needs
// sdg then h (S† maps the +1 eigenstate of Y to that of X), Z needs
// nothing. After them, reading a qubit in the computational basis gives 0
// for eigenvalue +1 of its letter. An entangled setting gets its circuit,
// gate by gate in order: h, s, sdg, cx (control first), cz.
func appendBasisChange(dst []byte, s pauli.Setting) []byte {
	if !s.IsLocal() {
		for _, g := range s.Circuit().Gates() {
			switch g.Kind {
			case pauli.GateH:
				dst = append(dst, "h q["...)
			case pauli.GateS:
				dst = append(dst, "s q["...)
			case pauli.GateSdg:
				dst = append(dst, "sdg q["...)
			case pauli.GateCNOT:
				dst = append(dst, "cx q["...)
			case pauli.GateCZ:
				dst = append(dst, "cz q["...)
			}
			dst = strconv.AppendInt(dst, int64(g.Q0), 10)
			if g.Kind.TwoQubit() {
				dst = append(dst, "], q["...)
				dst = strconv.AppendInt(dst, int64(g.Q1), 10)
			}
			dst = append(dst, "];\n"...)
		}
		return dst
	}
	for q := range s.Qubits() {
		switch s.At(q) {
		case pauli.X:
			dst = append(dst, "h q["...)
			dst = strconv.AppendInt(dst, int64(q), 10)
			dst = append(dst, "];\n"...)
		case pauli.Y:
			dst = append(dst, "sdg q["...)
			dst = strconv.AppendInt(dst, int64(q), 10)
			dst = append(dst, "];\nh q["...)
			dst = strconv.AppendInt(dst, int64(q), 10)
			dst = append(dst, "];\n"...)
		}
	}
	return dst
}

// manifestHeader is the first line of a manifest.
const manifestHeader = "index,program,setting,shots"

// ManifestName is the name of the manifest file [ExportQASM] writes.
const ManifestName = "manifest.csv"

// ExportQASM writes, into the new directory dir, one OpenQASM 3 program per
// distinct setting (setting_0.qasm, setting_1.qasm, ... with the numbers
// zero-padded to a common width, in order of first appearance) and a
// manifest, manifest.csv, with the header "index,program,setting,shots" and
// one row per program giving its total shot count. Repeated settings are
// merged and their shots added; settings with no shots get no program. The manifest's settings, in index order,
// are the list that a records CSV with setting indices refers to (see
// [ReadCSV] and [ReadManifestFile]).
//
// The directory appears complete or not at all: everything is written to a
// temporary directory beside it (named .DIR.tmp-HOST-PID-RANDOM), which is
// then renamed. A temporary directory left by a killed process of this host
// is removed by the next export to the same directory. ExportQASM refuses
// a dir that exists and is not empty, so old programs never mix with new
// ones. It returns an error if the lengths differ, the widths differ, a
// count is negative or there are no settings.
func ExportQASM(dir string, settings []pauli.Setting, shots []int) (err error) {
	distinct, total, err := mergeSettings("ExportQASM", settings, shots)
	if err != nil {
		return err
	}
	if entries, err := os.ReadDir(dir); err == nil && len(entries) > 0 {
		return fmt.Errorf("estimate: directory %s is not empty", dir)
	} else if err != nil && !errors.Is(err, os.ErrNotExist) {
		return err
	}
	return atomicfile.WriteDir(dir, func(tmp string) error {
		digits := len(strconv.Itoa(len(distinct) - 1))
		names := make([]string, len(distinct))
		var buf []byte
		for d, s := range distinct {
			names[d] = fmt.Sprintf("setting_%0*d.qasm", digits, d)
			buf = AppendQASM(buf[:0], s)
			if err := os.WriteFile(filepath.Join(tmp, names[d]), buf, 0o666); err != nil {
				return err
			}
		}
		return writeManifest(filepath.Join(tmp, ManifestName), distinct, names, total)
	})
}

// writeManifest writes a manifest: row d gives program names[d], setting
// distinct[d] and shot count total[d].
func writeManifest(path string, distinct []pauli.Setting, names []string, total []int) error {
	return atomicfile.Write(path, func(w io.Writer) error {
		bw := bufio.NewWriter(w)
		bw.WriteString(manifestHeader + "\n")
		for d, s := range distinct {
			fmt.Fprintf(bw, "%d,%s,%s,%d\n", d, names[d], s, total[d])
		}
		return bw.Flush()
	})
}

// mergeSettings checks the arguments of an export and merges repeated
// settings, adding their shots: it returns the distinct settings in order
// of first appearance with their total shot counts.
func mergeSettings(fn string, settings []pauli.Setting, shots []int) (distinct []pauli.Setting, total []int, err error) {
	if len(settings) != len(shots) {
		return nil, nil, fmt.Errorf("estimate: %s: %d settings but %d shot counts", fn, len(settings), len(shots))
	}
	if len(settings) == 0 {
		return nil, nil, fmt.Errorf("estimate: %s: no settings", fn)
	}
	for k, s := range settings {
		if s.Qubits() != settings[0].Qubits() {
			return nil, nil, fmt.Errorf("estimate: %s: setting %d (%s) has %d qubits, setting 0 has %d", fn, k, s, s.Qubits(), settings[0].Qubits())
		}
		if shots[k] < 0 {
			return nil, nil, fmt.Errorf("estimate: %s: setting %d (%s) has negative shot count %d", fn, k, s, shots[k])
		}
	}
	distinct, total = pauli.MergeSettings(settings, shots)
	if len(distinct) == 0 {
		return nil, nil, fmt.Errorf("estimate: %s: no setting has shots", fn)
	}
	return distinct, total, nil
}

// ReadManifest reads a manifest written by [ExportQASM] and returns its
// settings and shot counts in index order. Bad lines are reported as a
// [*LineError].
func ReadManifest(r io.Reader) (settings []pauli.Setting, shots []int, err error) {
	cr := csv.NewReader(r)
	cr.FieldsPerRecord = -1
	header := false
	for {
		f, err := cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			if le := csvLineError(err); le != nil {
				return nil, nil, le
			}
			return nil, nil, err
		}
		line, _ := cr.FieldPos(0)
		if !header {
			if strings.Join(f, ",") != manifestHeader {
				return nil, nil, lineError(line, fmt.Sprintf("header %q, want %q", strings.Join(f, ","), manifestHeader))
			}
			header = true
			continue
		}
		if len(f) != 4 {
			return nil, nil, lineError(line, fmt.Sprintf("%d fields, want 4", len(f)))
		}
		if k, err := strconv.Atoi(f[0]); err != nil || k != len(settings) {
			return nil, nil, lineError(line, fmt.Sprintf("index %q, want %d", f[0], len(settings)))
		}
		s, err := pauli.ParseSetting(f[2])
		if err != nil {
			return nil, nil, lineError(line, fmt.Sprintf("setting %q: %v", f[2], err))
		}
		if len(settings) > 0 && s.Qubits() != settings[0].Qubits() {
			return nil, nil, lineError(line, fmt.Sprintf("setting %q has %d qubits, want %d", f[2], s.Qubits(), settings[0].Qubits()))
		}
		m, err := strconv.Atoi(f[3])
		if err != nil || m < 0 {
			return nil, nil, lineError(line, fmt.Sprintf("shot count %q is not a non-negative integer", f[3]))
		}
		settings = append(settings, s)
		shots = append(shots, m)
	}
	if !header {
		return nil, nil, lineError(1, fmt.Sprintf("missing header %q", manifestHeader))
	}
	return settings, shots, nil
}

// ReadManifestFile reads a manifest file; see [ReadManifest]. Errors name
// the file.
func ReadManifestFile(path string) (settings []pauli.Setting, shots []int, err error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, nil, err
	}
	defer f.Close()
	settings, shots, err = ReadManifest(f)
	if err != nil {
		return nil, nil, fmt.Errorf("%s: %w", path, err)
	}
	return settings, shots, nil
}
