package estimate

import (
	"bytes"
	"errors"
	"io"
	"math/rand/v2"
	"testing"
	"testing/iotest"
)

// TestLineCap checks lineCap against the definition, byte by byte: the
// bytes before the first byte that makes its line longer than max are
// handed over, then the error names that line; an input without such a
// line passes whole. Inputs are random lines around the cap, read whole,
// in halves and one byte at a time.
func TestLineCap(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for trial := range 300 {
		max := 1 + rng.IntN(20)
		var data []byte
		for range rng.IntN(12) {
			data = append(data, bytes.Repeat([]byte{'a'}, rng.IntN(max+3))...)
			if rng.IntN(6) > 0 {
				data = append(data, '\n')
			}
		}
		// The reference: scan the bytes one by one.
		off, line, cur := len(data), 0, 0
		for i, b := range data {
			if b == '\n' {
				line, cur = line+1, 0
				continue
			}
			if cur++; cur > max {
				off = i
				break
			}
		}
		for _, wrap := range []func(io.Reader) io.Reader{
			func(r io.Reader) io.Reader { return r }, iotest.HalfReader, iotest.OneByteReader,
		} {
			got, err := io.ReadAll(&lineCap{r: wrap(bytes.NewReader(data)), max: max})
			var long *lineTooLong
			switch {
			case !bytes.Equal(got, data[:off]):
				t.Fatalf("trial %d (max %d, %q): handed over %q, want %q", trial, max, data, got, data[:off])
			case off == len(data) && err != nil:
				t.Fatalf("trial %d (max %d, %q): error %v, want none", trial, max, data, err)
			case off < len(data) && (!errors.As(err, &long) || long.line != line+1 || long.max != max):
				t.Fatalf("trial %d (max %d, %q): error %v, want line %d too long", trial, max, data, err, line+1)
			}
		}
	}
}
