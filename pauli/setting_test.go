package pauli

import (
	"fmt"
	"math/rand/v2"
	"strings"
	"testing"
)

// genSetting returns a uniformly random setting on n qubits.
func genSetting(rng *rand.Rand, n int) Setting {
	ls := make([]Letter, n)
	for q := range ls {
		ls[q] = Letter(1 + rng.IntN(3))
	}
	s, err := NewSetting(FromLetters(ls))
	if err != nil {
		panic(err)
	}
	return s
}

// genCovered returns a string that s covers with probability about one
// half: s's letters with each qubit kept with probability keep, and one
// qubit changed to another letter half the time.
func genCovered(rng *rand.Rand, s Setting, keep float64) String {
	n := s.Qubits()
	ls := make([]Letter, n)
	for q := range ls {
		if rng.Float64() < keep {
			ls[q] = s.At(q)
		}
	}
	if n > 0 && rng.IntN(2) == 0 {
		q := rng.IntN(n)
		ls[q] = Letter(rng.IntN(4))
	}
	return FromLetters(ls)
}

// genBits returns random outcome bits for n qubits, padding zero.
func genBits(rng *rand.Rand, n int) Bits {
	b := NewBits(n)
	for q := range n {
		b.Set(q, rng.Uint64())
	}
	return b
}

func TestCoversNamed(t *testing.T) {
	// MATH.md §1: Q covers P when on every qubit P is I or Q's letter.
	for _, tc := range []struct {
		setting, p string
		want       bool
	}{
		{"XYZ", "XIZ", true},
		{"XYZ", "XYZ", true},
		{"XYZ", "III", true},
		{"XZZ", "XYZ", false},
		{"ZZZ", "XII", false},
		{"XXXX", "IIIY", false},
		{strings.Repeat("Z", 64) + "X", strings.Repeat("I", 64) + "X", true},
		{strings.Repeat("Z", 64) + "X", strings.Repeat("I", 64) + "Z", false},
	} {
		s := MustParseSetting(tc.setting)
		if got := s.Covers(MustParse(tc.p)); got != tc.want {
			t.Errorf("Covers(%s, %s) = %v, want %v", tc.setting, tc.p, got, tc.want)
		}
	}
}

func TestSampleNamed(t *testing.T) {
	// The sample is Π_{q ∈ supp P} (−1)^{b_q}, bit 0 ↔ +1 (MATH.md §1).
	for _, tc := range []struct {
		setting, p, bits string
		want             int
	}{
		{"ZZZ", "ZIZ", "000", 1},
		{"ZZZ", "ZIZ", "010", 1},
		{"ZZZ", "ZIZ", "100", -1},
		{"ZZZ", "ZIZ", "101", 1},
		{"XYZ", "XYZ", "111", -1},
		{"XYZ", "III", "111", 1},
	} {
		b, err := ParseBits(tc.bits)
		if err != nil {
			t.Fatal(err)
		}
		if got := MustParseSetting(tc.setting).Sample(MustParse(tc.p), b); got != tc.want {
			t.Errorf("Sample(%s, %s, %s) = %d, want %d", tc.setting, tc.p, tc.bits, got, tc.want)
		}
	}
}

func TestCoversSampleMatchReference(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	for _, n := range testWidths {
		t.Run(fmt.Sprintf("n=%d", n), func(t *testing.T) {
			covered := 0
			for range 60 {
				s := genSetting(rng, n)
				p := genCovered(rng, s, 0.3)
				got, want := s.Covers(p), refCovers(s, p)
				if got != want {
					t.Fatalf("Covers(%s, %s) = %v, want %v", s, p, got, want)
				}
				if got {
					covered++
				}
				b := genBits(rng, n)
				if got, want := s.Sample(p, b), refSample(p, b); got != want {
					t.Fatalf("Sample(%s, %s, %s) = %d, want %d", s, p, b.Format(n), got, want)
				}
			}
			if n > 0 && covered == 0 {
				t.Errorf("no covered case generated at n=%d; the test is not exercising Covers", n)
			}
		})
	}
}

func TestNewSettingAndComplete(t *testing.T) {
	if _, err := NewSetting(MustParse("XIZ")); err == nil {
		t.Error("NewSetting(XIZ) succeeded, want an error for qubit 1")
	}
	if _, err := NewSetting(Identity(130).With(0, X)); err == nil {
		t.Error("NewSetting with identity beyond word 0 succeeded")
	}
	for _, tc := range []struct {
		p    string
		fill Letter
		want string
	}{
		{"XIZ", Y, "XYZ"},
		{"III", Z, "ZZZ"},
		{"", X, ""},
		{strings.Repeat("I", 65) + "Y", X, strings.Repeat("X", 65) + "Y"},
	} {
		s := Complete(MustParse(tc.p), tc.fill)
		if s.String() != tc.want {
			t.Errorf("Complete(%s, %v) = %s, want %s", tc.p, tc.fill, s, tc.want)
		}
		checkPadding(t, "Complete", s.Pauli())
		if !s.Covers(MustParse(tc.p)) {
			t.Errorf("Complete(%s, %v) does not cover %s", tc.p, tc.fill, tc.p)
		}
	}
	s := MustParseSetting("xyz")
	b, _ := s.MarshalText()
	var u Setting
	if err := u.UnmarshalText(b); err != nil || !u.Equal(s) || u.Key() != s.Key() {
		t.Errorf("Setting text round trip: %s, %v", u, err)
	}
}
