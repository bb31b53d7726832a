package estimate

import (
	"bytes"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/pauli"
)

func mustBits(t testing.TB, s string) pauli.Bits {
	t.Helper()
	b, err := pauli.ParseBits(s)
	if err != nil {
		t.Fatal(err)
	}
	return b
}

// sampleRecords returns records of 3-qubit shots in the order
// ZZZ, ZZZ, XYZ, ZZZ, XYZ, XYZ.
func sampleRecords(t testing.TB) *Records {
	rec := NewRecords(3)
	for _, s := range [][2]string{{"ZZZ", "000"}, {"ZZZ", "101"}, {"XYZ", "110"}, {"ZZZ", "011"}, {"XYZ", "001"}, {"XYZ", "111"}} {
		if err := rec.Add(pauli.MustParseSetting(s[0]), mustBits(t, s[1])); err != nil {
			t.Fatal(err)
		}
	}
	return rec
}

func TestRecordsGroupsAndOrder(t *testing.T) {
	rec := sampleRecords(t)
	if rec.Len() != 6 || rec.Groups() != 2 {
		t.Fatalf("Len, Groups = %d, %d, want 6, 2", rec.Len(), rec.Groups())
	}
	if got := rec.GroupLen(0); got != 3 {
		t.Errorf("GroupLen(0) = %d, want 3", got)
	}
	if got := rec.Outcome(1, 2).Format(3); got != "111" {
		t.Errorf("Outcome(1, 2) = %s, want 111", got)
	}
	want := [][2]string{{"ZZZ", "000"}, {"ZZZ", "101"}, {"XYZ", "110"}, {"ZZZ", "011"}, {"XYZ", "001"}, {"XYZ", "111"}}
	for k, s := range rec.Shots() {
		if got := [2]string{s.Setting.String(), s.Outcome.Format(3)}; got != want[k] {
			t.Errorf("Shots() shot %d = %v, want %v", k, got, want[k])
		}
		g, b := rec.Shot(k)
		if got := [2]string{rec.Setting(g).String(), b.Format(3)}; got != want[k] {
			t.Errorf("Shot(%d) = %v, want %v", k, got, want[k])
		}
	}
	if g, ok := rec.Group(pauli.MustParseSetting("XYZ")); !ok || g != 1 {
		t.Errorf("Group(XYZ) = %d, %v, want 1, true", g, ok)
	}
	if _, ok := rec.Group(pauli.MustParseSetting("XXX")); ok {
		t.Errorf("Group(XXX) found a group that was never added")
	}
}

func TestRecordsAddErrors(t *testing.T) {
	rec := NewRecords(3)
	tests := []struct {
		name string
		s    pauli.Setting
		b    pauli.Bits
	}{
		{"setting too wide", pauli.MustParseSetting("ZZZZ"), pauli.NewBits(4)},
		{"too many words", pauli.MustParseSetting("ZZZ"), pauli.Bits{0, 0}},
		{"bit beyond last qubit", pauli.MustParseSetting("ZZZ"), pauli.Bits{1 << 3}},
	}
	for _, tc := range tests {
		if err := rec.Add(tc.s, tc.b); err == nil {
			t.Errorf("%s: Add(%s, %v) = nil, want an error", tc.name, tc.s, tc.b)
		}
	}
	if rec.Len() != 0 {
		t.Errorf("failed Adds left %d shots", rec.Len())
	}
}

func TestCSVRoundTrip(t *testing.T) {
	rec := sampleRecords(t)
	var buf bytes.Buffer
	if err := WriteCSV(&buf, rec); err != nil {
		t.Fatal(err)
	}
	want := "setting,outcome\nZZZ,000\nZZZ,101\nXYZ,110\nZZZ,011\nXYZ,001\nXYZ,111\n"
	if buf.String() != want {
		t.Errorf("WriteCSV wrote\n%s\nwant\n%s", buf.String(), want)
	}
	got, err := ReadCSV(&buf, nil)
	if err != nil {
		t.Fatal(err)
	}
	if !got.Equal(rec) {
		t.Errorf("ReadCSV(WriteCSV(rec)) differs from rec")
	}
}

func TestCSVSettingIndex(t *testing.T) {
	list := []pauli.Setting{pauli.MustParseSetting("ZZZ"), pauli.MustParseSetting("XYZ")}
	in := "setting,outcome\n0,000\n0,101\n1,110\nZZZ,011\n1,001\r\nXYZ,111\n"
	got, err := ReadCSV(strings.NewReader(in), list)
	if err != nil {
		t.Fatal(err)
	}
	if !got.Equal(sampleRecords(t)) {
		t.Errorf("ReadCSV with setting indices differs from the records spelled out")
	}
}

func TestCSVBadLines(t *testing.T) {
	list := []pauli.Setting{pauli.MustParseSetting("ZZZ")}
	tests := []struct {
		name     string
		in       string
		settings []pauli.Setting
		line     int
		reason   string // a fragment of the message
	}{
		{"wrong bit-string length", "setting,outcome\nZZZ,000\nZZZ,0101\n", nil, 3, "has 4 bits, want 3"},
		{"setting index out of range", "setting,outcome\n0,000\n1,000\n", list, 3, "index 1 out of range"},
		{"index without a list", "setting,outcome\nZZZ,000\n0,000\n", nil, 3, "no settings list"},
		{"non-binary character", "setting,outcome\nZZZ,000\nZZZ,0x0\nZZZ,000\n", nil, 3, `character 'x' at qubit 1`},
		{"unknown letter", "setting,outcome\nZQZ,000\n", nil, 2, `unknown letter 'Q'`},
		{"identity in a setting", "setting,outcome\nZIZ,000\n", nil, 2, "no basis"},
		{"setting of another width", "setting,outcome\nZZZ,000\nZZ,00\n", nil, 3, "has 2 qubits, want 3"},
		{"three fields", "setting,outcome\nZZZ,000,1\n", nil, 2, "3 fields"},
		{"wrong header", "basis,bits\nZZZ,000\n", nil, 1, "header"},
		{"empty file", "", nil, 1, "missing header"},
		{"blank line then bad index", "setting,outcome\n0,000\n\n-1,000\n", list, 4, "setting \"-1\""},
		{"negative-looking index", "setting,outcome\n0,000\n9999999999999999999999,000\n", list, 3, "not a non-negative integer"},
	}
	for _, tc := range tests {
		rec, err := ReadCSV(strings.NewReader(tc.in), tc.settings)
		if rec != nil {
			t.Errorf("%s: ReadCSV returned records with an error", tc.name)
		}
		var le *LineError
		if !errors.As(err, &le) {
			t.Errorf("%s: ReadCSV error = %v, want a *LineError", tc.name, err)
			continue
		}
		if le.Line != tc.line || !strings.Contains(le.Reason, tc.reason) {
			t.Errorf("%s: ReadCSV error = %q (line %d), want line %d mentioning %q", tc.name, err, le.Line, tc.line, tc.reason)
		}
		if !errors.Is(err, ErrFormat) {
			t.Errorf("%s: errors.Is(err, ErrFormat) = false", tc.name)
		}
	}
}

func TestCSVFileAtomic(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "shots.csv")
	rec := sampleRecords(t)
	if err := WriteCSVFile(path, rec); err != nil {
		t.Fatal(err)
	}
	got, err := ReadCSVFile(path, nil)
	if err != nil {
		t.Fatal(err)
	}
	if !got.Equal(rec) {
		t.Errorf("ReadCSVFile(WriteCSVFile(rec)) differs from rec")
	}
	// A write into a missing directory fails and leaves nothing behind.
	if err := WriteCSVFile(filepath.Join(dir, "missing", "shots.csv"), rec); err == nil {
		t.Errorf("WriteCSVFile into a missing directory succeeded")
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 1 {
		t.Errorf("directory holds %d entries, want only shots.csv", len(entries))
	}
	// A bad file is reported with its name and line, and gives no records.
	bad := filepath.Join(dir, "bad.csv")
	os.WriteFile(bad, []byte("setting,outcome\nZZZ,000\nZZZ,00\n"), 0o644)
	if rec, err := ReadCSVFile(bad, nil); rec != nil || err == nil || !strings.Contains(err.Error(), "bad.csv: estimate: line 3:") {
		t.Errorf("ReadCSVFile(bad) = %v, %v, want nil and an error naming bad.csv line 3", rec, err)
	}
}

func TestJSONRoundTrip(t *testing.T) {
	rec := sampleRecords(t)
	var buf bytes.Buffer
	if err := WriteJSON(&buf, rec); err != nil {
		t.Fatal(err)
	}
	want := `{"qubits":3,"settings":["ZZZ","XYZ"],"shots":[{"setting":0,"outcome":"000"},{"setting":0,"outcome":"101"},{"setting":1,"outcome":"110"},{"setting":0,"outcome":"011"},{"setting":1,"outcome":"001"},{"setting":1,"outcome":"111"}]}` + "\n"
	if buf.String() != want {
		t.Errorf("WriteJSON wrote\n%s\nwant\n%s", buf.String(), want)
	}
	got, err := ReadJSON(&buf)
	if err != nil {
		t.Fatal(err)
	}
	if !got.Equal(rec) {
		t.Errorf("ReadJSON(WriteJSON(rec)) differs from rec")
	}
	path := filepath.Join(t.TempDir(), "shots.json")
	if err := WriteJSONFile(path, rec); err != nil {
		t.Fatal(err)
	}
	if got, err := ReadJSONFile(path); err != nil || !got.Equal(rec) {
		t.Errorf("ReadJSONFile(WriteJSONFile(rec)) = %v, want rec", err)
	}
}

func TestJSONBad(t *testing.T) {
	tests := []struct{ name, in, want string }{
		{"index out of range", `{"qubits":2,"settings":["ZZ"],"shots":[{"setting":1,"outcome":"00"}]}`, "shot 0: setting index 1"},
		{"wrong outcome length", `{"qubits":2,"settings":["ZZ"],"shots":[{"setting":0,"outcome":"00"},{"setting":0,"outcome":"0"}]}`, "shot 1: outcome"},
		{"non-binary", `{"qubits":2,"settings":["ZZ"],"shots":[{"setting":0,"outcome":"02"}]}`, "character '2'"},
		{"setting width", `{"qubits":2,"settings":["ZZZ"],"shots":[]}`, "setting 0"},
		{"no qubits", `{"settings":[],"shots":[]}`, "qubit count 0"},
		{"not JSON", `{"qubits":`, "malformed"},
		// A misspelt key would otherwise read as records with no shots.
		{"unknown key", `{"qubits":2,"settings":["ZZ"],"shot":[{"setting":0,"outcome":"00"}]}`, `unknown field "shot"`},
		{"no shots key", `{"qubits":2,"settings":["ZZ"]}`, `no "shots" key`},
		{"syntax error line", "{\"qubits\": 2,\n \"settings\": [\"ZZ\"],\n \"shots\": [{\"setting\": 0 \"outcome\": \"00\"}]}", "line 3"},
		{"type error line", "{\"qubits\": 2,\n \"settings\": [\"ZZ\"],\n \"shots\": [\n  {\"setting\": \"0\", \"outcome\": \"00\"}]}", "line 4"},
		{"text after the object", `{"qubits":1,"settings":[],"shots":[]} {}`, "after"},
	}
	for _, tc := range tests {
		rec, err := ReadJSON(strings.NewReader(tc.in))
		if rec != nil || err == nil || !strings.Contains(err.Error(), tc.want) || !errors.Is(err, ErrFormat) {
			t.Errorf("%s: ReadJSON = %v, %v, want nil and an ErrFormat error mentioning %q", tc.name, rec, err, tc.want)
		}
	}
}

// FuzzReadCSV checks that ReadCSV never panics and that whatever it accepts
// survives a write and a second read unchanged.
func FuzzReadCSV(f *testing.F) {
	f.Add("setting,outcome\nZZZ,000\nXYZ,101\n")
	f.Add("setting,outcome\n0,01\n1,10\n")
	f.Add("setting,outcome\nZZ,0x\n")
	f.Add("setting,outcome\n\"ZZ\",\"01\"\n")
	f.Add("")
	list := []pauli.Setting{pauli.MustParseSetting("ZZ"), pauli.MustParseSetting("XY")}
	f.Fuzz(func(t *testing.T, in string) {
		for _, settings := range [][]pauli.Setting{nil, list} {
			rec, err := ReadCSV(strings.NewReader(in), settings)
			if err != nil {
				if rec != nil {
					t.Fatalf("ReadCSV(%q) returned records with error %v", in, err)
				}
				continue
			}
			var buf bytes.Buffer
			if err := WriteCSV(&buf, rec); err != nil {
				t.Fatal(err)
			}
			again, err := ReadCSV(&buf, nil)
			if err != nil {
				if rec.Len() == 0 {
					continue // no rows: the qubit count does not survive
				}
				t.Fatalf("ReadCSV(WriteCSV(ReadCSV(%q))): %v", in, err)
			}
			if !again.Equal(rec) {
				t.Fatalf("ReadCSV(%q) does not survive a round trip", in)
			}
		}
	})
}

// FuzzReadJSON checks that ReadJSON never panics and that whatever it
// accepts survives a write and a second read unchanged.
func FuzzReadJSON(f *testing.F) {
	f.Add(`{"qubits":2,"settings":["ZZ","XY"],"shots":[{"setting":0,"outcome":"01"},{"setting":1,"outcome":"11"}]}`)
	f.Add(`{"qubits":1000000000000,"settings":[],"shots":[]}`)
	f.Add(`{"qubits":2,"settings":["ZZ"],"shots":[{"setting":-1,"outcome":"01"}]}`)
	f.Fuzz(func(t *testing.T, in string) {
		rec, err := ReadJSON(strings.NewReader(in))
		if err != nil {
			if rec != nil {
				t.Fatalf("ReadJSON(%q) returned records with error %v", in, err)
			}
			return
		}
		var buf bytes.Buffer
		if err := WriteJSON(&buf, rec); err != nil {
			t.Fatal(err)
		}
		again, err := ReadJSON(&buf)
		if err != nil || !again.Equal(rec) {
			t.Fatalf("ReadJSON(%q) does not survive a round trip: %v", in, err)
		}
	})
}

// TestReadersRefuseEndlessInput: a records file without newlines (as
// /dev/zero reads) or that is not JSON must get a clear error after reading
// a bounded amount, never an attempt to read it whole.
func TestReadersRefuseEndlessInput(t *testing.T) {
	zeros := &countingZeros{}
	_, err := ReadCSV(zeros, nil)
	if err == nil || !strings.Contains(err.Error(), "line 1") || !strings.Contains(err.Error(), "longer than") {
		t.Errorf("ReadCSV of endless zero bytes: %v, want a line-length error on line 1", err)
	}
	if zeros.n > 1<<21 {
		t.Errorf("ReadCSV read %d bytes of an endless line before refusing it", zeros.n)
	}
	zeros = &countingZeros{}
	if _, err := ReadJSON(zeros); err == nil || !strings.Contains(err.Error(), "want '{'") {
		t.Errorf("ReadJSON of zero bytes: %v, want a refusal", err)
	}
	if zeros.n > 1<<16 {
		t.Errorf("ReadJSON read %d bytes of zeros before refusing them", zeros.n)
	}
}

// countingZeros reads as an endless stream of zero bytes and counts them.
type countingZeros struct{ n int }

func (z *countingZeros) Read(p []byte) (int, error) {
	clear(p)
	z.n += len(p)
	return len(p), nil
}
