package hamiltonian

import (
	"bytes"
	"encoding/json"
	"errors"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/pauli"
)

// awkward returns a Hamiltonian whose coefficients stress exact printing:
// values with no short decimal form, the extremes of float64 and a
// subnormal.
func awkward(t *testing.T, n int) *Hamiltonian {
	t.Helper()
	h, err := RandomLocal(n, min(12, 3*n), min(3, n), uint64(n))
	if err != nil {
		t.Fatal(err)
	}
	special := []float64{0.1 + 1e-17, 1.0 / 3, -math.MaxFloat64 / 4, math.SmallestNonzeroFloat64, -2.5e-300, 1e22, math.Pi}
	terms := make([]Term, 0, h.Len())
	for i, tm := range h.Terms() {
		if i < len(special) {
			tm.Coeff = special[i]
		}
		terms = append(terms, tm)
	}
	return mustNew(t, n, -math.E, terms)
}

func TestTextRoundTripExact(t *testing.T) {
	for _, n := range []int{1, 3, 32, 33, 200} {
		h := awkward(t, n)
		var buf bytes.Buffer
		if err := Write(&buf, h); err != nil {
			t.Fatal(err)
		}
		g, err := Read(&buf)
		if err != nil {
			t.Fatalf("n=%d: Read(Write(h)): %v", n, err)
		}
		if !g.Equal(h) {
			t.Errorf("n=%d: Read(Write(h)) differs from h", n)
		}
	}
}

func TestJSONRoundTripExact(t *testing.T) {
	for _, n := range []int{1, 3, 32, 33, 200} {
		h := awkward(t, n)
		b, err := json.Marshal(h)
		if err != nil {
			t.Fatal(err)
		}
		var g Hamiltonian
		if err := json.Unmarshal(b, &g); err != nil {
			t.Fatalf("n=%d: Unmarshal(Marshal(h)): %v", n, err)
		}
		if !g.Equal(h) {
			t.Errorf("n=%d: Unmarshal(Marshal(h)) differs from h", n)
		}
	}
}

func TestFileRoundTrip(t *testing.T) {
	dir := t.TempDir()
	h := awkward(t, 5)
	path := filepath.Join(dir, "h.txt")
	if err := WriteFile(path, h); err != nil {
		t.Fatal(err)
	}
	g, err := ReadFile(path)
	if err != nil || !g.Equal(h) {
		t.Fatalf("ReadFile(WriteFile(h)) = %v, %v", g, err)
	}
	b, _ := json.Marshal(h)
	jpath := filepath.Join(dir, "h.json")
	if err := os.WriteFile(jpath, b, 0o644); err != nil {
		t.Fatal(err)
	}
	g, err = ReadFile(jpath)
	if err != nil || !g.Equal(h) {
		t.Fatalf("ReadFile(JSON) = %v, %v", g, err)
	}
	bad := filepath.Join(dir, "bad.txt")
	os.WriteFile(bad, []byte("qubits 2\n1 XQ\n"), 0o644)
	if _, err := ReadFile(bad); err == nil || !strings.Contains(err.Error(), "bad.txt") || !strings.Contains(err.Error(), "line 2") {
		t.Errorf("ReadFile(bad.txt) error %v should name the file and line 2", err)
	}
}

func TestReadFormat(t *testing.T) {
	// The format of the package documentation, including its example.
	for _, tc := range []struct {
		name string
		in   string
		want string // Write output of the result
	}{
		{"doc example", "# a two-site transverse-field Ising model\nqubits 2\n-0.5 I\n-1 ZZ\n-0.7 X_0\n-0.7 X_1\n",
			"qubits 2\n-0.5 I\n-1 ZZ\n-0.7 XI\n-0.7 IX\n"},
		{"width from dense", "1 XIZ\n2 Y_1\n", "qubits 3\n0 I\n1 XIZ\n2 IYI\n"},
		{"width from highest sparse index", "1 X_0 Z_4\n", "qubits 5\n0 I\n1 XIIIZ\n"},
		{"identity lines add up", "1 I\n2 I\n0.5 ZZ # trailing comment\n\n", "qubits 2\n3 I\n0.5 ZZ\n"},
		{"duplicates merge in first-seen order", "1 ZZ\n2 XX\n3 ZZ\n", "qubits 2\n0 I\n4 ZZ\n2 XX\n"},
		{"lower case and tabs", "qubits 2\n1\tx_0  z_1\n", "qubits 2\n0 I\n1 XZ\n"},
		{"byte order mark skipped", "\ufeffqubits 1\n1 Z\n", "qubits 1\n0 I\n1 Z\n"},
		{"zero operator", "qubits 2\n0 I\n", "qubits 2\n0 I\n"},
	} {
		h, err := Read(strings.NewReader(tc.in))
		if err != nil {
			t.Errorf("%s: Read: %v", tc.name, err)
			continue
		}
		var buf bytes.Buffer
		Write(&buf, h)
		if buf.String() != tc.want {
			t.Errorf("%s: Read then Write = %q, want %q", tc.name, buf.String(), tc.want)
		}
	}
}

func TestReadBadLines(t *testing.T) {
	for _, tc := range []struct {
		name   string
		in     string
		line   int
		reason string
	}{
		{"not a number", "qubits 3\n1 XYZ\nabc ZZZ\n", 3, `coefficient "abc" is not a number`},
		{"out of range", "1e400 ZZ\n", 1, `coefficient "1e400" out of range`},
		{"NaN", "1 XX\nnan ZZ\n", 2, "not finite"},
		{"infinity", "-Inf ZZ\n", 1, "not finite"},
		{"complex i", "1 ZZ\n1+2i ZZ\n", 2, "complex coefficient"},
		{"complex j in parentheses", "(1+2j) ZZ\n", 1, "complex coefficient"},
		{"pure imaginary", "2i XX\n", 1, "complex coefficient"},
		{"unknown letter dense", "1 XQZ\n", 1, "unknown letter 'Q'"},
		{"unknown letter sparse", "qubits 3\n1 X_0 W1\n", 2, "unknown letter 'W'"},
		{"index beyond declared count", "qubits 3\n1 X_5\n", 2, "beyond the qubit count 3"},
		{"index beyond dense width", "1 XXX\n1 Z_3\n", 2, "beyond the qubit count 3"},
		{"mixed dense widths", "1 XX\n1 XXX\n", 2, "has 3 qubits, but line 1 has 2"},
		{"width against declaration", "qubits 4\n\n1 XXX\n", 3, `"qubits 4" was declared`},
		{"no Pauli string", "qubits 1\n1\n", 2, "no Pauli string"},
		{"bad qubit count", "qubits x\n", 1, "not a non-negative integer"},
		{"negative qubit count", "qubits -2\n", 1, "not a non-negative integer"},
		{"huge qubit count", "qubits 99999999999999999999\n", 1, "exceeds the limit"},
		{"huge index", "1 X_99999999\n", 1, "exceeds the limit"},
		{"qubits after a term", "1 XX\nqubits 2\n", 2, "must come before the first term"},
		{"qubits twice", "qubits 2\nqubits 2\n", 2, "declared twice"},
		{"qubit named twice", "qubits 2\n1 X_0 Y_0\n", 2, "named twice"},
		{"glued sparse", "qubits 2\n1 X_0Y_1\n", 2, "unexpected 'Y'"},
		{"unmarked sparse form", "qubits 4\n1 ZZZZ\n1 X0 Z2 Y3\n", 3, `"X0": write X_0 (letter, underscore, qubit)`},
		{"underflow", "1e-400 XI\n", 1, "underflows to zero"},
		{"hex underflow", "0x1p-2000 XI\n", 1, "underflows to zero"},
		{"digit separators", "1_000 ZZ\n", 1, "digit separators"},
		{"NUL byte", "1 ZZ\n\x00\x00\n", 2, "NUL byte"},
	} {
		_, err := Read(strings.NewReader(tc.in))
		if err == nil {
			t.Errorf("%s: Read(%q) succeeded", tc.name, tc.in)
			continue
		}
		if !errors.Is(err, ErrFormat) {
			t.Errorf("%s: error %v does not wrap ErrFormat", tc.name, err)
		}
		var le *LineError
		if !errors.As(err, &le) || le.Line != tc.line || !strings.Contains(le.Reason, tc.reason) {
			t.Errorf("%s: Read(%q) = %v, want line %d: …%s…", tc.name, tc.in, err, tc.line, tc.reason)
			continue
		}
		if want := "hamiltonian: line "; !strings.HasPrefix(le.Error(), want) {
			t.Errorf("%s: message %q lacks %q", tc.name, le.Error(), want)
		}
	}
}

func TestReadReportsEveryBadLine(t *testing.T) {
	in := "qubits 2\n1 XX\nx ZZ\n1 QQ\n1 XXX\n1 X_9\n2 ZZ\n"
	_, err := Read(strings.NewReader(in))
	var lines []int
	for _, e := range err.(interface{ Unwrap() []error }).Unwrap() {
		var le *LineError
		if errors.As(e, &le) {
			lines = append(lines, le.Line)
		}
	}
	if want := []int{3, 4, 5, 6}; !slices.Equal(lines, want) {
		t.Errorf("bad lines reported = %v, want %v (error %v)", lines, want, err)
	}
	// More than 50 bad lines: the first 50 and a count of the rest.
	many := strings.Repeat("x ZZ\n", 60)
	_, err = Read(strings.NewReader(many))
	if err == nil || !strings.Contains(err.Error(), "10 more bad lines") || !strings.Contains(err.Error(), "line 50:") {
		t.Errorf("60 bad lines: error %v should list 50 and count 10 more", err)
	}
}

func TestUnmarshalJSONErrors(t *testing.T) {
	for _, tc := range []struct {
		name, in, reason string
	}{
		{"complex pair", `{"qubits": 2, "terms": [{"pauli": "ZZ", "coeff": [1, 2]}]}`, "terms[0] coeff is an array or object, not a real number"},
		{"complex string", `{"qubits": 2, "terms": [{"pauli": "XX", "coeff": 1}, {"pauli": "ZZ", "coeff": "1+2i"}]}`, "terms[1] coeff: complex coefficient"},
		{"out of range", `{"qubits": 2, "terms": [{"pauli": "ZZ", "coeff": 1e400}]}`, "out of range"},
		{"missing qubits", `{"terms": []}`, "missing \"qubits\""},
		{"negative qubits", `{"qubits": -1, "terms": []}`, "qubit count -1"},
		{"huge qubits", `{"qubits": 1000000000, "terms": []}`, "qubit count 1000000000"},
		{"unknown letter", `{"qubits": 2, "terms": [{"pauli": "ZQ", "coeff": 1}]}`, "unknown letter"},
		{"wrong width", `{"qubits": 3, "terms": [{"pauli": "ZZ", "coeff": 1}]}`, "2 qubits, want 3"},
		{"index beyond", `{"qubits": 3, "terms": [{"pauli": "Z_3", "coeff": 1}]}`, "beyond the qubit count 3"},
		{"missing coeff", `{"qubits": 2, "terms": [{"pauli": "ZZ"}]}`, "missing \"coeff\""},
		{"missing pauli", `{"qubits": 2, "terms": [{"coeff": 1}]}`, "missing \"pauli\""},
		{"not JSON", `{"qubits": 2,`, "unexpected end"},
	} {
		// Called directly: json.Unmarshal would reject bad syntax itself.
		var h Hamiltonian
		err := h.UnmarshalJSON([]byte(tc.in))
		if err == nil || !errors.Is(err, ErrFormat) || !strings.Contains(err.Error(), tc.reason) {
			t.Errorf("%s: Unmarshal(%s) = %v, want ErrFormat with %q", tc.name, tc.in, err, tc.reason)
		}
	}
}

func TestJSONForm(t *testing.T) {
	// The JSON form of the package documentation.
	in := `{"qubits": 2, "offset": -0.5,
	 "terms": [{"pauli": "ZZ", "coeff": -1}, {"pauli": "X_0", "coeff": -0.7}]}`
	var h Hamiltonian
	if err := json.Unmarshal([]byte(in), &h); err != nil {
		t.Fatal(err)
	}
	want := mustNew(t, 2, -0.5, []Term{{pauli.MustParse("ZZ"), -1}, {pauli.MustParse("XI"), -0.7}})
	if !h.Equal(want) {
		t.Errorf("Unmarshal(doc example) = %v, want %v", &h, want)
	}
	b, _ := json.Marshal(want)
	if got := string(b); got != `{"qubits":2,"offset":-0.5,"terms":[{"pauli":"ZZ","coeff":-1},{"pauli":"XI","coeff":-0.7}]}` {
		t.Errorf("Marshal = %s", got)
	}
}

// TestJSONIdentityEitherCase checks that "i" is the identity term in the
// JSON form as it is in the text format (package documentation: "I" alone
// is the identity; letters are read in either case), at a width other
// than 1.
func TestJSONIdentityEitherCase(t *testing.T) {
	want := mustNew(t, 2, 1.5, []Term{{pauli.MustParse("ZZ"), -1}})
	for _, id := range []string{"I", "i", " i "} {
		in := `{"qubits": 2, "terms": [{"pauli": "` + id + `", "coeff": 1.5}, {"pauli": "ZZ", "coeff": -1}]}`
		var h Hamiltonian
		if err := json.Unmarshal([]byte(in), &h); err != nil {
			t.Errorf("Unmarshal with identity %q: %v", id, err)
			continue
		}
		if !h.Equal(want) {
			t.Errorf("Unmarshal with identity %q = %v, want %v", id, &h, want)
		}
	}
}

// TestReadWidthLimit checks the documented bound: a width of exactly
// MaxReadQubits is accepted, one more is an error.
func TestReadWidthLimit(t *testing.T) {
	for _, tc := range []struct {
		name string
		n    int
		ok   bool
	}{
		{"at the limit", MaxReadQubits, true},
		{"above the limit", MaxReadQubits + 1, false},
	} {
		text := "qubits " + strconv.Itoa(tc.n) + "\n1 Z_0\n"
		_, err := Read(strings.NewReader(text))
		if (err == nil) != tc.ok {
			t.Errorf("%s: Read(qubits %d) error = %v, want ok = %v", tc.name, tc.n, err, tc.ok)
		}
		var h Hamiltonian
		err = json.Unmarshal([]byte(`{"qubits": `+strconv.Itoa(tc.n)+`, "terms": [{"pauli": "Z_0", "coeff": 1}]}`), &h)
		if (err == nil) != tc.ok {
			t.Errorf("%s: UnmarshalJSON(qubits %d) error = %v, want ok = %v", tc.name, tc.n, err, tc.ok)
		}
	}
}

// FuzzRead checks that Read never panics on any input, and that whatever it
// accepts survives Write and Read unchanged.
func FuzzRead(f *testing.F) {
	for _, s := range []string{
		"qubits 2\n-0.5 I\n-1 ZZ\n-0.7 X_0\n",
		"1 XIZ\n2 Y_1\n",
		"1e400 ZZ\n", "1+2i XX\n", "qubits 3\n1 X_5\n", "1 XX\n1 XXX\n",
		"qubits 99999999999\n", "1 X_99999999\n", "# only a comment\n",
		"1 I\n", "qubits 0\n", "nan Z\n", "0x1p-3 Z\n", "1 X_0 X_0\n",
		"\ufeff1 Z\n", "1 Z\n\x00\n", "1_000 ZZ\n", "1e-400 XI\n", "1 X0 Z2\n", "",
	} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		h, err := Read(strings.NewReader(s))
		if err != nil {
			if !errors.Is(err, ErrFormat) {
				t.Fatalf("Read(%q): error %v does not wrap ErrFormat", s, err)
			}
			return
		}
		var buf bytes.Buffer
		if err := Write(&buf, h); err != nil {
			t.Fatal(err)
		}
		g, err := Read(&buf)
		if err != nil || !g.Equal(h) {
			t.Fatalf("Read(%q) then Write/Read = %v, %v", s, g, err)
		}
	})
}

// FuzzUnmarshalJSON checks that decoding never panics and round-trips.
func FuzzUnmarshalJSON(f *testing.F) {
	for _, s := range []string{
		`{"qubits": 2, "offset": -0.5, "terms": [{"pauli": "ZZ", "coeff": -1}, {"pauli": "X_0", "coeff": -0.7}]}`,
		`{"qubits": 2, "terms": [{"pauli": "ZZ", "coeff": [1, 2]}]}`,
		`{"qubits": 99999999999}`, `{}`, `[]`,
	} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		var h Hamiltonian
		if err := json.Unmarshal([]byte(s), &h); err != nil {
			return
		}
		b, err := json.Marshal(&h)
		if err != nil {
			t.Fatal(err)
		}
		var g Hamiltonian
		if err := json.Unmarshal(b, &g); err != nil || !g.Equal(&h) {
			t.Fatalf("round trip of %q: %v", s, err)
		}
	})
}

// FuzzJSONKeys inserts one member, with a fuzzed key and value, into a
// valid JSON Hamiltonian, at the top level or in its term. Every key of the
// form is already present except "offset" at the top, so the reader must
// refuse the result with a *LineError unless the member is a valid offset;
// it must never panic or accept an unknown or repeated key.
func FuzzJSONKeys(f *testing.F) {
	for _, c := range []struct {
		key, val string
		inTerm   bool
	}{
		{"imag", "0.5", true}, {"terms", "[]", false}, {"coeff", "2", true},
		{"term", "[]", false}, {"Qubits", "2", false}, {"offset", "1", false},
		{"offset", "[1, 2]", false}, {"pauli", `"XX"`, true}, {"", "null", false},
	} {
		f.Add(c.key, c.val, c.inTerm)
	}
	f.Fuzz(func(t *testing.T, key, val string, inTerm bool) {
		k, _ := json.Marshal(key)
		member := string(k) + ": " + val
		var in string
		if inTerm {
			in = "{\"qubits\": 2,\n\"terms\": [{\"pauli\": \"ZZ\", \"coeff\": 1,\n" + member + "}]}"
		} else {
			in = "{\"qubits\": 2,\n\"terms\": [{\"pauli\": \"ZZ\", \"coeff\": 1}],\n" + member + "}"
		}
		if !json.Valid([]byte(in)) {
			return
		}
		var h Hamiltonian
		err := h.UnmarshalJSON([]byte(in))
		if err == nil {
			if inTerm || key != "offset" {
				t.Fatalf("accepted %q", in)
			}
			return
		}
		var le *LineError
		if !errors.Is(err, ErrFormat) || !errors.As(err, &le) || le.Line < 1 || le.Line > 3+strings.Count(val, "\n") {
			t.Fatalf("UnmarshalJSON(%q) = %v, want a *LineError within the input", in, err)
		}
	})
}

func TestString(t *testing.T) {
	h := mustNew(t, 2, -0.5, []Term{{pauli.MustParse("ZZ"), -1}, {pauli.MustParse("XI"), 0.25}})
	if got, want := h.String(), "qubits 2\n-0.5 I\n-1 ZZ\n0.25 XI\n"; got != want {
		t.Errorf("String() = %q, want %q", got, want)
	}
}
