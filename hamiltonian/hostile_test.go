package hamiltonian

import (
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"runtime"
	"strings"
	"testing"
)

// allocated returns the bytes f allocates (runtime.MemStats.TotalAlloc, a
// count of allocations, not a time).
func allocated(f func()) uint64 {
	var a, b runtime.MemStats
	runtime.ReadMemStats(&a)
	f()
	runtime.ReadMemStats(&b)
	return b.TotalAlloc - a.TotalAlloc
}

// TestReadMemoryBoundedByInput checks that the readers' memory follows what
// the input justifies, not its declared width times its line count: on a
// 65 536-qubit declaration, 200 000 repeated lines (1.2 MB) merge into one
// term; 65 536 distinct one-qubit terms, or a 20 000-term JSON file, would
// need a term table above MaxReadWords and are refused before it is built.
// The allocation bounds are 100 MiB against the several GiB a dense copy
// per line takes (65 536 qubits are 16 KiB a string).
func TestReadMemoryBoundedByInput(t *testing.T) {
	const bound = 100 << 20
	var b strings.Builder
	b.WriteString("qubits 65536\n")
	for range 200000 {
		b.WriteString("1 X_0\n")
	}
	var h *Hamiltonian
	var err error
	if got := allocated(func() { h, err = Read(strings.NewReader(b.String())) }); got > bound {
		t.Errorf("200 000 lines of one term allocate %d MiB", got>>20)
	}
	if err != nil || h.Len() != 1 || h.Coeff(0) != 200000 || h.Qubits() != 65536 {
		t.Fatalf("200 000 lines of 1 X_0: %v", err)
	}

	b.Reset()
	b.WriteString("qubits 65536\n")
	for k := range 65536 {
		fmt.Fprintf(&b, "1 Z_%d\n", k)
	}
	if got := allocated(func() { _, err = Read(strings.NewReader(b.String())) }); got > bound {
		t.Errorf("65 536 distinct terms allocate %d MiB before refusing", got>>20)
	}
	if err == nil || !errors.Is(err, ErrFormat) || !strings.Contains(err.Error(), "MaxReadWords") || !strings.Contains(err.Error(), "65536 distinct terms") {
		t.Errorf("65 536 distinct terms on 65 536 qubits: %v, want a refusal naming MaxReadWords", err)
	}

	b.Reset()
	b.WriteString(`{"qubits": 65536, "terms": [`)
	for k := range 20000 {
		if k > 0 {
			b.WriteString(",\n")
		}
		fmt.Fprintf(&b, `{"pauli": "Z_%d", "coeff": 1}`, 3*k)
	}
	b.WriteString("]}\n")
	if got := allocated(func() { _, err = readJSON([]byte(b.String())) }); got > bound {
		t.Errorf("a %d KB JSON file allocates %d MiB before refusing", b.Len()>>10, got>>20)
	}
	if err == nil || !strings.Contains(err.Error(), "MaxReadWords") {
		t.Errorf("20 000 terms on 65 536 qubits: %v, want a refusal naming MaxReadWords", err)
	}
}

// zeros is an endless stream of NUL bytes, as /dev/zero.
type zeros struct{}

func (zeros) Read(b []byte) (int, error) { clear(b); return len(b), nil }

// letters is an endless stream of one letter without a line break.
type letters struct{}

func (letters) Read(b []byte) (int, error) {
	for i := range b {
		b[i] = 'Z'
	}
	return len(b), nil
}

func TestReadCapsEndlessInput(t *testing.T) {
	_, err := Read(zeros{})
	if err == nil || !strings.Contains(err.Error(), "line 1: NUL byte") {
		t.Errorf("Read(endless NUL bytes) = %v, want a NUL-byte error on line 1", err)
	}
	_, err = Read(letters{})
	if err == nil || !strings.Contains(err.Error(), "longer than") || len(err.Error()) > 200 {
		t.Errorf("Read(endless line) = %.300v, want a short line-length error", err)
	}
	// A long bad token is quoted shortened.
	_, err = Read(strings.NewReader("1 " + strings.Repeat("Q", 900000) + "\n"))
	if err == nil || len(err.Error()) > 300 {
		t.Errorf("error on a 900 000-letter string is %d bytes", len(err.Error()))
	}
	if _, err := os.Stat("/dev/zero"); err == nil {
		_, err := ReadFile("/dev/zero")
		if err == nil || !strings.Contains(err.Error(), "/dev/zero: hamiltonian: line 1: NUL byte") {
			t.Errorf("ReadFile(/dev/zero) = %v", err)
		}
	}
	// Byte cap: comment lines past MaxReadBytes.
	if testing.Short() {
		return
	}
	r := io.LimitReader(&repeat{s: "#" + strings.Repeat("x", 4000) + "\n"}, MaxReadBytes+100)
	if _, err := Read(r); err == nil || !strings.Contains(err.Error(), "MaxReadBytes") {
		t.Errorf("Read past MaxReadBytes = %v", err)
	}
}

// repeat is an endless stream of its text, over and over.
type repeat struct {
	s   string
	pos int
}

func (r *repeat) Read(b []byte) (int, error) {
	n := 0
	for n < len(b) {
		k := copy(b[n:], r.s[r.pos:])
		n += k
		r.pos = (r.pos + k) % len(r.s)
	}
	return n, nil
}

func TestReadEmpty(t *testing.T) {
	for _, in := range []string{"", "# only a comment\n\n", "qubits 3\n", "\ufeff"} {
		if _, err := Read(strings.NewReader(in)); err == nil || !errors.Is(err, ErrFormat) || !strings.Contains(err.Error(), "no terms") {
			t.Errorf("Read(%q) = %v, want a no-terms error", in, err)
		}
	}
	for _, in := range []string{`{"qubits": 2}`, `{"qubits": 2, "terms": []}`} {
		var h Hamiltonian
		if err := h.UnmarshalJSON([]byte(in)); err == nil || !errors.Is(err, ErrFormat) {
			t.Errorf("UnmarshalJSON(%s) = %v, want an error", in, err)
		}
	}
}

// TestUnmarshalJSONStrict checks that the JSON reader refuses what it would
// otherwise misread, naming the line.
func TestUnmarshalJSONStrict(t *testing.T) {
	for _, tc := range []struct {
		name, in string
		line     int
		reason   string
	}{
		{"imag part", "{\"qubits\": 2,\n \"terms\": [\n{\"pauli\": \"ZZ\", \"coeff\": 1, \"imag\": 0.5}]}", 3, `unknown key "imag"`},
		{"terms twice", "{\"qubits\": 2,\n\"terms\": [{\"pauli\": \"ZZ\", \"coeff\": 1}],\n\"terms\": []}", 3, `key "terms" given twice`},
		{"coeff twice", "{\"qubits\": 2, \"terms\": [\n{\"pauli\": \"ZZ\", \"coeff\": 1,\n \"coeff\": 2}]}", 3, `key "coeff" given twice`},
		{"misspelt terms", "{\"qubits\": 2,\n\"term\": [{\"pauli\": \"ZZ\", \"coeff\": 1}]}", 2, `unknown key "term"`},
		{"upper case key", "{\"Qubits\": 2}", 1, `unknown key "Qubits"`},
		{"upper case term key", "{\"qubits\": 2, \"terms\": [{\"Pauli\": \"ZZ\", \"coeff\": 1}]}", 1, `unknown key "Pauli"`},
		{"coefficient line", "{\"qubits\": 2,\n\"terms\": [\n{\"pauli\": \"ZZ\", \"coeff\": 1},\n{\"pauli\": \"XX\", \"coeff\": [1, 2]}]}", 4, "terms[1] coeff is an array"},
		{"bad string line", "{\"qubits\": 2,\n\"terms\": [\n{\"pauli\": \"ZZ\", \"coeff\": 1},\n{\"pauli\": \"X0\", \"coeff\": 2}]}", 4, "write X_0"},
		{"underflow", "{\"qubits\": 1, \"terms\": [{\"pauli\": \"Z\", \"coeff\": 1e-400}]}", 1, "underflows"},
		{"syntax", "{\"qubits\": 2,\n\"terms\": [}", 2, "invalid character"},
		{"null qubits", "{\"qubits\": null}", 1, "want a whole number"},
		{"after the brace", "{\"qubits\": 1, \"offset\": 1}\n{}", 2, "text after the closing brace"},
	} {
		var h Hamiltonian
		err := h.UnmarshalJSON([]byte(tc.in))
		var le *LineError
		if !errors.As(err, &le) || le.Line != tc.line || !strings.Contains(err.Error(), tc.reason) || !errors.Is(err, ErrFormat) {
			t.Errorf("%s: %v, want line %d: …%s…", tc.name, err, tc.line, tc.reason)
		}
	}
	// A byte order mark is accepted by ReadFile.
	path := t.TempDir() + "/h.json"
	os.WriteFile(path, []byte("\ufeff{\"qubits\": 1, \"terms\": [{\"pauli\": \"Z\", \"coeff\": 2}]}"), 0o600)
	if h, err := ReadFile(path); err != nil || h.Len() != 1 || h.Coeff(0) != 2 {
		t.Errorf("ReadFile(JSON with a byte order mark) = %v", err)
	}
}

// TestUnmarshalJSONIntoUsed checks that decoding into a Hamiltonian in use
// is refused and leaves it unchanged.
func TestUnmarshalJSONIntoUsed(t *testing.T) {
	h, err := Read(strings.NewReader("1 ZZ\n2 XX\n"))
	if err != nil {
		t.Fatal(err)
	}
	err = json.Unmarshal([]byte(`{"qubits": 3, "terms": [{"pauli": "ZZZ", "coeff": 1}]}`), h)
	if err == nil || !strings.Contains(err.Error(), "immutable") {
		t.Errorf("decoding into a Hamiltonian in use: %v, want an error", err)
	}
	if h.Qubits() != 2 || h.Len() != 2 {
		t.Errorf("the Hamiltonian changed to %d qubits, %d terms", h.Qubits(), h.Len())
	}
}
