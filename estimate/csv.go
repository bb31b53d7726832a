package estimate

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"os"
	"strconv"
	"strings"
	"unsafe"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/internal/atomicfile"
	"github.com/shotplan/shotplan/pauli"
)

// ErrFormat is wrapped by every error about malformed record, manifest or
// option input. It is hamiltonian.ErrFormat, the module's one sentinel for
// malformed input.
var ErrFormat = hamiltonian.ErrFormat

// LineError reports a bad line of a CSV file. It is hamiltonian.LineError,
// the module's one line error; its Err is nil, meaning [ErrFormat].
type LineError = hamiltonian.LineError

// lineError returns the [*LineError] of the estimate package for a line.
func lineError(line int, reason string) *LineError {
	return &LineError{Reader: "estimate", Line: line, Reason: reason}
}

// csvHeader is the first line of a records file.
const csvHeader = "setting,outcome"

// WriteCSV writes rec in the CSV form described in the package
// documentation: the header, then one row per shot in shot order with the
// setting as text. A nil rec is an error; nothing is written then.
func WriteCSV(w io.Writer, rec *Records) error {
	if rec == nil {
		return fmt.Errorf("estimate: nil records")
	}
	bw := bufio.NewWriter(w)
	bw.WriteString(csvHeader + "\n")
	text := make([][]byte, rec.Groups())
	for g := range text {
		text[g] = rec.Setting(g).AppendText(nil)
	}
	var buf []byte
	for _, s := range rec.Shots() {
		buf = append(buf[:0], text[s.Group]...)
		buf = append(buf, ',')
		buf = s.Outcome.AppendText(buf, rec.n)
		buf = append(buf, '\n')
		if _, err := bw.Write(buf); err != nil {
			return err
		}
	}
	return bw.Flush()
}

// WriteCSVFile writes rec to path in the CSV form, atomically: a failed
// write leaves any earlier file in place and no partial file behind.
func WriteCSVFile(path string, rec *Records) error {
	return atomicfile.Write(path, func(w io.Writer) error { return WriteCSV(w, rec) })
}

// ReadCSV reads records in the CSV form described in the package
// documentation. A setting field that is a non-negative integer is an index
// into settings (for example the distinct settings of an exported plan, see
// [ReadManifest]); settings may be nil if every row spells its setting out.
// The qubit count is that of settings, or else of the first row's setting.
//
// On the first bad line ReadCSV returns nil and a [*LineError] naming the
// line: a wrong header, a wrong number of fields, an unknown setting
// letter, an index out of range, a setting or outcome of the wrong width, or
// an outcome character other than 0 and 1. errors.Is(err, ErrFormat) holds.
func ReadCSV(r io.Reader, settings []pauli.Setting) (*Records, error) {
	var rec *Records
	n, err := scanCSV(r, settings, func(_, n, _ int, s pauli.Setting, b pauli.Bits) error {
		if rec == nil {
			rec = NewRecords(n)
		}
		rec.appendShot(rec.group(s), b)
		return nil
	})
	if err != nil {
		return nil, err
	}
	if rec == nil {
		rec = NewRecords(n)
	}
	return rec, nil
}

// ScanCSV reads records in the CSV form, as [ReadCSV], and hands each shot
// to fn instead of keeping it: memory does not grow with the number of
// shots. The outcome passed to fn is reused for the next shot. An error
// from fn stops the scan and is returned as a [*LineError] naming the
// line, with fn's error as its reason. ScanCSV returns the qubit count (of
// settings, else of the first row), or an error as ReadCSV.
func ScanCSV(r io.Reader, settings []pauli.Setting, fn func(s pauli.Setting, b pauli.Bits) error) (int, error) {
	return scanCSV(r, settings, func(line, _, _ int, s pauli.Setting, b pauli.Bits) error {
		if err := fn(s, b); err != nil {
			return lineError(line, strings.TrimPrefix(err.Error(), "estimate: "))
		}
		return nil
	})
}

// scanCSV parses the CSV form and calls fn with each shot's line, the
// qubit count, the setting's id and the setting, and the outcome (a reused
// buffer); it returns the qubit count. The id of settings[k] is k; a
// setting spelled out gets the next id, len(settings) and up, in order of
// first appearance, and keeps it.
func scanCSV(r io.Reader, settings []pauli.Setting, fn func(line, n, id int, s pauli.Setting, b pauli.Bits) error) (int, error) {
	n := -1
	for k, s := range settings {
		if k == 0 {
			n = s.Qubits()
		} else if s.Qubits() != n {
			return 0, fmt.Errorf("estimate: %w: settings list: setting %d has %d qubits, setting 0 has %d", ErrFormat, k, s.Qubits(), n)
		}
	}
	if n == 0 {
		return 0, fmt.Errorf("estimate: %w: settings list: zero-qubit settings", ErrFormat)
	}
	cr := newLineReader(&lineCap{r: r, max: maxCSVLine(n)}, maxCSVLine(n))
	var (
		bits    pauli.Bits
		header  bool
		parsed  = make(map[string]int)
		spelled []pauli.Setting
		texts   []string // texts[j] is the key of spelled[j] in parsed
		// The id of the last spelled setting: records often repeat a
		// setting on consecutive lines, and a comparison is cheaper than
		// a map lookup.
		lastText string
		lastID   int
	)
	for {
		fields, err := cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			var long *lineTooLong
			if errors.As(err, &long) {
				return 0, &LineError{Reader: "estimate", Line: long.line, Reason: fmt.Sprintf("line longer than %d bytes, more than any setting and outcome of the records' width need", long.max)}
			}
			if le := csvLineError(err); le != nil {
				return 0, le
			}
			return 0, fmt.Errorf("estimate: reading records: %w", err)
		}
		line := cr.line
		if !header {
			if len(fields) != 2 || strings.ToLower(strings.TrimSpace(fields[0])) != "setting" || strings.ToLower(strings.TrimSpace(fields[1])) != "outcome" {
				return 0, lineError(line, fmt.Sprintf("header %q, want %q", strings.Join(fields, ","), csvHeader))
			}
			header = true
			continue
		}
		if len(fields) != 2 {
			return 0, lineError(line, fmt.Sprintf("%d fields, want 2 (setting,outcome)", len(fields)))
		}
		sf, bf := strings.TrimSpace(fields[0]), strings.TrimSpace(fields[1])
		var (
			s  pauli.Setting
			id int
		)
		if sf == "" {
			return 0, lineError(line, "empty setting")
		}
		if sf[0] >= '0' && sf[0] <= '9' {
			k, err := strconv.Atoi(sf)
			switch {
			case err != nil:
				return 0, lineError(line, fmt.Sprintf("setting index %q is not a non-negative integer", sf))
			case settings == nil:
				return 0, lineError(line, fmt.Sprintf("setting index %d but no settings list was given", k))
			case k >= len(settings):
				return 0, lineError(line, fmt.Sprintf("setting index %d out of range: %d settings", k, len(settings)))
			}
			s, id = settings[k], k
		} else if sf == lastText {
			s, id = spelled[lastID-len(settings)], lastID
		} else if j, ok := parsed[sf]; ok {
			s, id = spelled[j-len(settings)], j
			lastID = j
			lastText = texts[j-len(settings)]
		} else {
			// sf aliases the reader's buffer: keep a copy.
			sf = strings.Clone(sf)
			t, err := pauli.ParseSetting(sf)
			if err != nil {
				var pe *pauli.ParseError
				reason := err.Error()
				if errors.As(err, &pe) {
					reason = pe.Reason
				}
				return 0, lineError(line, fmt.Sprintf("setting %q: %s", sf, reason))
			}
			if n < 0 {
				n = t.Qubits()
			}
			if t.Qubits() != n {
				return 0, lineError(line, fmt.Sprintf("setting %q has %d qubits, want %d", sf, t.Qubits(), n))
			}
			id = len(settings) + len(spelled)
			parsed[sf] = id
			spelled = append(spelled, t)
			texts = append(texts, sf)
			lastText, lastID = sf, id
			s = t
		}
		if bits == nil {
			bits = pauli.NewBits(n)
		}
		if len(bf) != n {
			return 0, lineError(line, fmt.Sprintf("outcome %q has %d bits, want %d", bf, len(bf), n))
		}
		if q, ok := parseBitsInto(bits, bf); !ok {
			return 0, lineError(line, fmt.Sprintf("outcome %q: character %q at qubit %d is not 0 or 1", bf, bf[q], q))
		}
		if err := fn(line, n, id, s, bits); err != nil {
			return 0, err
		}
	}
	if !header {
		return 0, lineError(1, fmt.Sprintf("missing header %q", csvHeader))
	}
	if n < 1 {
		return 0, lineError(2, "no shots and no settings list to give the qubit count")
	}
	return n, nil
}

// lineReader reads the records' CSV lines as encoding/csv does for this
// form, without a string per line: a line without a quote is split at its
// commas, the fields aliasing the reader's buffer until the next Read; a
// line with a quote is handed to encoding/csv alone. As encoding/csv it
// skips empty lines, reads "\r\n" as "\n" and drops a "\r" before the end of
// the input.
type lineReader struct {
	br     *bufio.Reader
	line   int // line of the fields last returned
	fields []string
	eof    bool
}

func newLineReader(r io.Reader, maxLine int) *lineReader {
	return &lineReader{br: bufio.NewReaderSize(r, max(64<<10, maxLine+2))}
}

// Read returns the fields of the next non-empty line, io.EOF at the end, a
// *csv.ParseError (its Line the file's) for a bad quoted line, or the
// reader's error.
func (lr *lineReader) Read() ([]string, error) {
	for {
		if lr.eof {
			return nil, io.EOF
		}
		raw, err := lr.br.ReadSlice('\n')
		switch {
		case err == io.EOF:
			lr.eof = true
			if len(raw) == 0 {
				return nil, io.EOF
			}
			if raw[len(raw)-1] == '\r' {
				raw = raw[:len(raw)-1]
			}
		case err != nil:
			return nil, err
		default:
			raw = raw[:len(raw)-1]
			if k := len(raw); k > 0 && raw[k-1] == '\r' {
				raw = raw[:k-1]
			}
		}
		lr.line++
		if len(raw) == 0 {
			continue
		}
		if bytes.IndexByte(raw, '"') >= 0 {
			cr := csv.NewReader(bytes.NewReader(raw))
			cr.FieldsPerRecord = -1
			f, err := cr.Read()
			if err != nil {
				var pe *csv.ParseError
				if errors.As(err, &pe) {
					pe.StartLine, pe.Line = lr.line, lr.line
				}
				return nil, err
			}
			return f, nil
		}
		text := unsafe.String(unsafe.SliceData(raw), len(raw))
		lr.fields = lr.fields[:0]
		for {
			k := strings.IndexByte(text, ',')
			if k < 0 {
				lr.fields = append(lr.fields, text)
				break
			}
			lr.fields = append(lr.fields, text[:k])
			text = text[k+1:]
		}
		return lr.fields, nil
	}
}

// maxCSVLine is the longest records line accepted: a setting of n qubits
// (up to two characters a qubit in the entangled form, with separators) and
// an outcome of n bits, with room for spaces. With n unknown (no settings
// list) the widest setting is assumed.
func maxCSVLine(n int) int {
	if n < 1 {
		n = hamiltonian.MaxReadQubits
	}
	return 8*n + 4096
}

// lineCap passes bytes through and fails once a line (bytes since the last
// newline) exceeds max, so that a file without newlines (/dev/zero) is
// refused instead of read whole.
type lineCap struct {
	r         io.Reader
	max, cur  int
	line      int
	exhausted bool
}

type lineTooLong struct{ line, max int }

func (e *lineTooLong) Error() string {
	return fmt.Sprintf("line %d longer than %d bytes", e.line, e.max)
}

func (c *lineCap) Read(p []byte) (int, error) {
	if c.exhausted {
		return 0, &lineTooLong{c.line + 1, c.max}
	}
	n, err := c.r.Read(p)
	// Line by line: the byte that would make the line too long is at
	// i+room; a newline before it ends the line.
	for i := 0; i < n; {
		room := c.max - c.cur
		end := min(n, i+room+1)
		if j := bytes.IndexByte(p[i:end], '\n'); j >= 0 {
			c.line++
			c.cur = 0
			i += j + 1
			continue
		}
		if end == i+room+1 {
			c.exhausted = true
			// Hand over what precedes the offending byte; the next call
			// reports the error.
			return i + room, nil
		}
		c.cur += end - i
		i = end
	}
	return n, err
}

// csvLineError returns the [*LineError] for a syntax error of
// [csv.Reader.Read], or nil for any other error.
func csvLineError(err error) *LineError {
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		return lineError(pe.Line, pe.Err.Error())
	}
	return nil
}

// parseBitsInto sets b from the text s ('0' and '1', qubit 0 first; len(s)
// qubits). It returns the offending qubit and false on another character.
// It is [pauli.ParseBits] into a reused buffer, so readers do not allocate
// an outcome per shot, and it reports the qubit for the caller's own
// line-numbered message.
func parseBitsInto(b pauli.Bits, s string) (int, bool) {
	clear(b)
	q := 0
	// Eight characters at a time while all are '0' or '1' (0x30, 0x31):
	// their low bits, one per byte, are gathered into one byte by a
	// multiplication (byte k's bit lands on bit 56 + k).
	for ; q+8 <= len(s); q += 8 {
		v := uint64(s[q]) | uint64(s[q+1])<<8 | uint64(s[q+2])<<16 | uint64(s[q+3])<<24 |
			uint64(s[q+4])<<32 | uint64(s[q+5])<<40 | uint64(s[q+6])<<48 | uint64(s[q+7])<<56
		if v&0xFEFEFEFEFEFEFEFE != 0x3030303030303030 {
			break
		}
		b[q>>6] |= ((v & 0x0101010101010101) * 0x0102040810204080) >> 56 << (q & 63)
	}
	for ; q < len(s); q++ {
		switch s[q] {
		case '0':
		case '1':
			b[q>>6] |= 1 << (q & 63)
		default:
			return q, false
		}
	}
	return 0, true
}

// ReadCSVFile reads records from a CSV file; see [ReadCSV]. Errors name the
// file.
func ReadCSVFile(path string, settings []pauli.Setting) (*Records, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	rec, err := ReadCSV(f, settings)
	if err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	return rec, nil
}
