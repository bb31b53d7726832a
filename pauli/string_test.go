package pauli

import (
	"errors"
	"fmt"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"
)

// testWidths cross word boundaries: empty, one word, exactly full words,
// one qubit into the next word, and a wide n = 1000.
var testWidths = []int{0, 1, 3, 63, 64, 65, 127, 128, 129, 200, 1000}

// genString returns a uniformly random string on n qubits, built letter by
// letter.
func genString(rng *rand.Rand, n int) String {
	ls := make([]Letter, n)
	for q := range ls {
		ls[q] = Letter(rng.IntN(4))
	}
	return FromLetters(ls)
}

// genSparse returns a random string where each qubit is the identity with
// probability 1−density.
func genSparse(rng *rand.Rand, n int, density float64) String {
	ls := make([]Letter, n)
	for q := range ls {
		if rng.Float64() < density {
			ls[q] = Letter(1 + rng.IntN(3))
		}
	}
	return FromLetters(ls)
}

// checkPadding fails if a word of p has a bit set beyond its last qubit.
func checkPadding(t *testing.T, what string, p String) {
	t.Helper()
	x, z := p.Words()
	if len(x) != Words(p.Qubits()) || len(z) != len(x) {
		t.Fatalf("%s: %d and %d words for %d qubits, want %d", what, len(x), len(z), p.Qubits(), Words(p.Qubits()))
	}
	if r := p.Qubits() & 63; r != 0 {
		m := ^(uint64(1)<<r - 1)
		if x[len(x)-1]&m != 0 || z[len(z)-1]&m != 0 {
			t.Errorf("%s: padding bits set beyond qubit %d", what, p.Qubits()-1)
		}
	}
}

func TestMulSingleQubitTextbook(t *testing.T) {
	// The single-qubit products XY = iZ, YZ = iX, ZX = iY, their reversals
	// with −i, and P² = I (Nielsen & Chuang, Quantum Computation and Quantum
	// Information, §2.1.3; common practice).
	for _, tc := range []struct {
		a, b, c string
		ph      Phase
	}{
		{"X", "Y", "Z", 1}, {"Y", "Z", "X", 1}, {"Z", "X", "Y", 1},
		{"Y", "X", "Z", 3}, {"Z", "Y", "X", 3}, {"X", "Z", "Y", 3},
		{"X", "X", "I", 0}, {"Y", "Y", "I", 0}, {"Z", "Z", "I", 0},
		{"I", "Y", "Y", 0}, {"Z", "I", "Z", 0},
	} {
		c, ph := Mul(MustParse(tc.a), MustParse(tc.b))
		if c.String() != tc.c || ph != tc.ph {
			t.Errorf("Mul(%s, %s) = %v·%s, want %v·%s", tc.a, tc.b, ph, c, tc.ph, tc.c)
		}
	}
}

func TestMulNamed(t *testing.T) {
	// Products worked by hand from the single-qubit table above.
	for _, tc := range []struct {
		name    string
		a, b, c string
		ph      Phase
	}{
		{"XX·YY = i·i ZZ", "XX", "YY", "ZZ", 2},
		{"XYZ·ZYX = (−i)(1)(i) YIY", "XYZ", "ZYX", "YIY", 0},
		{"XZ·ZX = (−i)(i) YY", "XZ", "ZX", "YY", 0},
		{"XXX·YYY = i³ ZZZ", "XXX", "YYY", "ZZZ", 3},
		{"identity", "III", "III", "III", 0},
		{"disjoint supports", "XII", "IIZ", "XIZ", 0},
		{"word boundary", strings.Repeat("I", 63) + "XY", strings.Repeat("I", 63) + "YY", strings.Repeat("I", 63) + "ZI", 1},
	} {
		c, ph := Mul(MustParse(tc.a), MustParse(tc.b))
		if c.String() != tc.c || ph != tc.ph {
			t.Errorf("%s: Mul(%s, %s) = %v·%s, want %v·%s", tc.name, tc.a, tc.b, ph, c, tc.ph, tc.c)
		}
	}
}

func TestWordwiseMatchesReference(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for _, n := range testWidths {
		t.Run(fmt.Sprintf("n=%d", n), func(t *testing.T) {
			for range 40 {
				a, b := genString(rng, n), genString(rng, n)
				if rng.IntN(2) == 0 {
					// Sparse strings make commuting pairs common.
					a, b = genSparse(rng, n, 3/float64(n+1)), genSparse(rng, n, 3/float64(n+1))
				}
				checkPair(t, a, b)
			}
		})
	}
}

// checkPair compares the word-wise products and predicates of a and b with
// their letter-by-letter references.
func checkPair(t *testing.T, a, b String) {
	t.Helper()
	c, ph := Mul(a, b)
	rc, rph := refMul(a, b)
	if !c.Equal(rc) || ph != rph {
		t.Fatalf("Mul(%s, %s) = %v·%s, want %v·%s", a, b, ph, c, rph, rc)
	}
	checkPadding(t, "Mul", c)
	// MulWords in place over a copy of a's words (the aliasing
	// its doc allows).
	d := a.Clone()
	if wph := MulWords(d.x, d.z, d.x, d.z, b.x, b.z); !d.Equal(rc) || wph != rph {
		t.Fatalf("MulWords(%s, %s) in place = %v·%s, want %v·%s", a, b, wph, d, rph, rc)
	}
	if got, want := a.Commutes(b), refCommutes(a, b); got != want {
		t.Fatalf("Commutes(%s, %s) = %v, want %v", a, b, got, want)
	}
	if got, want := a.QubitwiseCommutes(b), refQubitwise(a, b); got != want {
		t.Fatalf("QubitwiseCommutes(%s, %s) = %v, want %v", a, b, got, want)
	}
	if got, want := a.Weight(), refWeight(a); got != want {
		t.Fatalf("Weight(%s) = %d, want %d", a, got, want)
	}
	if got, want := a.IsIdentity(), refWeight(a) == 0; got != want {
		t.Fatalf("IsIdentity(%s) = %v, want %v", a, got, want)
	}
	checkSupport(t, a)
}

func checkSupport(t *testing.T, p String) {
	t.Helper()
	var wantQ []int
	var wantL []Letter
	for q, l := range refLetters(p) {
		if l != I {
			wantQ = append(wantQ, q)
			wantL = append(wantL, l)
		}
	}
	gotQ := slices.Collect(p.Support())
	if !slices.Equal(gotQ, wantQ) {
		t.Fatalf("Support(%s) = %v, want %v", p, gotQ, wantQ)
	}
	var lq []int
	var ll []Letter
	for q, l := range p.Letters() {
		lq, ll = append(lq, q), append(ll, l)
	}
	if !slices.Equal(lq, wantQ) || !slices.Equal(ll, wantL) {
		t.Fatalf("Letters(%s) = %v %v, want %v %v", p, lq, ll, wantQ, wantL)
	}
	// Stopping early must be honoured.
	for range p.Support() {
		break
	}
}

func TestCommutesNamed(t *testing.T) {
	// Anticommuting positions counted by hand (MATH.md §1).
	for _, tc := range []struct {
		a, b         string
		commute, qwc bool
	}{
		{"X", "Z", false, false},
		{"X", "X", true, true},
		{"XX", "ZZ", true, false},
		{"XI", "IZ", true, true},
		{"XIZ", "XYZ", true, true},
		{"XYZ", "ZYX", true, false},
		{"XYZ", "YYY", true, false},
		{"XYZ", "ZZZ", true, false},
		{"XYZ", "ZYZ", false, false},
		{"III", "XYZ", true, true},
		{"", "", true, true},
	} {
		a, b := MustParse(tc.a), MustParse(tc.b)
		if got := a.Commutes(b); got != tc.commute {
			t.Errorf("Commutes(%s, %s) = %v, want %v", tc.a, tc.b, got, tc.commute)
		}
		if got := b.Commutes(a); got != tc.commute {
			t.Errorf("Commutes(%s, %s) = %v, want %v", tc.b, tc.a, got, tc.commute)
		}
		if got := a.QubitwiseCommutes(b); got != tc.qwc {
			t.Errorf("QubitwiseCommutes(%s, %s) = %v, want %v", tc.a, tc.b, got, tc.qwc)
		}
	}
}

func TestWeightSupportNamed(t *testing.T) {
	for _, tc := range []struct {
		p       string
		weight  int
		support []int
		sparse  string
	}{
		{"", 0, nil, "I"},
		{"IIII", 0, nil, "I"},
		{"XIZY", 3, []int{0, 2, 3}, "X_0 Z_2 Y_3"},
		{strings.Repeat("I", 64) + "Y", 1, []int{64}, "Y_64"},
		{"Z" + strings.Repeat("I", 998) + "X", 2, []int{0, 999}, "Z_0 X_999"},
	} {
		p := MustParse(tc.p)
		if got := p.Weight(); got != tc.weight {
			t.Errorf("Weight(%s) = %d, want %d", tc.p, got, tc.weight)
		}
		if got := slices.Collect(p.Support()); !slices.Equal(got, tc.support) {
			t.Errorf("Support(%s) = %v, want %v", tc.p, got, tc.support)
		}
		if got := p.Sparse(); got != tc.sparse {
			t.Errorf("Sparse(%s) = %q, want %q", tc.p, got, tc.sparse)
		}
	}
}

func TestTextRoundTrip(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for _, n := range testWidths {
		for range 10 {
			p := genString(rng, n)
			if rng.IntN(2) == 0 {
				p = genSparse(rng, n, 0.05)
			}
			d, err := Parse(p.String())
			if err != nil || !d.Equal(p) {
				t.Fatalf("Parse(String(%s)) = %s, %v", p, d, err)
			}
			s, err := ParseSparse(p.Sparse(), n)
			if err != nil || !s.Equal(p) {
				t.Fatalf("ParseSparse(%q, %d) = %s, %v; want %s", p.Sparse(), n, s, err, p)
			}
			b, _ := p.MarshalText()
			var u String
			if err := u.UnmarshalText(b); err != nil || !u.Equal(p) {
				t.Fatalf("UnmarshalText(MarshalText(%s)) = %s, %v", p, u, err)
			}
			checkPadding(t, "Parse", d)
		}
	}
	// Lower case and repeated spaces are accepted.
	if p, err := ParseSparse("  x_0\tz_2  y_3 ", 4); err != nil || p.String() != "XIZY" {
		t.Errorf(`ParseSparse("  x_0\tz_2  y_3 ", 4) = %s, %v, want XIZY`, p, err)
	}
	if p, err := Parse("xizy"); err != nil || p.String() != "XIZY" {
		t.Errorf(`Parse("xizy") = %s, %v, want XIZY`, p, err)
	}
}

// TestParseSparseOldForm checks that a factor without the subscript mark
// ("X0", the unmarked form) is refused with the form to write instead.
func TestParseSparseOldForm(t *testing.T) {
	for _, tc := range []struct{ in, want string }{
		{"X0 Z2", `"X0": write X_0 (letter, underscore, qubit)`},
		{"X_0 y12", `"y12": write Y_12 (letter, underscore, qubit)`},
		{"X_0 Z", `missing "_" and qubit index after Z`},
		{"X_", "missing qubit index after X_"},
		{"X_1Z_2", "separate factors with a space"},
	} {
		_, err := ParseSparse(tc.in, 20)
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("ParseSparse(%q) error %v, want it to contain %q", tc.in, err, tc.want)
		}
	}
	// A long token is quoted shortened, not whole.
	long := "X" + strings.Repeat("7", 10000)
	if _, err := ParseSparse(long, 3); err == nil || len(err.Error()) > 400 {
		t.Errorf("error on a 10001-byte factor is %d bytes long", len(err.Error()))
	}
}

func TestParseErrors(t *testing.T) {
	for _, tc := range []struct {
		name   string
		parse  func() error
		input  string
		offset int
		want   error
	}{
		{"unknown dense letter", func() error { _, err := Parse("XQZ"); return err }, "XQZ", 1, ErrSyntax},
		{"digit in dense", func() error { _, err := Parse("X0"); return err }, "X0", 1, ErrSyntax},
		{"unknown sparse letter", func() error { _, err := ParseSparse("X_0 Q1", 3); return err }, "X_0 Q1", 4, ErrSyntax},
		{"missing index", func() error { _, err := ParseSparse("X", 3); return err }, "X", 1, ErrSyntax},
		{"glued terms", func() error { _, err := ParseSparse("X0Z1", 3); return err }, "X0Z1", 1, ErrSyntax},
		{"qubit named twice", func() error { _, err := ParseSparse("X_0 Y_0", 3); return err }, "X_0 Y_0", 4, ErrSyntax},
		{"index beyond count", func() error { _, err := ParseSparse("X_0 Z_5", 3); return err }, "X_0 Z_5", 6, ErrRange},
		{"index equal to count", func() error { _, err := ParseSparse("Z_3", 3); return err }, "Z_3", 2, ErrRange},
		{"index overflows int", func() error { _, err := ParseSparse("X_99999999999999999999", 3); return err }, "X_99999999999999999999", 2, ErrRange},
		{"negative count", func() error { _, err := ParseSparse("X_0", -1); return err }, "X_0", 0, ErrRange},
		{"bad bit", func() error { _, err := ParseBits("01a"); return err }, "01a", 2, ErrSyntax},
		{"identity in setting", func() error { _, err := ParseSetting("XIZ"); return err }, "XIZ", 1, ErrSyntax},
		{"bad letter in setting", func() error { _, err := ParseSetting("XW"); return err }, "XW", 1, ErrSyntax},
	} {
		err := tc.parse()
		var pe *ParseError
		if !errors.As(err, &pe) {
			t.Errorf("%s: error %v is not a *ParseError", tc.name, err)
			continue
		}
		if !errors.Is(err, tc.want) {
			t.Errorf("%s: errors.Is(%v, %v) = false", tc.name, err, tc.want)
		}
		if pe.Input != tc.input || pe.Offset != tc.offset {
			t.Errorf("%s: error at %q offset %d, want %q offset %d (%v)", tc.name, pe.Input, pe.Offset, tc.input, tc.offset, err)
		}
		if msg := err.Error(); !strings.HasPrefix(msg, "pauli: ") || !strings.Contains(msg, fmt.Sprintf("offset %d", tc.offset)) {
			t.Errorf("%s: message %q lacks the package prefix or offset", tc.name, msg)
		}
	}
}

func TestStringAccessors(t *testing.T) {
	p := MustParse("XIZY")
	for q, want := range []Letter{X, I, Z, Y} {
		if got := p.At(q); got != want {
			t.Errorf("At(XIZY, %d) = %v, want %v", q, got, want)
		}
	}
	if got := p.With(1, Y).String(); got != "XYZY" {
		t.Errorf("With(XIZY, 1, Y) = %s, want XYZY", got)
	}
	if p.String() != "XIZY" {
		t.Errorf("With modified its receiver: %s", p)
	}
	c := p.Clone()
	if !c.Equal(p) || Compare(c, p) != 0 || c.Key() != p.Key() {
		t.Errorf("Clone(%s) = %s not equal", p, c)
	}
	// FromWords clears bits beyond the qubit count.
	f := FromWords(3, []uint64{^uint64(0)}, []uint64{0})
	if f.String() != "XXX" {
		t.Errorf("FromWords(3, all ones, 0) = %s, want XXX", f)
	}
	checkPadding(t, "FromWords", f)
	if Identity(65).With(64, Z).Equal(Identity(64)) {
		t.Error("strings of different widths compare equal")
	}
}

func TestCompareAndKey(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 9))
	for _, n := range []int{2, 64, 130} {
		seen := map[string]String{}
		for range 200 {
			p := genSparse(rng, n, 2/float64(n))
			if q, ok := seen[p.Key()]; ok && !q.Equal(p) {
				t.Fatalf("Key collision: %s and %s", p, q)
			}
			seen[p.Key()] = p
			for _, q := range seen {
				if (Compare(p, q) == 0) != p.Equal(q) || Compare(p, q) != -Compare(q, p) {
					t.Fatalf("Compare(%s, %s) = %d inconsistent with Equal", p, q, Compare(p, q))
				}
			}
		}
	}
	if Compare(MustParse("XX"), MustParse("XXX")) >= 0 {
		t.Error("Compare(XX, XXX) should order the narrower first")
	}
}

func TestPanicsOnMixedWidths(t *testing.T) {
	a, b := MustParse("XZ"), MustParse("XZI")
	st := MustParseSetting("XZZ")
	for _, tc := range []struct {
		name string
		f    func()
	}{
		{"Mul", func() { Mul(a, b) }},
		{"Commutes", func() { a.Commutes(b) }},
		{"QubitwiseCommutes", func() { a.QubitwiseCommutes(b) }},
		{"Covers", func() { st.Covers(a) }},
		{"Table.Append", func() { NewTable(3, 0).Append(a) }},
		{"At out of range", func() { a.At(2) }},
		{"FromLetters invalid", func() { FromLetters([]Letter{4}) }},
	} {
		func() {
			defer func() {
				if recover() == nil {
					t.Errorf("%s did not panic", tc.name)
				}
			}()
			tc.f()
		}()
	}
}

func TestBitsRoundTrip(t *testing.T) {
	for _, s := range []string{"", "0", "1", "0110", strings.Repeat("10", 40), strings.Repeat("1", 64) + "01"} {
		b, err := ParseBits(s)
		if err != nil {
			t.Fatalf("ParseBits(%q): %v", s, err)
		}
		if got := b.Format(len(s)); got != s {
			t.Errorf("Format(ParseBits(%q)) = %q", s, got)
		}
		for q := range len(s) {
			if b.Get(q) != uint64(s[q]-'0') {
				t.Errorf("ParseBits(%q).Get(%d) = %d", s, q, b.Get(q))
			}
		}
	}
	b := NewBits(70)
	b.Set(69, 1)
	b.Set(3, 1)
	b.Set(3, 0)
	if b.Format(70) != strings.Repeat("0", 69)+"1" {
		t.Errorf("Set: got %s", b.Format(70))
	}
}
