package pauli

import (
	"errors"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// TestFamilySettingBell checks an entangled setting against textbook
// values: the Bell state (|00⟩+|11⟩)/√2 has XX = +1, ZZ = +1 and
// YY = −1 (Nielsen & Chuang §2.6, since YY = −XX·ZZ). After the family's
// circuit the state is a basis state b, and Sample must give these values.
func TestFamilySettingBell(t *testing.T) {
	s, err := NewFamilySetting(parseAll("XX", "ZZ"))
	if err != nil {
		t.Fatal(err)
	}
	if s.IsLocal() {
		t.Fatalf("NewFamilySetting(XX, ZZ).IsLocal() = true, want false")
	}
	bell := mat.NewVecDense(8, nil) // [Re ψ; Im ψ], basis index Σ bit_q 2^q
	bell.SetVec(0, 1/mathSqrt2)
	bell.SetVec(3, 1/mathSqrt2)
	var phi mat.VecDense
	phi.MulVec(circuitMatrix(s.Circuit()), bell)
	b := -1
	for i := range 4 {
		if p := phi.AtVec(i)*phi.AtVec(i) + phi.AtVec(4+i)*phi.AtVec(4+i); p > 0.999 {
			b = i
		}
	}
	if b < 0 {
		t.Fatalf("circuit %v does not map the Bell state to a basis state: %v", s.Circuit(), mat.Formatted(phi.T()))
	}
	for _, c := range []struct {
		p    string
		want int
	}{{"XX", 1}, {"ZZ", 1}, {"YY", -1}, {"II", 1}} {
		p := MustParse(c.p)
		if !s.Covers(p) {
			t.Errorf("Covers(%s) = false, want true", c.p)
			continue
		}
		if got := s.Sample(p, Bits{uint64(b)}); got != c.want {
			t.Errorf("Sample(%s, %02b) = %d, want %d", c.p, b, got, c.want)
		}
	}
	for _, p := range []string{"XI", "ZI", "XZ", "IY"} {
		if s.Covers(MustParse(p)) {
			t.Errorf("Covers(%s) = true, want false (anticommutes with XX or ZZ)", p)
		}
	}
}

const mathSqrt2 = 1.4142135623730951

func TestFamilySettingText(t *testing.T) {
	for _, c := range []struct {
		name, in, want string
		local          bool
	}{
		{"bell", "XX|ZZ", "XX|ZZ", false},
		{"dependent member dropped", "XXI|ZZI|YYI", "XXI|ZZI", false},
		{"qubit-wise becomes local", "XII|IYI", "XYZ", true},
		{"three qubits", "XXX|ZZI|IZZ", "XXX|ZZI|IZZ", false},
	} {
		t.Run(c.name, func(t *testing.T) {
			s, err := ParseSetting(c.in)
			if err != nil {
				t.Fatal(err)
			}
			if got := s.String(); got != c.want {
				t.Errorf("ParseSetting(%q).String() = %q, want %q", c.in, got, c.want)
			}
			if s.IsLocal() != c.local {
				t.Errorf("ParseSetting(%q).IsLocal() = %v, want %v", c.in, s.IsLocal(), c.local)
			}
			b, _ := s.MarshalText()
			var r Setting
			if err := r.UnmarshalText(b); err != nil {
				t.Fatal(err)
			}
			if !r.Equal(s) || r.Key() != s.Key() || !r.Circuit().Equal(s.Circuit()) {
				t.Errorf("round trip of %q gives %q (circuit %v), want equal setting (circuit %v)", b, r, r.Circuit(), s.Circuit())
			}
		})
	}
	for _, c := range []struct{ name, in, reason string }{
		{"not commuting", "XX|ZI", "do not commute"},
		{"widths", "XX|ZZZ", "qubits"},
		{"bad letter", "XX|ZQ", "unknown letter"},
		{"only identity", "II|II", "identity"},
	} {
		t.Run(c.name, func(t *testing.T) {
			_, err := ParseSetting(c.in)
			if err == nil || !strings.Contains(err.Error(), c.reason) {
				t.Fatalf("ParseSetting(%q) error = %v, want one containing %q", c.in, err, c.reason)
			}
			var pe *ParseError
			if !errors.As(err, &pe) {
				t.Errorf("ParseSetting(%q) error %T, want *ParseError", c.in, err)
			}
		})
	}
}

// TestFamilySettingKinds checks that local and entangled settings never
// compare equal or share keys, and that letter methods panic on entangled
// settings.
func TestFamilySettingKinds(t *testing.T) {
	e, err := NewFamilySetting(parseAll("XX", "ZZ"))
	if err != nil {
		t.Fatal(err)
	}
	keys := map[string]string{e.Key(): e.String()}
	for _, l := range []string{"XX", "XY", "XZ", "YX", "YY", "YZ", "ZX", "ZY", "ZZ"} {
		s := MustParseSetting(l)
		if s.Equal(e) || e.Equal(s) {
			t.Errorf("Equal(%s, %s) = true, want false", s, e)
		}
		if k, dup := keys[s.Key()]; dup {
			t.Errorf("Key(%s) = Key(%s)", s, k)
		}
		keys[s.Key()] = l
	}
	for name, f := range map[string]func(){
		"At":    func() { e.At(0) },
		"Pauli": func() { e.Pauli() },
		"Words": func() { e.Words() },
	} {
		func() {
			defer func() {
				r := recover()
				if r == nil || !strings.Contains(r.(string), "entangled") {
					t.Errorf("%s on an entangled setting: recovered %v, want a panic naming the entangled setting", name, r)
				}
			}()
			f()
		}()
	}
}

// TestFamilySettingTable checks the Table queries and Setting.Diagonal of
// entangled settings against Diagonalization and explicit matrix
// conjugation (clifford_ref_test.go), for random commuting families.
func TestFamilySettingTable(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	for range 40 {
		n := 2 + rng.IntN(4)
		fam := randomCommutingFamily(rng, n, 1+rng.IntN(n), 5, true)
		s, err := NewFamilySetting(fam)
		if err != nil {
			t.Fatal(err)
		}
		tab := NewTable(n, 40)
		for _, p := range fam {
			tab.Append(p)
		}
		for range 35 {
			tab.Append(randomString(rng, n))
		}
		mask := make([]bool, tab.Len())
		tab.coverMask(mask, s)
		cov := tab.Covered(nil, s)
		k := 0
		u := circuitMatrix(s.Circuit())
		for r := range tab.Len() {
			p := tab.At(r)
			z, sign, ok := s.Diagonal(p)
			want := isZString(refConjugateMust(u, p, z, sign, ok))
			if r < len(fam) && !ok {
				t.Fatalf("setting %s does not cover its own member %s", s, p)
			}
			if ok != want {
				t.Errorf("setting %s: Diagonal(%s) ok = %v, matrix check %v", s, p, ok, want)
			}
			if got := s.Covers(p); got != ok || mask[r] != ok || tab.CoversRow(r, s) != ok {
				t.Errorf("setting %s, row %s: Covers %v, CoverMask %v, CoversRow %v, Diagonal ok %v; want all equal", s, p, got, mask[r], tab.CoversRow(r, s), ok)
			}
			if ok {
				if k >= len(cov) || cov[k] != r {
					t.Fatalf("setting %s: Covered = %v misses row %d", s, cov, r)
				}
				k++
				b := Bits{uint64(rng.IntN(1 << n))}
				var got [1]int8
				tab.SettingSamples(got[:], []int{r}, s, b)
				if want := sign * (1 - 2*b.Parity(z.z)); int(got[0]) != want || s.Sample(p, b) != want {
					t.Errorf("setting %s, row %s, outcome %v: SettingSamples %d, Sample %d, want %d", s, p, b, got[0], s.Sample(p, b), want)
				}
			}
		}
		if k != len(cov) {
			t.Errorf("setting %s: Covered = %v has extra rows", s, cov)
		}
	}
}

// refConjugateMust returns z when U P U† equals sign·z as matrices (so z is
// checked to be the true image), and the identity-free string "X" marker
// otherwise; it lets the caller test isZString on a matrix-verified image.
func refConjugateMust(u *mat.Dense, p, z String, sign int, ok bool) String {
	if ok && isSignedPauli(conjugateMatrix(u, p), z, sign) {
		return z
	}
	return Identity(p.n).With(0, X)
}

// TestFamilySettingLocalCircuit checks that the circuit of a local setting
// maps each of its letters to +Z (H X H = Z, H S† Y S H = Z: Nielsen &
// Chuang §4.2), by matrix conjugation.
func TestFamilySettingLocalCircuit(t *testing.T) {
	s := MustParseSetting("XYZ")
	u := circuitMatrix(s.Circuit())
	for q, l := range []Letter{X, Y, Z} {
		p := Identity(3).With(q, l)
		z := Identity(3).With(q, Z)
		if !isSignedPauli(conjugateMatrix(u, p), z, 1) {
			t.Errorf("circuit %v of setting XYZ does not map %s to +%s", s.Circuit(), p, z)
		}
	}
}

// TestSettingSamplesWide compares Table.SettingSamples with Setting.Sample
// row by row on entangled settings over several 64-bit words, for products
// of members (covered) and random strings (mostly not).
func TestSettingSamplesWide(t *testing.T) {
	rng := rand.New(rand.NewPCG(41, 42))
	for _, n := range []int{65, 130} {
		fam := randomCommutingFamily(rng, n, n/3, 20, true)
		s, err := NewFamilySetting(fam)
		if err != nil {
			t.Fatal(err)
		}
		tab := NewTable(n, 60)
		for range 40 {
			p, _ := Mul(fam[rng.IntN(len(fam))], fam[rng.IntN(len(fam))])
			tab.Append(p)
		}
		for range 20 {
			tab.Append(randomString(rng, n))
		}
		rows := make([]int, tab.Len())
		for r := range rows {
			rows[r] = r
		}
		got := make([]int8, len(rows))
		b := genBits(rng, n)
		tab.SettingSamples(got, rows, s, b)
		for r := range rows {
			if want := s.Sample(tab.At(r), b); int(got[r]) != want {
				t.Errorf("n=%d row %d (%s): SettingSamples %d, Sample %d", n, r, tab.At(r), got[r], want)
			}
		}
	}
}
