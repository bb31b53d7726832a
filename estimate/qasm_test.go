package estimate

import (
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/pauli"
)

// TestAppendQASM checks the program for one setting. The gates follow the
// OpenQASM 3 standard library (stdgates.inc: h, sdg) and the usual
// basis-change rule (X: H; Y: S† then H; common practice).
func TestAppendQASM(t *testing.T) {
	got := string(AppendQASM(nil, pauli.MustParseSetting("XYZ")))
	want := `OPENQASM 3.0;
include "stdgates.inc";
// setting XYZ; bit c[q] holds qubit q
qubit[3] q;
bit[3] c;
h q[0];
sdg q[1];
h q[1];
c = measure q;
`
	if got != want {
		t.Errorf("AppendQASM(XYZ) =\n%s\nwant\n%s", got, want)
	}
}

func TestExportQASM(t *testing.T) {
	root := t.TempDir()
	dir := filepath.Join(root, "plan")
	var settings []pauli.Setting
	for _, s := range []string{"ZZZZ", "XXYY", "ZZZZ", "XYYX"} {
		settings = append(settings, pauli.MustParseSetting(s))
	}
	shots := []int{10, 20, 5, 7}
	if err := ExportQASM(dir, settings, shots); err != nil {
		t.Fatal(err)
	}
	entries, err := os.ReadDir(dir)
	if err != nil {
		t.Fatal(err)
	}
	var names []string
	for _, e := range entries {
		names = append(names, e.Name())
	}
	if want := []string{"manifest.csv", "setting_0.qasm", "setting_1.qasm", "setting_2.qasm"}; !slices.Equal(names, want) {
		t.Errorf("ExportQASM wrote %v, want %v", names, want)
	}
	prog, _ := os.ReadFile(filepath.Join(dir, "setting_1.qasm"))
	if !strings.Contains(string(prog), "// setting XXYY;") {
		t.Errorf("setting_1.qasm is for another setting:\n%s", prog)
	}
	got, gotShots, err := ReadManifestFile(filepath.Join(dir, ManifestName))
	if err != nil {
		t.Fatal(err)
	}
	var gotText []string
	for _, s := range got {
		gotText = append(gotText, s.String())
	}
	if want := []string{"ZZZZ", "XXYY", "XYYX"}; !slices.Equal(gotText, want) || !slices.Equal(gotShots, []int{15, 20, 7}) {
		t.Errorf("manifest = %v %v, want %v [15 20 7]", gotText, gotShots, want)
	}
	// Records that refer to the manifest's indices read back.
	rec, err := ReadCSV(strings.NewReader("setting,outcome\n2,0110\n0,0000\n"), got)
	if err != nil || rec.Setting(0).String() != "XYYX" {
		t.Errorf("ReadCSV with manifest indices = %v, %v", rec, err)
	}
	// A second export into the now non-empty directory is refused and
	// leaves it as it was.
	if err := ExportQASM(dir, settings[:1], shots[:1]); err == nil {
		t.Errorf("ExportQASM into a non-empty directory succeeded")
	}
	if e, _ := os.ReadDir(dir); len(e) != 4 {
		t.Errorf("refused export changed the directory to %d entries", len(e))
	}
	// An empty existing directory is fine; no temporary directories remain.
	empty := filepath.Join(root, "empty")
	os.Mkdir(empty, 0o755)
	if err := ExportQASM(empty, settings[:1], shots[:1]); err != nil {
		t.Errorf("ExportQASM into an empty directory: %v", err)
	}
	if e, _ := os.ReadDir(root); len(e) != 2 {
		t.Errorf("root holds %d entries after two exports, want 2", len(e))
	}
	for _, tc := range []struct {
		name     string
		settings []pauli.Setting
		shots    []int
	}{
		{"lengths", settings, shots[:2]},
		{"negative", settings[:1], []int{-1}},
		{"none", nil, nil},
		{"widths", []pauli.Setting{settings[0], pauli.MustParseSetting("ZZ")}, []int{1, 1}},
	} {
		if err := ExportQASM(filepath.Join(root, tc.name), tc.settings, tc.shots); err == nil {
			t.Errorf("%s: ExportQASM succeeded", tc.name)
		}
		if _, err := os.Stat(filepath.Join(root, tc.name)); err == nil {
			t.Errorf("%s: a failed ExportQASM created its directory", tc.name)
		}
	}
}

func TestReadManifestBad(t *testing.T) {
	for _, tc := range []struct{ name, in, want string }{
		{"header", "index,setting\n", "line 1: header"},
		{"index order", "index,program,setting,shots\n1,a,ZZ,3\n", "line 2: index"},
		{"shots", "index,program,setting,shots\n0,a,ZZ,x\n", "line 2: shot count"},
		{"width", "index,program,setting,shots\n0,a,ZZ,1\n1,b,ZZZ,1\n", "line 3: setting"},
	} {
		if _, _, err := ReadManifest(strings.NewReader(tc.in)); err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: ReadManifest error = %v, want one mentioning %q", tc.name, err, tc.want)
		}
	}
}
