package hamiltonian

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"github.com/shotplan/shotplan/internal/atomicfile"
	"github.com/shotplan/shotplan/pauli"
)

// maxLineErrors bounds how many bad lines one error lists.
const maxLineErrors = 50

// MaxReadQubits is the widest Hamiltonian that [Read], [ReadFile] and the
// JSON decoder accept. It bounds the memory a malformed or hostile file can
// claim (each term takes 2·⌈n/64⌉ words).
const MaxReadQubits = 1 << 16

// Read parses the text format described in the package documentation. It
// reports every bad line (up to 50, then a count of the rest), each as a
// [*LineError], joined with errors.Join; errors.Is(err, ErrFormat) holds.
// A qubit count above [MaxReadQubits], or a qubit index of MaxReadQubits or
// more, is an error.
func Read(r io.Reader) (*Hamiltonian, error) {
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 0, 64*1024), 64<<20)
	type pending struct {
		line   int
		coeff  float64
		dense  pauli.String // the parsed dense string when sparse is ""
		sparse string
	}
	var (
		declared  = -1 // from a "qubits N" line
		width     = -1 // from the first dense string
		widthLine int  // the line that set width
		highest   = -1 // highest sparse qubit index
		items     []pending
		errs      []error
		extra     int
		lineNo    int
		seenTerm  bool
	)
	bad := func(text, format string, args ...any) {
		if len(errs) < maxLineErrors {
			errs = append(errs, &LineError{Reader: "hamiltonian", Line: lineNo, Text: text, Reason: fmt.Sprintf(format, args...)})
		} else {
			extra++
		}
	}
	for sc.Scan() {
		lineNo++
		raw := sc.Text()
		text := raw
		if k := strings.IndexByte(text, '#'); k >= 0 {
			text = text[:k]
		}
		fields := strings.Fields(text)
		if len(fields) == 0 {
			continue
		}
		if fields[0] == "qubits" {
			switch {
			case len(fields) != 2:
				bad(raw, "want \"qubits N\"")
			case seenTerm:
				bad(raw, "\"qubits\" must come before the first term")
			case declared >= 0:
				bad(raw, "\"qubits\" declared twice")
			default:
				n, err := strconv.Atoi(fields[1])
				switch {
				case err != nil && !errors.Is(err, strconv.ErrRange) || n < 0:
					bad(raw, "qubit count %q is not a non-negative integer", fields[1])
				case err != nil || n > MaxReadQubits:
					bad(raw, "qubit count %s exceeds the limit of %d", fields[1], MaxReadQubits)
				default:
					declared = n
				}
			}
			continue
		}
		seenTerm = true
		c, reason := parseCoeff(fields[0])
		if reason != "" {
			bad(raw, "%s", reason)
			continue
		}
		if len(fields) == 1 {
			bad(raw, "coefficient %s has no Pauli string (write I for the identity)", fields[0])
			continue
		}
		rest := fields[1:]
		if len(rest) == 1 && !strings.ContainsAny(rest[0], "0123456789") {
			s := rest[0]
			p, err := pauli.Parse(s)
			if err != nil {
				var pe *pauli.ParseError
				errors.As(err, &pe)
				bad(raw, "Pauli string %q: %s", s, pe.Reason)
				continue
			}
			if s == "I" || s == "i" {
				items = append(items, pending{line: lineNo, coeff: c, sparse: "I"})
				continue
			}
			switch {
			case declared >= 0 && len(s) != declared:
				bad(raw, "Pauli string %q has %d qubits, but \"qubits %d\" was declared", s, len(s), declared)
				continue
			case declared < 0 && width >= 0 && len(s) != width:
				bad(raw, "Pauli string %q has %d qubits, but line %d has %d", s, len(s), widthLine, width)
				continue
			case len(s) > MaxReadQubits:
				bad(raw, "Pauli string has %d qubits, more than the limit of %d", len(s), MaxReadQubits)
				continue
			}
			if width < 0 {
				width, widthLine = len(s), lineNo
			}
			items = append(items, pending{line: lineNo, coeff: c, dense: p})
			continue
		}
		sp := strings.Join(rest, " ")
		if declared < 0 {
			// The width may come from the highest index; bound it here.
			if q := highestIndex(sp); q >= MaxReadQubits {
				bad(raw, "qubit index %d exceeds the limit of %d qubits", q, MaxReadQubits)
				continue
			} else if q > highest {
				highest = q
			}
		}
		items = append(items, pending{line: lineNo, coeff: c, sparse: sp})
	}
	if err := sc.Err(); err != nil {
		return nil, fmt.Errorf("hamiltonian: line %d: %w", lineNo+1, err)
	}
	n := declared
	if n < 0 {
		n = width
	}
	if n < 0 {
		// Only sparse strings and no declaration: the highest index decides.
		n = highest + 1
	}
	var offset float64
	terms := make([]Term, 0, len(items))
	for _, it := range items {
		lineNo = it.line
		var p pauli.String
		if it.sparse == "" {
			p = it.dense
		} else {
			var err error
			p, err = pauli.ParseSparse(it.sparse, n)
			if err != nil {
				var pe *pauli.ParseError
				errors.As(err, &pe)
				bad(it.sparse, "Pauli string %q: %s", it.sparse, pe.Reason)
				continue
			}
		}
		if p.IsIdentity() {
			offset += it.coeff
			continue
		}
		terms = append(terms, Term{Pauli: p, Coeff: it.coeff})
	}
	if extra > 0 {
		errs = append(errs, fmt.Errorf("hamiltonian: %d more bad lines", extra))
	}
	if len(errs) > 0 {
		return nil, errors.Join(errs...)
	}
	h, err := New(n, offset, terms)
	if err != nil {
		return nil, fmt.Errorf("%w: %w", ErrFormat, err)
	}
	return h, nil
}

// highestIndex returns the largest qubit index named in a sparse string, or
// −1; an index too large for an int counts as MaxReadQubits. Malformed
// pieces are left for pauli.ParseSparse to report.
func highestIndex(s string) int {
	hi := -1
	for f := range strings.FieldsSeq(s) {
		if len(f) < 2 {
			continue
		}
		q, err := strconv.Atoi(f[1:])
		if errors.Is(err, strconv.ErrRange) {
			return MaxReadQubits
		}
		if err == nil && q > hi {
			hi = q
		}
	}
	return hi
}

// parseCoeff parses a real coefficient and explains a bad one.
func parseCoeff(s string) (float64, string) {
	v, err := strconv.ParseFloat(s, 64)
	if err == nil {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return 0, fmt.Sprintf("coefficient %q is not finite", s)
		}
		return v, ""
	}
	if errors.Is(err, strconv.ErrRange) {
		return 0, fmt.Sprintf("coefficient %q out of range", s)
	}
	if _, cerr := strconv.ParseComplex(s, 128); cerr == nil || strings.HasSuffix(s, "i") || strings.HasSuffix(s, "j") || strings.HasPrefix(s, "(") {
		return 0, fmt.Sprintf("complex coefficient %q: Hamiltonian coefficients must be real", s)
	}
	return 0, fmt.Sprintf("coefficient %q is not a number", s)
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
		return fmt.Errorf("hamiltonian: Write: nil Hamiltonian")
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
