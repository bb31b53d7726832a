package pauli

import (
	"errors"
	"slices"
	"testing"
)

// lettersFrom maps each byte to a letter (its low two bits) and an outcome
// bit (its third bit).
func lettersFrom(data []byte) ([]Letter, Bits) {
	ls := make([]Letter, len(data))
	b := NewBits(len(data))
	for q, c := range data {
		ls[q] = Letter(c & 3)
		b.Set(q, uint64(c>>2))
	}
	return ls, b
}

// FuzzWordwise compares every word-wise fast path with its letter-by-letter
// reference on two strings of the same width built from the input.
func FuzzWordwise(f *testing.F) {
	f.Add([]byte{1, 2}, []byte{2, 3}, uint8(1))
	f.Add([]byte("XYZIXYZIXYZ"), []byte("ZZZZZZZZZZZ"), uint8(3))
	f.Add(make([]byte, 64), make([]byte, 64), uint8(2))
	f.Add(make([]byte, 65), []byte("0123456789012345678901234567890123456789012345678901234567890123456789"), uint8(1))
	f.Fuzz(func(t *testing.T, da, db []byte, fill uint8) {
		n := min(len(da), len(db))
		la, bits := lettersFrom(da[:n])
		lb, _ := lettersFrom(db[:n])
		a, b := FromLetters(la), FromLetters(lb)
		checkPair(t, a, b)
		c, _ := Mul(a, b)
		s := Complete(a, Letter(1+fill%3))
		for _, p := range []String{a, b} {
			if got, want := s.Covers(p), refCovers(s, p); got != want {
				t.Fatalf("Covers(%s, %s) = %v, want %v", s, p, got, want)
			}
			if got, want := s.Sample(p, bits), refSample(p, bits); got != want {
				t.Fatalf("Sample(%s, %s) = %d, want %d", s, p, got, want)
			}
		}
		tab := TableOf(n, a, b, c)
		var want []int
		for r, p := range []String{a, b, c} {
			if refCovers(s, p) {
				want = append(want, r)
			}
		}
		if got := tab.Covered(nil, s); !slices.Equal(got, want) {
			t.Fatalf("Covered(%s) over %s %s %s = %v, want %v", s, a, b, c, got, want)
		}
		samples := make([]int8, len(want))
		tab.Samples(samples, want, bits)
		for k, r := range want {
			if int(samples[k]) != refSample(tab.At(r), bits) {
				t.Fatalf("Samples row %d = %d, want %d", r, samples[k], refSample(tab.At(r), bits))
			}
		}
	})
}

func checkParseError(t *testing.T, s string, err error) {
	t.Helper()
	var pe *ParseError
	if !errors.As(err, &pe) {
		t.Fatalf("error %v for %q is not a *ParseError", err, s)
	}
	if !errors.Is(err, ErrSyntax) && !errors.Is(err, ErrRange) {
		t.Fatalf("error %v for %q wraps neither ErrSyntax nor ErrRange", err, s)
	}
	if pe.Offset < 0 || pe.Offset > len(s) {
		t.Fatalf("error %v for %q: offset %d outside the input", err, s, pe.Offset)
	}
}

// FuzzParse checks that dense parsing never panics, reports errors inside
// the input, and round-trips through both printed forms.
func FuzzParse(f *testing.F) {
	for _, s := range []string{"", "XIZY", "xizy", "XQZ", "X0", "IIII", "\xff"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		p, err := Parse(s)
		if err != nil {
			checkParseError(t, s, err)
			return
		}
		if p.Qubits() != len(s) {
			t.Fatalf("Parse(%q) has %d qubits", s, p.Qubits())
		}
		if q := MustParse(p.String()); !q.Equal(p) {
			t.Fatalf("Parse(String(%q)) = %s", s, q)
		}
		if q, err := ParseSparse(p.Sparse(), len(s)); err != nil || !q.Equal(p) {
			t.Fatalf("ParseSparse(Sparse(%q)) = %s, %v", s, q, err)
		}
		checkPadding(t, "Parse", p)
	})
}

// FuzzParseSparse checks that sparse parsing never panics, reports errors
// inside the input, and round-trips.
func FuzzParseSparse(f *testing.F) {
	for _, c := range []struct {
		s string
		n uint16
	}{{"X_0 Z_2 Y_3", 4}, {"I", 0}, {"X_0 Z_5", 3}, {"X0Z1", 3}, {"X_0 X_0", 2}, {"Y_999", 1000}, {"  z_1\t", 2}} {
		f.Add(c.s, c.n)
	}
	f.Fuzz(func(t *testing.T, s string, n uint16) {
		p, err := ParseSparse(s, int(n))
		if err != nil {
			checkParseError(t, s, err)
			return
		}
		if p.Qubits() != int(n) {
			t.Fatalf("ParseSparse(%q, %d) has %d qubits", s, n, p.Qubits())
		}
		if q, err := ParseSparse(p.Sparse(), int(n)); err != nil || !q.Equal(p) {
			t.Fatalf("ParseSparse(Sparse(%s)) = %s, %v", p, q, err)
		}
		checkPadding(t, "ParseSparse", p)
	})
}

// FuzzParseBits checks bit-string parsing and printing.
func FuzzParseBits(f *testing.F) {
	for _, s := range []string{"", "0", "0110", "01a"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		b, err := ParseBits(s)
		if err != nil {
			checkParseError(t, s, err)
			return
		}
		if got := b.Format(len(s)); got != s {
			t.Fatalf("Format(ParseBits(%q)) = %q", s, got)
		}
	})
}
