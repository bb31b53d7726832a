package estimate

import (
	"bytes"
	"errors"
	"io"
	"math/rand/v2"
	"strings"
	"testing"
	"testing/iotest"

	"github.com/shotplan/shotplan/pauli"
)

// TestChunkLines checks the records' line reader against the definition,
// byte by byte: the lines before the first byte that makes its line longer
// than max are handed out in order ("\r" before a newline or at the end
// dropped), then the error names that line; an input without such a line
// is read whole. Inputs are random lines around the cap, read whole, in
// halves and one byte at a time, through buffers from the smallest the
// reader takes up to many lines long.
func TestChunkLines(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for trial := range 300 {
		max := 1 + rng.IntN(20)
		var data []byte
		for range rng.IntN(12) {
			data = append(data, bytes.Repeat([]byte{'a'}, rng.IntN(max+3))...)
			if rng.IntN(4) == 0 {
				data = append(data, '\r')
			}
			if rng.IntN(6) > 0 {
				data = append(data, '\n')
			}
		}
		// The reference: scan the bytes one by one.
		off, line, cur := len(data), 0, 0
		var want [][]byte
		start := 0
		for i, b := range data {
			if b == '\n' {
				want = append(want, bytes.TrimSuffix(data[start:i], []byte{'\r'}))
				line, cur, start = line+1, 0, i+1
				continue
			}
			if cur++; cur > max {
				off = i
				break
			}
		}
		if off == len(data) && start < len(data) {
			want = append(want, bytes.TrimSuffix(data[start:], []byte{'\r'}))
		}
		for _, wrap := range []func(io.Reader) io.Reader{
			func(r io.Reader) io.Reader { return r }, iotest.HalfReader, iotest.OneByteReader,
		} {
			for _, size := range []int{1, 3 * max, 1000} {
				c := newChunkLines(wrap(bytes.NewReader(data)), max, size)
				var got [][]byte
				var err error
				for {
					var raw []byte
					if raw, err = c.next(); err != nil {
						break
					}
					got = append(got, bytes.Clone(raw))
				}
				var long *lineTooLong
				switch {
				case len(got) != len(want):
					t.Fatalf("trial %d (max %d, buffer %d, %q): lines %q, want %q", trial, max, size, data, got, want)
				case off == len(data) && err != io.EOF:
					t.Fatalf("trial %d (max %d, %q): error %v, want EOF", trial, max, data, err)
				case off < len(data) && (!errors.As(err, &long) || long.line != line+1 || long.max != max):
					t.Fatalf("trial %d (max %d, %q): error %v, want line %d too long", trial, max, data, err, line+1)
				}
				for k := range got {
					if !bytes.Equal(got[k], want[k]) {
						t.Fatalf("trial %d (max %d, buffer %d, %q): line %d %q, want %q", trial, max, size, data, k+1, got[k], want[k])
					}
				}
			}
		}
	}
}

// emptyReader returns nothing, without an error, forever.
type emptyReader struct{}

func (emptyReader) Read([]byte) (int, error) { return 0, nil }

// TestChunkLinesNoProgress checks that a reader that returns nothing and
// no error is given up on (io.ErrNoProgress, as bufio does) instead of
// asked forever.
func TestChunkLinesNoProgress(t *testing.T) {
	c := newChunkLines(emptyReader{}, 10, 0)
	if _, err := c.next(); err != io.ErrNoProgress {
		t.Errorf("next = %v, want io.ErrNoProgress", err)
	}
}

// readBothWays reads in with the common lines read directly and with
// every line taken the general way; both must give the same records and
// the same error.
func readBothWays(t *testing.T, in string, settings []pauli.Setting) {
	t.Helper()
	fast, ferr := ReadCSV(strings.NewReader(in), settings)
	defer func() { csvFastLines = true }()
	csvFastLines = false
	slow, serr := ReadCSV(strings.NewReader(in), settings)
	csvFastLines = true
	switch {
	case (ferr == nil) != (serr == nil):
		t.Fatalf("%q: error %v read directly, %v the general way", in, ferr, serr)
	case ferr != nil && ferr.Error() != serr.Error():
		t.Fatalf("%q: error %q read directly, %q the general way", in, ferr, serr)
	case ferr == nil && !fast.Equal(slow):
		t.Fatalf("%q: records differ between the two ways", in)
	}
}

// TestCSVFastLinesSame checks that reading the common lines directly
// (without splitting) changes nothing: random files of well-formed and
// malformed lines (spaces, wrong widths, bad bits and letters, quotes,
// "\r\n", extra fields, indices in and out of range, settings outside a
// list) give the same records and the same error, naming the same line,
// either way.
func TestCSVFastLinesSame(t *testing.T) {
	rng := rand.New(rand.NewPCG(21, 22))
	list := []pauli.Setting{pauli.MustParseSetting("XYZ"), pauli.MustParseSetting("ZZZ"), pauli.MustParseSetting("XXY")}
	pieces := []string{
		"XYZ,010", "ZZZ,111", "XXY,000", "YYY,101", "XYZ,011", "0,010", "1,110", "2,001", "3,010",
		"007,011", "1234567890,010", " XYZ,010", "XYZ ,010", "XYZ, 010", "XYZ,01", "XYZ,0101",
		"XYZ,012", "XQZ,010", "\"XYZ\",010", "XYZ,010,1", "XY,010", "XYZW,0101", "", "XYZ,010\r",
		"ZZZ,1 1", "X|Z,010", ",010", "XYZ,", "XYZ", "+1,010", "XYZ,0x0",
	}
	for trial := range 3000 {
		var b strings.Builder
		if trial%50 != 0 {
			b.WriteString("setting,outcome\n")
		}
		for range 1 + rng.IntN(12) {
			// Mostly good lines, so that errors come late.
			p := pieces[rng.IntN(5)]
			if rng.IntN(4) == 0 {
				p = pieces[rng.IntN(len(pieces))]
			}
			b.WriteString(p)
			b.WriteString("\n")
		}
		in := b.String()
		if rng.IntN(5) == 0 {
			in = strings.TrimSuffix(in, "\n")
		}
		for _, settings := range [][]pauli.Setting{nil, list} {
			readBothWays(t, in, settings)
		}
	}
}

// FuzzCSVFastLines is TestCSVFastLinesSame on any input.
func FuzzCSVFastLines(f *testing.F) {
	f.Add("setting,outcome\nXYZ,010\nXYZ,011\n0,111\n")
	f.Add("setting,outcome\nZZ,01\r\nZZ,0x\n")
	f.Add("setting,outcome\n1,10\n12,01\n")
	list := []pauli.Setting{pauli.MustParseSetting("ZZ"), pauli.MustParseSetting("XY")}
	f.Fuzz(func(t *testing.T, in string) {
		for _, settings := range [][]pauli.Setting{nil, list} {
			readBothWays(t, in, settings)
		}
	})
}
