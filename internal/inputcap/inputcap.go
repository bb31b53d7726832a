// Package inputcap holds the two guards every reader of the library shares:
// a byte cap on what is read, and a cap on how much of a bad input an error
// message quotes.
package inputcap

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"unicode/utf8"
)

// MaxQuote is the most bytes of an input that an error message quotes.
const MaxQuote = 64

// ErrTooLarge is wrapped by the error of [ReadAll] for an input above its
// cap.
var ErrTooLarge = errors.New("input too large")

// Clip returns s, or its first MaxQuote bytes (cut at a rune boundary)
// followed by "..." and the full length when s is longer.
func Clip(s string) string {
	if len(s) <= MaxQuote {
		return s
	}
	return s[:cut(s)] + "... (" + strconv.Itoa(len(s)) + " bytes)"
}

// Quote is strconv.Quote of s, shortened as in [Clip]: a 60 MB token or a
// 4000-letter setting becomes a line a person can read.
func Quote(s string) string {
	if len(s) <= MaxQuote {
		return strconv.Quote(s)
	}
	return strconv.Quote(s[:cut(s)]) + "... (" + strconv.Itoa(len(s)) + " bytes)"
}

func cut(s string) int {
	k := MaxQuote
	for k > 0 && !utf8.RuneStart(s[k]) {
		k--
	}
	return k
}

// ReadAll reads r to the end, or returns an error wrapping [ErrTooLarge]
// once more than limit bytes arrive: a device such as /dev/zero is refused
// after limit bytes instead of filling memory.
func ReadAll(r io.Reader, limit int64) ([]byte, error) {
	data, err := io.ReadAll(io.LimitReader(r, limit+1))
	if err != nil {
		return nil, err
	}
	if int64(len(data)) > limit {
		return nil, fmt.Errorf("%w: more than %d bytes", ErrTooLarge, limit)
	}
	return data, nil
}

// MaxShots is the most shots one plan may hold and one simulator run may
// take: 2^32 (about 4.3·10^9). The simulator holds 8 bytes an outcome, 32 GiB
// at the cap, and budgets in practice stay below 10^9. The plan reader
// refuses a plan above it, so that a plan it accepts is one the simulator
// takes, and every shot total stays far from overflowing an int. On a
// 32-bit platform it is the largest int.
const MaxShots = min(1<<32, math.MaxInt)

// JSONLines finds the line of a byte offset in a JSON document that a
// json.Decoder reads from data, for error messages. Offsets mostly grow as
// the decoder reads, so lines are counted on from the last offset asked
// about rather than from the start.
type JSONLines struct {
	data     []byte
	dec      *json.Decoder
	lastOff  int64
	lastLine int
}

// NewJSONLines returns the line finder of dec, which reads data.
func NewJSONLines(data []byte, dec *json.Decoder) *JSONLines {
	return &JSONLines{data: data, dec: dec, lastLine: 1}
}

// Line returns the 1-based line of byte offset off.
func (l *JSONLines) Line(off int64) int {
	off = min(max(off, 0), int64(len(l.data)))
	if off < l.lastOff {
		return 1 + bytes.Count(l.data[:off], []byte{'\n'})
	}
	l.lastLine += bytes.Count(l.data[l.lastOff:off], []byte{'\n'})
	l.lastOff = off
	return l.lastLine
}

// Next returns the line of the decoder's next value: the first byte after
// its offset that is not white space, a colon or a comma.
func (l *JSONLines) Next() int {
	off := l.dec.InputOffset()
	for off < int64(len(l.data)) && bytes.IndexByte([]byte(" \t\r\n:,"), l.data[off]) >= 0 {
		off++
	}
	return l.Line(off)
}
