package hamiltonian

import (
	"bufio"
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"math"
	"slices"
	"strconv"
	"strings"

	"github.com/shotplan/shotplan/internal/atomicfile"
	"github.com/shotplan/shotplan/internal/inputcap"
	"github.com/shotplan/shotplan/pauli"
)

// maxLineErrors bounds how many bad lines one error lists.
const maxLineErrors = 50

// MaxReadQubits is the widest Hamiltonian that [Read], [ReadFile] and the
// JSON decoder accept. It bounds the memory a malformed or hostile file can
// claim (each term takes 2·⌈n/64⌉ words).
const MaxReadQubits = 1 << 16

// Limits of the readers ([Read], [ReadFile], the JSON decoder). They bound
// the memory a hostile or mistaken file can claim by what it justifies: the
// readers keep each term in a sparse form while reading, merge repeated
// strings as they go, and refuse a Hamiltonian whose term table would need
// more than MaxReadWords words before building it.
const (
	// MaxReadBytes is the most bytes a reader consumes (256 MiB).
	MaxReadBytes = 256 << 20
	// MaxLineBytes is the longest line of the text format (1 MiB: a dense
	// string of MaxReadQubits letters, or a sparse one naming every qubit,
	// fits).
	MaxLineBytes = 1 << 20
	// MaxReadWords bounds the term table a reader builds: distinct terms ×
	// 2·⌈n/64⌉ words of 8 bytes, 2^25 words being 256 MiB (a million terms
	// on 100 qubits take 2^22).
	MaxReadWords = 1 << 25
)

// lineError builds the error about one line; every reader of the package
// makes its line errors here.
func lineError(line int, text, format string, args ...any) error {
	return &LineError{Reader: "hamiltonian", Line: line, Text: inputcap.Clip(text), Reason: fmt.Sprintf(format, args...)}
}

// Read parses the text format described in the package documentation. It
// reports every bad line (up to 50, then a count of the rest), each as a
// [*LineError], joined with errors.Join; errors.Is(err, ErrFormat) holds.
// A qubit count above [MaxReadQubits], or a qubit index of MaxReadQubits or
// more, is an error; so is input without any term, more than
// [MaxReadBytes] bytes, a line longer than [MaxLineBytes], a NUL byte
// (binary data), or a Hamiltonian whose term table would exceed
// [MaxReadWords]. A leading UTF-8 byte order mark is skipped.
func Read(r io.Reader) (*Hamiltonian, error) {
	tr := &textReader{cr: &countingReader{r: r}, declared: -1, width: -1}
	tr.terms.init()
	tr.bad = func(text, format string, args ...any) {
		if len(tr.errs) < maxLineErrors {
			tr.errs = append(tr.errs, lineError(tr.lineNo, text, format, args...))
		} else {
			tr.extra++
		}
	}
	sc := bufio.NewScanner(tr.cr)
	sc.Buffer(make([]byte, 0, 64*1024), MaxLineBytes)
	for sc.Scan() {
		tr.lineNo++
		raw := sc.Text()
		if tr.lineNo == 1 {
			raw = strings.TrimPrefix(raw, bom)
		}
		if tr.cr.n > MaxReadBytes {
			return nil, lineError(tr.lineNo, "", "more than %d bytes: the reader's limit (MaxReadBytes)", MaxReadBytes)
		}
		tr.line(raw)
	}
	if tr.cr.n > MaxReadBytes {
		return nil, lineError(tr.lineNo, "", "more than %d bytes: the reader's limit (MaxReadBytes)", MaxReadBytes)
	}
	if err := sc.Err(); err != nil {
		if errors.Is(err, errBinary) {
			return nil, lineError(tr.cr.nulLine, "", "%v", err)
		}
		if errors.Is(err, bufio.ErrTooLong) {
			return nil, lineError(tr.lineNo+1, "", "line longer than %d bytes (MaxLineBytes)", MaxLineBytes)
		}
		return nil, fmt.Errorf("hamiltonian: line %d: %w", tr.lineNo+1, err)
	}
	return tr.finish()
}

// bom is the UTF-8 byte order mark, skipped at the start of a file.
const bom = "\ufeff"

// countingReader counts the bytes read through it.
type countingReader struct {
	r       io.Reader
	n       int64
	lines   int // line breaks read
	nulLine int // the line of a NUL byte, once met
}

func (c *countingReader) Read(b []byte) (int, error) {
	if c.nulLine > 0 {
		return 0, errBinary
	}
	if c.n > MaxReadBytes {
		return 0, io.EOF
	}
	k, err := c.r.Read(b)
	c.n += int64(k)
	if i := bytes.IndexByte(b[:k], 0); i >= 0 {
		c.nulLine = c.lines + bytes.Count(b[:i], []byte{'\n'}) + 1
		return 0, errBinary
	}
	c.lines += bytes.Count(b[:k], []byte{'\n'})
	return k, err
}

// errBinary stops a text read at a NUL byte.
var errBinary = errors.New("NUL byte: binary data, not a Hamiltonian in the text format")

// textReader holds the state of [Read] between lines.
type textReader struct {
	cr        *countingReader
	terms     termSet
	declared  int // from a "qubits N" line, or −1
	width     int // from the first dense string, or −1
	widthLine int // the line that set width
	lineNo    int
	seenTerm  bool
	errs      []error
	extra     int
	bad       func(text, format string, args ...any)
}

// line reads one line of the text format.
func (tr *textReader) line(raw string) {
	text := raw
	if k := strings.IndexByte(text, '#'); k >= 0 {
		text = text[:k]
	}
	fields := strings.Fields(text)
	if len(fields) == 0 {
		return
	}
	if fields[0] == "qubits" {
		tr.qubitsLine(raw, fields)
		return
	}
	tr.seenTerm = true
	c, reason := parseCoeff(fields[0])
	if reason != "" {
		tr.bad(raw, "%s", reason)
		return
	}
	if len(fields) == 1 {
		tr.bad(raw, "coefficient %s has no Pauli string (write I for the identity)", inputcap.Clip(fields[0]))
		return
	}
	rest := fields[1:]
	if len(rest) == 1 && isDense(rest[0]) {
		tr.dense(raw, c, rest[0])
		return
	}
	sp := strings.Join(rest, " ")
	// Parse on the width the line needs, so that a line costs what it
	// names, not the declared width; an index beyond the declared width is
	// parsed on that width, whose error names it.
	q := highestIndex(sp)
	if tr.declared < 0 && q >= MaxReadQubits {
		tr.bad(raw, "qubit index %d exceeds the limit of %d qubits", q, MaxReadQubits)
		return
	}
	n := q + 1
	if tr.declared >= 0 && q >= tr.declared {
		n = tr.declared
	}
	if key, hi, ok := sparseKey(rest, n); ok {
		tr.terms.addKey(tr.lineNo, c, key, hi)
		return
	}
	if len(tr.errs) >= maxLineErrors {
		tr.extra++
		return
	}
	// Malformed: the pauli package's parser says why.
	_, err := pauli.ParseSparse(sp, n)
	if err == nil {
		err = errors.New("malformed sparse string")
	}
	tr.bad(raw, "Pauli string %s: %s", inputcap.Quote(sp), parseReason(err))
}

// sparseKey returns the key of a well-formed sparse string on n qubits,
// given as its factors ("X_0", "Z_2"), without building the dense string;
// ok is false for anything else, which pauli.ParseSparse then explains.
func sparseKey(factors []string, n int) (key string, hi int, ok bool) {
	type factor struct {
		q int
		l pauli.Letter
	}
	fs := make([]factor, 0, len(factors))
	for _, f := range factors {
		if len(f) < 3 || f[1] != '_' || len(f) > 11 { // at most 9 digits: no overflow on 32 bits
			return "", 0, false
		}
		var l pauli.Letter
		switch f[0] {
		case 'I', 'i':
			l = pauli.I
		case 'X', 'x':
			l = pauli.X
		case 'Y', 'y':
			l = pauli.Y
		case 'Z', 'z':
			l = pauli.Z
		default:
			return "", 0, false
		}
		q := 0
		for _, d := range []byte(f[2:]) {
			if d < '0' || d > '9' {
				return "", 0, false
			}
			q = 10*q + int(d-'0')
		}
		if q >= n {
			return "", 0, false
		}
		if l != pauli.I {
			fs = append(fs, factor{q, l})
		}
	}
	slices.SortFunc(fs, func(a, b factor) int { return a.q - b.q })
	var b []byte
	prev := 0
	for k, f := range fs {
		if k > 0 && f.q == prev {
			return "", 0, false // named twice
		}
		b = binary.AppendUvarint(b, uint64(f.q-prev)<<2|uint64(f.l))
		prev = f.q
	}
	return string(b), prev, true
}

// qubitsLine reads a "qubits N" line.
func (tr *textReader) qubitsLine(raw string, fields []string) {
	switch {
	case len(fields) != 2:
		tr.bad(raw, "want \"qubits N\"")
	case tr.seenTerm:
		tr.bad(raw, "\"qubits\" must come before the first term")
	case tr.declared >= 0:
		tr.bad(raw, "\"qubits\" declared twice")
	default:
		n, err := strconv.Atoi(fields[1])
		switch {
		case err != nil && !errors.Is(err, strconv.ErrRange) || n < 0:
			tr.bad(raw, "qubit count %s is not a non-negative integer", inputcap.Quote(fields[1]))
		case err != nil || n > MaxReadQubits:
			tr.bad(raw, "qubit count %s exceeds the limit of %d", inputcap.Clip(fields[1]), MaxReadQubits)
		default:
			tr.declared = n
		}
	}
}

// dense reads a term whose string is in the dense form.
func (tr *textReader) dense(raw string, c float64, s string) {
	p, err := pauli.Parse(s)
	if err != nil {
		tr.bad(raw, "Pauli string %s: %s", inputcap.Quote(s), parseReason(err))
		return
	}
	if s == "I" || s == "i" {
		tr.terms.add(tr.lineNo, c, pauli.Identity(0))
		return
	}
	switch {
	case tr.declared >= 0 && len(s) != tr.declared:
		tr.bad(raw, "Pauli string %s has %d qubits, but \"qubits %d\" was declared", inputcap.Quote(s), len(s), tr.declared)
		return
	case tr.declared < 0 && tr.width >= 0 && len(s) != tr.width:
		tr.bad(raw, "Pauli string %s has %d qubits, but line %d has %d", inputcap.Quote(s), len(s), tr.widthLine, tr.width)
		return
	case len(s) > MaxReadQubits:
		tr.bad(raw, "Pauli string has %d qubits, more than the limit of %d", len(s), MaxReadQubits)
		return
	}
	if tr.width < 0 {
		tr.width, tr.widthLine = len(s), tr.lineNo
	}
	tr.terms.add(tr.lineNo, c, p)
}

// finish checks the whole file and builds the Hamiltonian.
func (tr *textReader) finish() (*Hamiltonian, error) {
	n := tr.declared
	if n < 0 {
		n = tr.width
	}
	if n < 0 {
		// Only sparse strings and no declaration: the highest index decides.
		n = tr.terms.highest + 1
	}
	for k := range tr.terms.keys {
		if q := tr.terms.maxQ[k]; q >= n {
			tr.lineNo = tr.terms.lines[k]
			tr.bad(tr.terms.text(k), "qubit %d beyond the qubit count %d", q, n)
		}
	}
	if tr.extra > 0 {
		tr.errs = append(tr.errs, fmt.Errorf("hamiltonian: %d more bad lines", tr.extra))
	}
	if len(tr.errs) > 0 {
		return nil, errors.Join(tr.errs...)
	}
	if !tr.terms.any {
		return nil, fmt.Errorf("hamiltonian: %w: no terms in %d lines: the input holds no Hamiltonian (write \"0 I\" for the zero operator)", ErrFormat, tr.lineNo)
	}
	return tr.terms.build(n)
}

// isDense reports whether a single Pauli field is in the dense form: no
// digit and no subscript mark.
func isDense(s string) bool { return !strings.ContainsAny(s, "0123456789_") }

// parseReason returns the reason of a pauli parse error.
func parseReason(err error) string {
	var pe *pauli.ParseError
	if errors.As(err, &pe) {
		return pe.Reason
	}
	return err.Error()
}

// termSet gathers the terms of a file as they are read: each distinct
// string once, in a sparse key of a few bytes per non-identity letter, with
// repeated strings merged at once. Its memory is bounded by the input's
// length, not by the qubit count times the number of lines.
type termSet struct {
	index   map[string]int
	keys    []string
	coef    []float64
	lines   []int // the first line of each key
	maxQ    []int // the highest qubit of each key
	highest int   // the highest qubit of all keys, or −1
	offset  float64
	any     bool // a term (identity included) was added
}

func (ts *termSet) init() {
	ts.index = map[string]int{}
	ts.highest = -1
}

// add adds c·p, read on the given line.
func (ts *termSet) add(line int, c float64, p pauli.String) {
	var b []byte
	prev, hi := 0, 0
	for q, l := range p.Letters() {
		b = binary.AppendUvarint(b, uint64(q-prev)<<2|uint64(l))
		prev, hi = q, q
	}
	ts.addKey(line, c, string(b), hi)
}

// addKey adds c times the string of key, whose highest qubit is hi; the
// empty key is the identity. Each non-identity letter is one varint of the
// gap to the previous letter's qubit (shifted left by 2) and the letter.
func (ts *termSet) addKey(line int, c float64, key string, hi int) {
	ts.any = true
	if key == "" {
		ts.offset += c
		return
	}
	if k, ok := ts.index[key]; ok {
		ts.coef[k] += c
		return
	}
	ts.index[key] = len(ts.keys)
	ts.keys = append(ts.keys, key)
	ts.coef = append(ts.coef, c)
	ts.lines = append(ts.lines, line)
	ts.maxQ = append(ts.maxQ, hi)
	ts.highest = max(ts.highest, hi)
}

// letters decodes key k into (qubit, letter) pairs.
func (ts *termSet) letters(k int, yield func(q int, l pauli.Letter)) {
	b := ts.keys[k]
	q := 0
	for len(b) > 0 {
		v, m := binary.Uvarint([]byte(b[:min(len(b), binary.MaxVarintLen64)]))
		b = b[m:]
		q += int(v >> 2)
		yield(q, pauli.Letter(v&3))
	}
}

// text prints key k in the sparse form, for messages.
func (ts *termSet) text(k int) string {
	var b []byte
	ts.letters(k, func(q int, l pauli.Letter) {
		if len(b) > 0 {
			b = append(b, ' ')
		}
		b = append(b, l.String()...)
		b = append(b, '_')
		b = strconv.AppendInt(b, int64(q), 10)
	})
	return string(b)
}

// build makes the Hamiltonian on n qubits, dropping terms whose merged
// coefficient is zero, after checking the size of its term table against
// [MaxReadWords].
func (ts *termSet) build(n int) (*Hamiltonian, error) {
	if !finite(ts.offset) {
		return nil, fmt.Errorf("hamiltonian: %w: offset overflows to %v", ErrFormat, ts.offset)
	}
	rows := 0
	for k, c := range ts.coef {
		if !finite(c) {
			return nil, lineError(ts.lines[k], "", "term %s: merged coefficient overflows to %v", inputcap.Clip(ts.text(k)), c)
		}
		if c != 0 {
			rows++
		}
	}
	w := pauli.Words(n)
	if need := int64(rows) * 2 * int64(w); need > MaxReadWords {
		return nil, fmt.Errorf("hamiltonian: %w: %d distinct terms on %d qubits need a term table of %d MiB, above the readers' limit of %d MiB (MaxReadWords)",
			ErrFormat, rows, n, need*8>>20, MaxReadWords*8>>20)
	}
	h := &Hamiltonian{n: n, offset: ts.offset, table: pauli.NewTable(n, rows), coef: make([]float64, 0, rows)}
	x, z := make([]uint64, w), make([]uint64, w)
	for k, c := range ts.coef {
		if c == 0 {
			continue
		}
		clear(x)
		clear(z)
		ts.letters(k, func(q int, l pauli.Letter) {
			if l == pauli.X || l == pauli.Y {
				x[q>>6] |= 1 << (q & 63)
			}
			if l == pauli.Z || l == pauli.Y {
				z[q>>6] |= 1 << (q & 63)
			}
		})
		h.table.Append(pauli.FromWords(n, x, z))
		h.coef = append(h.coef, c)
	}
	return h, nil
}

// highestIndex returns the largest qubit index named in a sparse string, or
// −1; an index too large for an int counts as MaxReadQubits. Malformed
// pieces are left for pauli.ParseSparse to report.
func highestIndex(s string) int {
	hi := -1
	for f := range strings.FieldsSeq(s) {
		if len(f) < 3 || f[1] != '_' {
			continue
		}
		q, err := strconv.Atoi(f[2:])
		if errors.Is(err, strconv.ErrRange) {
			return MaxReadQubits
		}
		if err == nil && q > hi {
			hi = q
		}
	}
	return hi
}

// parseCoeff parses a real coefficient and explains a bad one: not a
// number, not finite, complex, written with digit separators ("1_000"), or
// so small that it reads as zero though its digits are not.
func parseCoeff(s string) (float64, string) {
	if strings.IndexByte(s, '_') >= 0 {
		return 0, fmt.Sprintf("coefficient %s: digit separators (_) are not allowed", inputcap.Quote(s))
	}
	v, err := strconv.ParseFloat(s, 64)
	if err == nil {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return 0, fmt.Sprintf("coefficient %s is not finite", inputcap.Quote(s))
		}
		if v == 0 && nonzeroMantissa(s) {
			return 0, fmt.Sprintf("coefficient %s underflows to zero (below 5e-324)", inputcap.Quote(s))
		}
		return v, ""
	}
	if errors.Is(err, strconv.ErrRange) {
		return 0, fmt.Sprintf("coefficient %s out of range", inputcap.Quote(s))
	}
	if _, cerr := strconv.ParseComplex(s, 128); cerr == nil || strings.HasSuffix(s, "i") || strings.HasSuffix(s, "j") || strings.HasPrefix(s, "(") {
		return 0, fmt.Sprintf("complex coefficient %s: Hamiltonian coefficients must be real", inputcap.Quote(s))
	}
	return 0, fmt.Sprintf("coefficient %s is not a number", inputcap.Quote(s))
}

// nonzeroMantissa reports whether a number that parsed has a non-zero digit
// before its exponent.
func nonzeroMantissa(s string) bool {
	s = strings.TrimLeft(s, "+-")
	exp := "eE"
	if len(s) > 1 && s[0] == '0' && (s[1] == 'x' || s[1] == 'X') {
		s, exp = s[2:], "pP"
	}
	if k := strings.IndexAny(s, exp); k >= 0 {
		s = s[:k]
	}
	return strings.Trim(s, "0.") != ""
}

// denseLimit is the widest Hamiltonian that [Write] prints in dense form.
const denseLimit = 32

// Write writes h in the text format: a "qubits N" line, the offset as an
// identity term, then one term per line. Strings are dense up to 32 qubits
// and sparse beyond. Coefficients are printed with the shortest decimal that
// reads back to the same float64, so Read(Write(h)) equals h exactly. A nil
// h is an error; nothing is written then.
func Write(w io.Writer, h *Hamiltonian) error {
	if h == nil {
		return fmt.Errorf("hamiltonian: nil Hamiltonian")
	}
	bw := bufio.NewWriter(w)
	fmt.Fprintf(bw, "qubits %d\n", h.n)
	var buf []byte
	buf = strconv.AppendFloat(buf[:0], h.offset, 'g', -1, 64)
	buf = append(buf, " I\n"...)
	bw.Write(buf)
	for i, c := range h.coef {
		buf = strconv.AppendFloat(buf[:0], c, 'g', -1, 64)
		buf = append(buf, ' ')
		p := h.table.At(i)
		if h.n <= denseLimit {
			buf = p.AppendText(buf)
		} else {
			buf = p.AppendSparse(buf)
		}
		buf = append(buf, '\n')
		if _, err := bw.Write(buf); err != nil {
			return err
		}
	}
	return bw.Flush()
}

// WriteFile writes h to path in the text format, atomically.
func WriteFile(path string, h *Hamiltonian) error {
	return atomicfile.Write(path, func(w io.Writer) error { return Write(w, h) })
}

// String returns h in the text format of [Write].
func (h *Hamiltonian) String() string {
	var b strings.Builder
	Write(&b, h)
	return b.String()
}
