package inputcap

import (
	"errors"
	"io"
	"strings"
	"testing"
)

func TestClipQuote(t *testing.T) {
	short := strings.Repeat("x", MaxQuote)
	if Clip(short) != short || Quote(short) != `"`+short+`"` {
		t.Errorf("a %d-byte string was shortened", MaxQuote)
	}
	long := strings.Repeat("Z", 60<<20)
	for _, got := range []string{Clip(long), Quote(long)} {
		if len(got) > MaxQuote+40 || !strings.Contains(got, "62914560 bytes") {
			t.Errorf("60 MiB token quoted as %d bytes: %.100s", len(got), got)
		}
	}
	// A multi-byte rune across the cut is not split.
	s := strings.Repeat("a", MaxQuote-1) + "é" + "b"
	if got := Clip(s); !strings.HasPrefix(got, strings.Repeat("a", MaxQuote-1)+"...") {
		t.Errorf("Clip cut inside a rune: %q", got)
	}
}

func TestReadAll(t *testing.T) {
	data, err := ReadAll(strings.NewReader("abc"), 3)
	if err != nil || string(data) != "abc" {
		t.Errorf("ReadAll at the cap = %q, %v", data, err)
	}
	_, err = ReadAll(io.LimitReader(zeros{}, 1<<30), 1000)
	if !errors.Is(err, ErrTooLarge) {
		t.Errorf("ReadAll of an endless stream: %v, want ErrTooLarge", err)
	}
}

type zeros struct{}

func (zeros) Read(b []byte) (int, error) { clear(b); return len(b), nil }
