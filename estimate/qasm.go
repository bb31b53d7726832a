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
// temporary directory beside it, which is then renamed. ExportQASM refuses
// a dir that exists and is not empty, so old programs never mix with new
// ones. It returns an error if the lengths differ, the widths differ, a
// count is negative or there are no settings.
func ExportQASM(dir string, settings []pauli.Setting, shots []int) (err error) {
	if len(settings) != len(shots) {
		return fmt.Errorf("estimate: ExportQASM: %d settings but %d shot counts", len(settings), len(shots))
	}
	if len(settings) == 0 {
		return fmt.Errorf("estimate: ExportQASM: no settings")
	}
	for k, s := range settings {
		if s.Qubits() != settings[0].Qubits() {
			return fmt.Errorf("estimate: ExportQASM: setting %d (%s) has %d qubits, setting 0 has %d", k, s, s.Qubits(), settings[0].Qubits())
		}
		if shots[k] < 0 {
			return fmt.Errorf("estimate: ExportQASM: setting %d (%s) has negative shot count %d", k, s, shots[k])
		}
	}
	distinct, total := pauli.MergeSettings(settings, shots)
	if len(distinct) == 0 {
		return errors.New("estimate: ExportQASM: no setting has shots")
	}
	if entries, err := os.ReadDir(dir); err == nil && len(entries) > 0 {
		return fmt.Errorf("estimate: ExportQASM: directory %s is not empty", dir)
	} else if err != nil && !errors.Is(err, os.ErrNotExist) {
		return err
	}
	parent, base := filepath.Split(filepath.Clean(dir))
	if parent == "" {
		parent = "."
	}
	tmp, err := os.MkdirTemp(parent, "."+base+".tmp*")
	if err != nil {
		return err
	}
	defer func() {
		if err != nil {
			os.RemoveAll(tmp)
		}
	}()
	if err = os.Chmod(tmp, 0o755); err != nil {
		return err
	}
	digits := len(strconv.Itoa(len(distinct) - 1))
	names := make([]string, len(distinct))
	var buf []byte
	for d, s := range distinct {
		names[d] = fmt.Sprintf("setting_%0*d.qasm", digits, d)
		buf = AppendQASM(buf[:0], s)
		if err = os.WriteFile(filepath.Join(tmp, names[d]), buf, 0o644); err != nil {
			return err
		}
	}
	err = atomicfile.Write(filepath.Join(tmp, ManifestName), func(w io.Writer) error {
		bw := bufio.NewWriter(w)
		bw.WriteString(manifestHeader + "\n")
		for d, s := range distinct {
			fmt.Fprintf(bw, "%d,%s,%s,%d\n", d, names[d], s, total[d])
		}
		return bw.Flush()
	})
	if err != nil {
		return err
	}
	// An empty existing directory is replaced.
	if err = os.Remove(dir); err != nil && !errors.Is(err, os.ErrNotExist) {
		return err
	}
	return os.Rename(tmp, dir)
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
