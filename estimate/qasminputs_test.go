package estimate

import (
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/pauli"
)

// TestAppendQASMInputs checks the program for two qubits, written out by
// hand: OpenQASM 3 input declarations and if statements (OpenQASM 3
// specification, "Input/output" and "If-else statements"), with the gates
// of the basis change (X: H; Y: S† then H; common practice).
func TestAppendQASMInputs(t *testing.T) {
	got := string(AppendQASMInputs(nil, 2))
	want := `OPENQASM 3.0;
include "stdgates.inc";
// every local setting of 2 qubits: input basis_q picks the letter measured
// on qubit q, 0 = Z, 1 = X, 2 = Y; bit c[q] holds qubit q
input uint[2] basis_0;
input uint[2] basis_1;
qubit[2] q;
bit[2] c;
if (basis_0 == 1) { h q[0]; }
if (basis_0 == 2) { sdg q[0]; h q[0]; }
if (basis_1 == 1) { h q[1]; }
if (basis_1 == 2) { sdg q[1]; h q[1]; }
c = measure q;
`
	if got != want {
		t.Errorf("AppendQASMInputs(2) =\n%s\nwant\n%s", got, want)
	}
}

// With the inputs of a setting, the program applies the gates of that
// setting's own program (checked by TestAppendQASM).
func TestQASMInputsMatchSettings(t *testing.T) {
	prog := string(AppendQASMInputs(nil, 4))
	cond := regexp.MustCompile(`^if \(basis_(\d+) == (\d)\) \{ (.*) \}$`)
	for _, text := range []string{"XYZZ", "YYXX", "ZZZZ", "ZXZY"} {
		s := pauli.MustParseSetting(text)
		var gates []string
		for _, line := range strings.Split(prog, "\n") {
			m := cond.FindStringSubmatch(line)
			if m == nil {
				continue
			}
			q, _ := strconv.Atoi(m[1])
			v, _ := strconv.Atoi(m[2])
			if QASMInput(s.At(q)) == v {
				for _, g := range strings.SplitAfter(m[3], ";") {
					if g = strings.TrimSpace(g); g != "" {
						gates = append(gates, g)
					}
				}
			}
		}
		var want []string
		for _, line := range strings.Split(string(AppendQASM(nil, s)), "\n") {
			if strings.HasPrefix(line, "h ") || strings.HasPrefix(line, "sdg ") {
				want = append(want, line)
			}
		}
		if !slices.Equal(gates, want) {
			t.Errorf("%s: inputs apply %q, its own program %q", text, gates, want)
		}
	}
}

func TestExportQASMInputs(t *testing.T) {
	root := t.TempDir()
	dir := filepath.Join(root, "plan")
	var settings []pauli.Setting
	for _, s := range []string{"ZZZ", "XYZ", "ZZZ", "YYX"} {
		settings = append(settings, pauli.MustParseSetting(s))
	}
	if err := ExportQASMInputs(dir, settings, []int{3, 4, 5, 6}); err != nil {
		t.Fatal(err)
	}
	entries, _ := os.ReadDir(dir)
	var names []string
	for _, e := range entries {
		names = append(names, e.Name())
	}
	if want := []string{ManifestName, InputsProgramName}; !slices.Equal(names, want) {
		t.Errorf("ExportQASMInputs wrote %v, want %v", names, want)
	}
	got, shots, err := ReadManifestFile(filepath.Join(dir, ManifestName))
	if err != nil {
		t.Fatal(err)
	}
	var text []string
	for _, s := range got {
		text = append(text, s.String())
	}
	if !slices.Equal(text, []string{"ZZZ", "XYZ", "YYX"}) || !slices.Equal(shots, []int{8, 4, 6}) {
		t.Errorf("manifest %v %v, want [ZZZ XYZ YYX] [8 4 6]", text, shots)
	}
	// An entangled setting cannot be chosen by inputs: refused, nothing
	// written.
	bell, err := pauli.ParseSetting("XX|ZZ")
	if err != nil {
		t.Skipf("no entangled setting syntax: %v", err)
	}
	other := filepath.Join(root, "entangled")
	if err := ExportQASMInputs(other, []pauli.Setting{bell}, []int{1}); err == nil || !strings.Contains(err.Error(), "entangled") {
		t.Errorf("ExportQASMInputs of an entangled setting: %v, want an error naming it entangled", err)
	}
	if e, _ := os.ReadDir(root); len(e) != 1 {
		t.Errorf("root holds %d entries, want 1", len(e))
	}
}
