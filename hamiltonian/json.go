package hamiltonian

import (
	"bufio"
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"slices"
	"strconv"
	"strings"

	"github.com/shotplan/shotplan/internal/inputcap"
	"github.com/shotplan/shotplan/pauli"
)

// jsonHamiltonian is the JSON form:
//
//	{"qubits": 4, "offset": -0.09, "terms": [{"pauli": "ZIII", "coeff": 0.17}, ...]}
//
// A term's "pauli" is dense ("XIZY") or sparse ("X_0 Z_2 Y_3").
type jsonHamiltonian struct {
	Qubits int        `json:"qubits"`
	Offset float64    `json:"offset"`
	Terms  []jsonTerm `json:"terms"`
}

type jsonTerm struct {
	Pauli string  `json:"pauli"`
	Coeff float64 `json:"coeff"`
}

// MarshalJSON encodes h in the JSON form described in the package
// documentation. Strings are dense up to 32 qubits and sparse beyond.
func (h *Hamiltonian) MarshalJSON() ([]byte, error) {
	j := jsonHamiltonian{Qubits: h.n, Offset: h.offset, Terms: make([]jsonTerm, h.Len())}
	for i, t := range h.Terms() {
		s := t.Pauli.String()
		if h.n > denseLimit {
			s = t.Pauli.Sparse()
		}
		j.Terms[i] = jsonTerm{Pauli: s, Coeff: t.Coeff}
	}
	return json.Marshal(j)
}

// UnmarshalJSON decodes the JSON form into h, which must be a zero
// Hamiltonian: a Hamiltonian is immutable, so decoding into one in use (which
// other values, such as a guarantee built on it, may hold) is an error.
//
// The decoder is strict, and every error names the line: the keys are
// exactly "qubits", "offset" and "terms" at the top and "pauli" and "coeff"
// in a term (an unknown key, one in other letter case, or a repeated key is
// an error), "qubits" and every term's two keys are required, and a
// coefficient must be a finite real JSON number that does not underflow to
// zero (an array, object, string such as "1+2i", or an "imag" key is
// refused). Qubit counts above [MaxReadQubits] are rejected. "I" alone
// (either case, as in the text format) is the identity term at any width.
// Repeated strings merge as in [New], and the size limits of [Read] hold.
func (h *Hamiltonian) UnmarshalJSON(b []byte) error {
	if h.n != 0 || h.offset != 0 || h.table != nil || h.coef != nil {
		return fmt.Errorf("hamiltonian: UnmarshalJSON into a Hamiltonian in use: a Hamiltonian is immutable; decode into a new zero value")
	}
	g, err := readJSON(b)
	if err != nil {
		return err
	}
	*h = *g
	return nil
}

// jsonReader decodes the JSON form token by token, so that every error can
// name its line.
type jsonReader struct {
	data []byte
	dec  *json.Decoder
	pos  *inputcap.JSONLines
}

// line returns the 1-based line of byte offset off.
func (jr *jsonReader) line(off int64) int { return jr.pos.Line(off) }

// here returns the line of the next token.
func (jr *jsonReader) here() int { return jr.pos.Next() }

// fail builds the error at a line.
func (jr *jsonReader) fail(line int, format string, args ...any) error {
	return lineError(line, "", format, args...)
}

// token reads the next token, turning a decoding error into a line error.
func (jr *jsonReader) token() (json.Token, int, error) {
	line := jr.here()
	tok, err := jr.dec.Token()
	if err != nil {
		var se *json.SyntaxError
		if errors.As(err, &se) {
			return nil, jr.line(se.Offset), jr.fail(jr.line(se.Offset), "%v", se)
		}
		if errors.Is(err, io.EOF) || errors.Is(err, io.ErrUnexpectedEOF) {
			return nil, line, jr.fail(jr.line(int64(len(jr.data))), "unexpected end of JSON input")
		}
		return nil, line, jr.fail(line, "%v", err)
	}
	return tok, line, nil
}

// delim reads the delimiter want.
func (jr *jsonReader) delim(want json.Delim, what string) error {
	tok, line, err := jr.token()
	if err != nil {
		return err
	}
	if d, ok := tok.(json.Delim); !ok || d != want {
		return jr.fail(line, "%s: want %q, found %s", what, string(want), describe(tok))
	}
	return nil
}

// describe names a token for a message.
func describe(tok json.Token) string {
	switch v := tok.(type) {
	case json.Delim:
		return strconv.Quote(string(v))
	case string:
		return "string " + inputcap.Quote(v)
	case json.Number:
		return "number " + inputcap.Clip(string(v))
	case nil:
		return "null"
	default:
		return fmt.Sprint(v)
	}
}

// key reads an object key or the closing brace (ok false), refusing a key
// outside allowed or one already seen.
func (jr *jsonReader) key(seen map[string]bool, where string, allowed ...string) (key string, line int, ok bool, err error) {
	if !jr.dec.More() {
		_, _, err = jr.token() // the closing brace
		return "", 0, false, err
	}
	tok, line, err := jr.token()
	if err != nil {
		return "", line, false, err
	}
	key, _ = tok.(string)
	if !slices.Contains(allowed, key) {
		hint := ""
		if strings.EqualFold(key, "imag") || strings.EqualFold(key, "im") {
			hint = "; coefficients must be real"
		}
		return "", line, false, jr.fail(line, "%s: unknown key %s (the keys are %s; letter case matters%s)", where, inputcap.Quote(key), strings.Join(allowed, ", "), hint)
	}
	if seen[key] {
		return "", line, false, jr.fail(line, "%s: key %q given twice", where, key)
	}
	seen[key] = true
	return key, line, true, nil
}

// number reads a real coefficient, explaining a bad one.
func (jr *jsonReader) number(what string) (float64, int, error) {
	tok, line, err := jr.token()
	if err != nil {
		return 0, line, err
	}
	switch v := tok.(type) {
	case json.Number:
		c, reason := parseCoeff(string(v))
		if reason != "" {
			return 0, line, jr.fail(line, "%s: %s", what, reason)
		}
		return c, line, nil
	case json.Delim:
		return 0, line, jr.fail(line, "%s is an array or object, not a real number (complex coefficients are not allowed)", what)
	case string:
		if _, reason := parseCoeff(v); strings.HasPrefix(reason, "complex") {
			return 0, line, jr.fail(line, "%s: %s", what, reason)
		}
		return 0, line, jr.fail(line, "%s is the string %s, want a number", what, inputcap.Quote(v))
	}
	return 0, line, jr.fail(line, "%s is %s, want a number", what, describe(tok))
}

// jsonTermIn is one term as read, kept until the width is known.
type jsonTermIn struct {
	line  int
	pauli string
	coeff float64
}

// readJSON decodes the JSON form; see [Hamiltonian.UnmarshalJSON].
func readJSON(data []byte) (*Hamiltonian, error) {
	if len(data) > MaxReadBytes {
		return nil, fmt.Errorf("hamiltonian: %w: more than %d bytes: the reader's limit (MaxReadBytes)", ErrFormat, MaxReadBytes)
	}
	data = bytes.TrimPrefix(data, []byte(bom))
	dec := json.NewDecoder(bytes.NewReader(data))
	jr := &jsonReader{data: data, dec: dec, pos: inputcap.NewJSONLines(data, dec)}
	jr.dec.UseNumber()
	if err := jr.delim('{', "a JSON Hamiltonian"); err != nil {
		return nil, err
	}
	n, qubitsLine, offset := -1, 0, 0.0
	var terms []jsonTermIn
	seen := map[string]bool{}
	for {
		key, line, ok, err := jr.key(seen, "top level", "qubits", "offset", "terms")
		if err != nil {
			return nil, err
		}
		if !ok {
			break
		}
		switch key {
		case "qubits":
			qubitsLine = line
			if n, err = jr.qubits(); err != nil {
				return nil, err
			}
		case "offset":
			if offset, _, err = jr.number("offset"); err != nil {
				return nil, err
			}
		case "terms":
			if terms, err = jr.terms(); err != nil {
				return nil, err
			}
		}
	}
	endLine := jr.line(jr.dec.InputOffset())
	if _, err := jr.dec.Token(); err != io.EOF {
		return nil, jr.fail(jr.here(), "text after the closing brace")
	}
	if n < 0 {
		return nil, jr.fail(endLine, "missing \"qubits\" (the object ends here)")
	}
	if len(terms) == 0 && !seen["offset"] {
		return nil, jr.fail(endLine, "no \"terms\" and no \"offset\": the input holds no Hamiltonian")
	}
	ts := termSet{}
	ts.init()
	ts.add(qubitsLine, offset, pauli.Identity(0))
	for k, t := range terms {
		if !isDense(t.pauli) {
			if key, hi, ok := sparseKey(strings.Fields(t.pauli), n); ok {
				ts.addKey(t.line, t.coeff, key, hi)
				continue
			}
		}
		p, err := parseJSONPauli(t.pauli, n)
		if err != nil {
			return nil, jr.fail(t.line, "terms[%d] (%s): %v", k, inputcap.Quote(t.pauli), err)
		}
		ts.add(t.line, t.coeff, p)
	}
	return ts.build(n)
}

// qubits reads the qubit count.
func (jr *jsonReader) qubits() (int, error) {
	tok, line, err := jr.token()
	if err != nil {
		return 0, err
	}
	v, ok := tok.(json.Number)
	if !ok {
		return 0, jr.fail(line, "qubits is %s, want a whole number", describe(tok))
	}
	n, err := strconv.Atoi(string(v))
	if err != nil || n < 0 || n > MaxReadQubits {
		return 0, jr.fail(line, "qubit count %s outside [0, %d]", inputcap.Clip(string(v)), MaxReadQubits)
	}
	return n, nil
}

// terms reads the "terms" array.
func (jr *jsonReader) terms() ([]jsonTermIn, error) {
	if err := jr.delim('[', "terms"); err != nil {
		return nil, err
	}
	terms := []jsonTermIn{}
	for jr.dec.More() {
		k := len(terms)
		where := fmt.Sprintf("terms[%d]", k)
		start := jr.here()
		if err := jr.delim('{', where); err != nil {
			return nil, err
		}
		t := jsonTermIn{line: start}
		seen := map[string]bool{}
		for {
			key, line, ok, err := jr.key(seen, where, "pauli", "coeff")
			if err != nil {
				return nil, err
			}
			if !ok {
				break
			}
			if key == "coeff" {
				if t.coeff, _, err = jr.number(where + " coeff"); err != nil {
					return nil, err
				}
				continue
			}
			tok, _, err := jr.token()
			if err != nil {
				return nil, err
			}
			s, isStr := tok.(string)
			if !isStr {
				return nil, jr.fail(line, "%s: pauli is %s, want a string such as \"XIZY\" or \"X_0 Z_2\"", where, describe(tok))
			}
			t.pauli = s
		}
		switch {
		case !seen["pauli"]:
			return nil, jr.fail(start, "%s: missing \"pauli\"", where)
		case !seen["coeff"]:
			return nil, jr.fail(start, "%s (%s): missing \"coeff\"", where, inputcap.Quote(t.pauli))
		}
		terms = append(terms, t)
	}
	if _, _, err := jr.token(); err != nil { // the closing bracket
		return nil, err
	}
	return terms, nil
}

// parseJSONPauli parses a term's string, dense or sparse, on n qubits.
func parseJSONPauli(ps string, n int) (pauli.String, error) {
	if strings.EqualFold(strings.TrimSpace(ps), "I") {
		return pauli.Identity(n), nil
	}
	if !isDense(ps) || strings.ContainsAny(ps, " \t") {
		p, err := pauli.ParseSparse(ps, n)
		if err != nil {
			return pauli.String{}, errors.New(parseReason(err))
		}
		return p, nil
	}
	p, err := pauli.Parse(ps)
	if err != nil {
		return pauli.String{}, errors.New(parseReason(err))
	}
	if p.Qubits() != n {
		return pauli.String{}, fmt.Errorf("%d qubits, want %d", p.Qubits(), n)
	}
	return p, nil
}

// ReadFile reads a Hamiltonian from path: the JSON form if the file's first
// non-blank character (after an optional UTF-8 byte order mark) is '{', the
// text format otherwise. At most [MaxReadBytes] bytes are read. Errors name
// the file.
func ReadFile(path string) (*Hamiltonian, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	br := bufio.NewReader(f)
	if !startsJSON(br) {
		h, err := Read(br)
		if err != nil {
			return nil, fmt.Errorf("%s: %w", path, err)
		}
		return h, nil
	}
	cr := &countingReader{r: br} // refuses a NUL byte, which JSON never holds
	data, err := inputcap.ReadAll(cr, MaxReadBytes)
	if err != nil {
		if errors.Is(err, errBinary) {
			return nil, fmt.Errorf("%s: %w", path, lineError(cr.nulLine, "", "NUL byte: binary data, not a JSON Hamiltonian"))
		}
		if errors.Is(err, inputcap.ErrTooLarge) {
			return nil, fmt.Errorf("%s: hamiltonian: %w: %w (MaxReadBytes)", path, ErrFormat, err)
		}
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	h, err := readJSON(data)
	if err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	return h, nil
}

// startsJSON reports whether the first non-blank byte of br (after an
// optional byte order mark, within the first 64 KiB) is '{', without
// consuming anything.
func startsJSON(br *bufio.Reader) bool {
	head, _ := br.Peek(64 << 10)
	head = bytes.TrimLeft(bytes.TrimPrefix(head, []byte(bom)), " \t\r\n")
	return len(head) > 0 && head[0] == '{'
}
