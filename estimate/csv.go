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
	cl := newChunkLines(r, maxCSVLine(n), 0)
	var (
		bits    pauli.Bits
		header  bool
		parsed  = make(map[string]int)
		spelled []pauli.Setting
		texts   []string // texts[j] is the key of spelled[j] in parsed
		byText  textTable
		// The id of the last spelled setting: records often repeat a
		// setting on consecutive lines, and a comparison is cheaper than
		// a lookup.
		lastText string
		lastID   int
	)
	if n > 0 {
		bits = pauli.NewBits(n)
	}
	for {
		raw, err := cl.next()
		if err == io.EOF {
			break
		}
		if err != nil {
			var long *lineTooLong
			if errors.As(err, &long) {
				return 0, &LineError{Reader: "estimate", Line: long.line, Reason: fmt.Sprintf("line longer than %d bytes, more than any setting and outcome of the records' width need", long.max)}
			}
			return 0, fmt.Errorf("estimate: reading records: %w", err)
		}
		line := cl.line
		if len(raw) == 0 {
			continue
		}
		// The common lines, read without splitting: a spelled-out local
		// setting (n letters) or an index, a comma, and n bits. Any
		// other line, or one of these that is not exactly so (an unknown
		// setting, a bad bit), goes the general way below, which
		// accepts it the same way or names what is wrong.
		if header && n > 0 && csvFastLines {
			id := -1
			if len(raw) == 2*n+1 && raw[n] == ',' && raw[0] > '9' {
				key := unsafe.String(unsafe.SliceData(raw), n)
				if key == lastText {
					id = lastID
				} else if j := byText.find(key, texts); j >= 0 {
					id = len(settings) + j
					lastID, lastText = id, texts[j]
				}
			} else if k, c := fastIndex(raw); c > 0 && len(raw) == c+1+n && raw[c] == ',' && k < len(settings) {
				id = k
			}
			if id >= 0 {
				if _, ok := parseBitsInto(bits, unsafe.String(&raw[len(raw)-n], n)); ok {
					var st pauli.Setting
					if id < len(settings) {
						st = settings[id]
					} else {
						st = spelled[id-len(settings)]
					}
					if err := fn(line, n, id, st, bits); err != nil {
						return 0, err
					}
					continue
				}
			}
		}
		fields, err := splitCSVLine(raw, line, &cl.fields)
		if err != nil {
			return 0, err
		}
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
			byText.add(sf, len(texts)-1, texts)
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

// csvFastLines turns on scanCSV's reading of common lines without
// splitting; tests turn it off to compare with the general path.
var csvFastLines = true

// splitCSVLine returns the fields of a non-empty records line, as
// encoding/csv reads them for this form, without a string per line: a line
// without a quote is split at its commas, the fields aliasing raw (in the
// reused *fields); a line with a quote is handed to encoding/csv alone. A
// bad quoted line is a [*LineError] naming line.
func splitCSVLine(raw []byte, line int, fields *[]string) ([]string, error) {
	if bytes.IndexByte(raw, '"') >= 0 {
		cr := csv.NewReader(bytes.NewReader(raw))
		cr.FieldsPerRecord = -1
		f, err := cr.Read()
		if err != nil {
			var pe *csv.ParseError
			if errors.As(err, &pe) {
				return nil, lineError(line, pe.Err.Error())
			}
			return nil, lineError(line, err.Error())
		}
		return f, nil
	}
	text := unsafe.String(unsafe.SliceData(raw), len(raw))
	f := (*fields)[:0]
	for {
		k := strings.IndexByte(text, ',')
		if k < 0 {
			f = append(f, text)
			break
		}
		f = append(f, text[:k])
		text = text[k+1:]
	}
	*fields = f
	return f, nil
}

// fastIndex reads a setting index of one to nine digits at the start of
// raw: the index and the number of digits, or 0 digits if raw does not
// start so.
func fastIndex(raw []byte) (k, digits int) {
	for digits < len(raw) && digits < 9 && raw[digits] >= '0' && raw[digits] <= '9' {
		k = k*10 + int(raw[digits]-'0')
		digits++
	}
	return k, digits
}

// textTable finds the index j of a setting's text among texts (as the map
// of the general path does) by a hash of its bytes, without a string or a
// map access per line.
type textTable struct {
	slots []int32 // j+1 of the text hashed there, 0 for an empty slot
	n     int
}

// textHash mixes the bytes of t, eight at a time (the last eight
// overlapping the ones before when the length is not a multiple of 8).
func textHash(t string) uint64 {
	h := uint64(len(t)) * 0x9E3779B97F4A7C15
	if len(t) < 8 {
		var v uint64
		for i := range len(t) {
			v |= uint64(t[i]) << (8 * i)
		}
		h = (h ^ v) * 0xFF51AFD7ED558CCD
		return h ^ h>>32
	}
	for q := 0; ; q += 8 {
		if q+8 > len(t) {
			q = len(t) - 8
		}
		u := t[q : q+8]
		v := uint64(u[0]) | uint64(u[1])<<8 | uint64(u[2])<<16 | uint64(u[3])<<24 |
			uint64(u[4])<<32 | uint64(u[5])<<40 | uint64(u[6])<<48 | uint64(u[7])<<56
		h = (h ^ v) * 0xFF51AFD7ED558CCD
		if q+8 == len(t) {
			return h ^ h>>32
		}
	}
}

func (tt *textTable) find(key string, texts []string) int {
	if tt.n == 0 {
		return -1
	}
	mask := uint64(len(tt.slots) - 1)
	for k := textHash(key) & mask; ; k = (k + 1) & mask {
		j := tt.slots[k]
		if j == 0 {
			return -1
		}
		if texts[j-1] == key {
			return int(j - 1)
		}
	}
}

// add records that texts[j] is key; the table grows to keep at least half
// its slots empty.
func (tt *textTable) add(key string, j int, texts []string) {
	if 2*(tt.n+1) > len(tt.slots) {
		old := tt.slots
		tt.slots = make([]int32, max(64, 2*len(old)))
		tt.n = 0
		for _, o := range old {
			if o != 0 {
				tt.insert(texts[o-1], o)
			}
		}
	}
	tt.insert(key, int32(j+1))
}

func (tt *textTable) insert(key string, v int32) {
	mask := uint64(len(tt.slots) - 1)
	k := textHash(key) & mask
	for tt.slots[k] != 0 {
		k = (k + 1) & mask
	}
	tt.slots[k] = v
	tt.n++
}

// chunkLines reads lines in large chunks and hands them out as slices of
// its buffer, valid until the next call: a line is the bytes before a
// newline, or the bytes after the last newline at the end of the input,
// without a "\r" at its end (as encoding/csv reads "\r\n" and a final
// "\r"). A line longer than max bytes (its "\r" counted) is refused
// before more than the buffer is read, so that a file without newlines
// (/dev/zero) is refused instead of read whole.
type chunkLines struct {
	r        io.Reader
	buf      []byte
	pos, end int // unread bytes: buf[pos:end]
	max      int
	line     int // line number of the last line returned
	eof      bool
	err      error // the reader's error, returned once the lines before it are
	empty    int   // reads in a row that returned nothing
	fills    int   // reads that filled the buffer since it last grew
	size     int   // the buffer's size for reading
	limit    int   // its largest size: size, or room for two longest lines
	fields   []string
}

type lineTooLong struct{ line, max int }

func (e *lineTooLong) Error() string {
	return fmt.Sprintf("line %d longer than %d bytes", e.line, e.max)
}

// newChunkLines reads r in chunks of up to size bytes (1 MiB for 0), or
// more when needed to hold a line of maxLine bytes. The buffer starts small
// (a short input costs little) and doubles while reads fill it, or while a
// line does not fit.
func newChunkLines(r io.Reader, maxLine, size int) *chunkLines {
	if size <= 0 {
		size = 1 << 20
	}
	return &chunkLines{r: r, max: maxLine, size: size, limit: max(size, 2*maxLine+4), buf: make([]byte, min(size, 16<<10))}
}

// next returns the next line, io.EOF after the last, a *lineTooLong, or
// the reader's error.
func (c *chunkLines) next() ([]byte, error) {
	for {
		if k := bytes.IndexByte(c.buf[c.pos:c.end], '\n'); k >= 0 {
			if k > c.max {
				return nil, &lineTooLong{c.line + 1, c.max}
			}
			raw := c.buf[c.pos : c.pos+k]
			c.pos += k + 1
			c.line++
			if k > 0 && raw[k-1] == '\r' {
				raw = raw[:k-1]
			}
			return raw, nil
		}
		if c.end-c.pos > c.max {
			return nil, &lineTooLong{c.line + 1, c.max}
		}
		if c.err != nil {
			return nil, c.err
		}
		if c.eof {
			if c.pos == c.end {
				return nil, io.EOF
			}
			raw := c.buf[c.pos:c.end]
			c.pos = c.end
			c.line++
			if k := len(raw); raw[k-1] == '\r' {
				raw = raw[:k-1]
			}
			return raw, nil
		}
		if c.pos > 0 {
			c.end = copy(c.buf, c.buf[c.pos:c.end])
			c.pos = 0
		}
		// A partial line that fills the buffer (at most max bytes, checked
		// above), or reads that keep filling it: double it.
		if c.end == len(c.buf) || (c.fills >= 2 && len(c.buf) < c.size) {
			nb := make([]byte, min(2*len(c.buf), c.limit))
			copy(nb, c.buf[:c.end])
			c.buf, c.fills = nb, 0
		}
		m, err := c.r.Read(c.buf[c.end:])
		if c.end+m == len(c.buf) {
			c.fills++
		}
		c.end += m
		switch {
		case err == io.EOF:
			c.eof = true
		case err != nil:
			c.err = err
		case m == 0:
			// A reader may return nothing without an error; ask again,
			// up to a limit (as bufio does).
			if c.empty++; c.empty >= 100 {
				c.err = io.ErrNoProgress
			}
		default:
			c.empty = 0
		}
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
		t := s[q : q+8]
		v := uint64(t[0]) | uint64(t[1])<<8 | uint64(t[2])<<16 | uint64(t[3])<<24 |
			uint64(t[4])<<32 | uint64(t[5])<<40 | uint64(t[6])<<48 | uint64(t[7])<<56
		if v&0xFEFEFEFEFEFEFEFE != 0x3030303030303030 {
			break
		}
		b[q>>6] |= ((v & 0x0101010101010101) * 0x0102040810204080) >> 56 << (q & 63)
	}
	// The last characters: the final eight, overlapping ones already set
	// (setting a bit twice is harmless), which may straddle two words.
	if q < len(s) && q+8 > len(s) && len(s) >= 8 {
		p := len(s) - 8
		t := s[p:]
		v := uint64(t[0]) | uint64(t[1])<<8 | uint64(t[2])<<16 | uint64(t[3])<<24 |
			uint64(t[4])<<32 | uint64(t[5])<<40 | uint64(t[6])<<48 | uint64(t[7])<<56
		if v&0xFEFEFEFEFEFEFEFE == 0x3030303030303030 {
			u := ((v & 0x0101010101010101) * 0x0102040810204080) >> 56
			b[p>>6] |= u << (p & 63)
			if p&63 > 56 {
				b[p>>6+1] |= u >> (64 - p&63)
			}
			return 0, true
		}
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
