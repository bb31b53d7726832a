package pauli

import (
	"errors"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"gonum.org/v1/gonum/mat"
)

func parseAll(ss ...string) []String {
	out := make([]String, len(ss))
	for i, s := range ss {
		out[i] = MustParse(s)
	}
	return out
}

// checkDiagonalization verifies d against the family with the letter-level
// reference: every member's image under the circuit is ±(a Z-string) equal to
// Image, and Diagonal agrees.
func checkDiagonalization(t *testing.T, fam []String, d *Diagonalization) {
	t.Helper()
	if d.Len() != len(fam) || d.Qubits() != fam[0].Qubits() {
		t.Fatalf("Len, Qubits = %d, %d, want %d, %d", d.Len(), d.Qubits(), len(fam), fam[0].Qubits())
	}
	for i, p := range fam {
		want, ws := refConjugate(d.Circuit(), p)
		if !isZString(want) {
			t.Fatalf("family %v: member %d (%s) maps to %s under %v, not a Z-string", fam, i, p, signed(ws, want), d.Circuit())
		}
		got, s := d.Image(i)
		if !got.Equal(want) || s != ws {
			t.Fatalf("Image(%d) of %s = %s, want %s", i, p, signed(s, got), signed(ws, want))
		}
		if z, zs, ok := d.Diagonal(p); !ok || !z.Equal(want) || zs != ws {
			t.Fatalf("Diagonal(%s) = %s, %v, want %s, true", p, signed(zs, z), ok, signed(ws, want))
		}
		if !d.Diagonalizes(p) {
			t.Fatalf("Diagonalizes(%s) = false, want true", p)
		}
		if !d.Member(i).Equal(p) {
			t.Fatalf("Member(%d) = %s, want %s", i, d.Member(i), p)
		}
	}
}

// TestDiagonalizeMatrix checks Diagonalize against matrices: for random commuting
// families on n ≤ 6 qubits, every member's image is ±(a Z-string), verified by
// explicit matrix conjugation U P U† with gonum dense matrices.
func TestDiagonalizeMatrix(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	reps := 200
	if testing.Short() {
		reps = 20
	}
	for rep := range reps {
		n := 1 + rng.IntN(6)
		var fam []String
		if rep%2 == 0 {
			fam = randomCommutingFamily(rng, n, 1+rng.IntN(n), 1+rng.IntN(8), rep%4 == 0)
		} else {
			fam = greedyCommutingFamily(rng, n, 1+rng.IntN(6))
		}
		d, err := Diagonalize(fam)
		if err != nil {
			t.Fatalf("Diagonalize(%v) error %v", fam, err)
		}
		u := circuitMatrix(d.Circuit())
		for i, p := range fam {
			z, s := d.Image(i)
			if !isZString(z) {
				t.Fatalf("Diagonalize(%v): Image(%d) = %s, not a Z-string", fam, i, signed(s, z))
			}
			if !isSignedPauli(conjugateMatrix(u, p), z, s) {
				t.Fatalf("Diagonalize(%v): matrix U·%s·U† differs from %s for U = %v", fam, p, signed(s, z), d.Circuit())
			}
		}
	}
}

// TestDiagonalizeSampleExpectation checks the meaning of Sample end to end
// on random states: Σ_b |⟨b|Uψ⟩|² · Sample(i, b) = ⟨ψ|P_i|ψ⟩ exactly (MATH.md
// §8), with ⟨ψ|P|ψ⟩ from the explicit matrix. Basis index b = Σ_q bit_q·2^q
// (DEVELOPERS.md, Conventions), so for n ≤ 64 the outcome Bits is the index itself.
// Tolerance 1e-9: sums of 2^n products of unit-norm quantities.
func TestDiagonalizeSampleExpectation(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	reps := 30
	if testing.Short() {
		reps = 6
	}
	for range reps {
		n := 1 + rng.IntN(5)
		fam := randomCommutingFamily(rng, n, 1+rng.IntN(n), 6, true)
		d, err := Diagonalize(fam)
		if err != nil {
			t.Fatal(err)
		}
		dim := 1 << n
		psi := mat.NewVecDense(2*dim, nil) // [Re ψ; Im ψ]
		for i := range 2 * dim {
			psi.SetVec(i, rng.NormFloat64())
		}
		psi.ScaleVec(1/mat.Norm(psi, 2), psi)
		var phi mat.VecDense
		phi.MulVec(circuitMatrix(d.Circuit()), psi)
		for i, p := range fam {
			var pv mat.VecDense
			pv.MulVec(pauliMatrix(p), psi)
			want := mat.Dot(psi, &pv)
			got := 0.0
			for b := range dim {
				prob := phi.AtVec(b)*phi.AtVec(b) + phi.AtVec(dim+b)*phi.AtVec(dim+b)
				got += prob * float64(d.Sample(i, Bits{uint64(b)}))
			}
			if diff := got - want; diff > 1e-9 || diff < -1e-9 {
				t.Fatalf("family %v: Σ_b prob·Sample(%d, b) = %.12f, want ⟨ψ|%s|ψ⟩ = %.12f", fam, i, got, p, want)
			}
		}
	}
}

func TestDiagonalizeReference(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 10))
	for _, n := range []int{1, 3, 8, 63, 64, 65, 100} {
		for rep := range 10 {
			k := 1 + rng.IntN(n)
			fam := randomCommutingFamily(rng, n, k, k+rng.IntN(40), rep%2 == 0)
			d, err := Diagonalize(fam)
			if err != nil {
				t.Fatalf("Diagonalize on %d qubits: %v", n, err)
			}
			checkDiagonalization(t, fam, d)
			if rep%2 == 0 && d.rank() != k {
				t.Errorf("Rank() = %d, want %d generators", d.rank(), k)
			}
			// Gate-count bounds stated at Diagonalize.
			c, r := d.Circuit(), d.rank()
			counts := map[GateKind]int{}
			for _, g := range c.Gates() {
				counts[g.Kind]++
			}
			if counts[GateH] > 2*n || counts[GateSdg] > n || counts[GateS] != 0 || counts[GateCNOT] > r*(n-r) || counts[GateCZ] > r*(r-1)/2 {
				t.Errorf("gate counts %v exceed the bounds for n=%d, r=%d", counts, n, r)
			}
			if got := counts[GateCNOT] + counts[GateCZ]; got != c.TwoQubitGates() {
				t.Errorf("TwoQubitGates() = %d, want %d", c.TwoQubitGates(), got)
			}
		}
	}
}

// TestDiagonalizeExamples pins small families with a known structure.
func TestDiagonalizeExamples(t *testing.T) {
	cases := []struct {
		name    string
		fam     []string
		rank    int
		twoQ    int // -1: not pinned
		gens    []int
		circuit string // "" : not pinned
	}{
		{"Z strings need nothing", []string{"ZIZ", "IZI", "ZZZ"}, 2, 0, []int{0, 1}, ""},
		{"qubit-wise X and Y", []string{"XIY", "XYI", "IYY"}, 2, 0, []int{0, 1}, "H(0) Sdg(1) H(1) Sdg(2) H(2)"},
		{"Bell XX YY ZZ", []string{"XX", "YY", "ZZ"}, 2, -1, []int{0, 1}, ""},
		{"XX ZZ", []string{"XX", "ZZ"}, 2, -1, []int{0, 1}, ""},
		{"identity and repeats", []string{"III", "XXI", "XXI", "III"}, 1, -1, []int{1}, ""},
		{"only identity", []string{"II"}, 0, 0, nil, ""},
		{"mixed local and entangled", []string{"XXZ", "ZZZ", "YYI"}, 2, -1, []int{0, 1}, ""},
	}
	for _, tc := range cases {
		fam := parseAll(tc.fam...)
		d, err := Diagonalize(fam)
		if err != nil {
			t.Errorf("%s: Diagonalize(%v) error %v", tc.name, tc.fam, err)
			continue
		}
		checkDiagonalization(t, fam, d)
		if d.rank() != tc.rank {
			t.Errorf("%s: Rank() = %d, want %d", tc.name, d.rank(), tc.rank)
		}
		if g := d.generators(); !slices.Equal(g, tc.gens) {
			t.Errorf("%s: Generators() = %v, want %v", tc.name, g, tc.gens)
		}
		if tc.twoQ >= 0 && d.Circuit().TwoQubitGates() != tc.twoQ {
			t.Errorf("%s: TwoQubitGates() = %d, want %d (circuit %v)", tc.name, d.Circuit().TwoQubitGates(), tc.twoQ, d.Circuit())
		}
		if tc.circuit != "" && d.Circuit().String() != tc.circuit {
			t.Errorf("%s: circuit %q, want %q", tc.name, d.Circuit(), tc.circuit)
		}
	}
}

// A qubit-wise commuting family needs one-qubit gates only.
func TestDiagonalizeQubitwiseIsLocal(t *testing.T) {
	rng := rand.New(rand.NewPCG(11, 12))
	for range 50 {
		n := 1 + rng.IntN(70)
		s := Complete(randomString(rng, n), Letter(1+rng.IntN(3)))
		var fam []String
		for range 1 + rng.IntN(10) {
			p := Identity(n)
			for q := range n {
				if rng.IntN(2) == 1 {
					p = p.With(q, s.At(q))
				}
			}
			fam = append(fam, p)
		}
		d, err := Diagonalize(fam)
		if err != nil {
			t.Fatal(err)
		}
		checkDiagonalization(t, fam, d)
		if k := d.Circuit().TwoQubitGates(); k != 0 {
			t.Fatalf("qubit-wise family %v: TwoQubitGates() = %d, want 0 (circuit %v)", fam, k, d.Circuit())
		}
		if dep := d.Circuit().Depth(); dep > 2 {
			t.Fatalf("qubit-wise family: Depth() = %d, want ≤ 2", dep)
		}
	}
}

func TestDiagonalizeErrors(t *testing.T) {
	cases := []struct {
		name string
		fam  []String
		want string
		i, j int // -1: not a NonCommutingError
	}{
		{"empty", nil, "pauli: empty family", -1, -1},
		{"widths", parseAll("XX", "XXX"), "pauli: family member 1 (XXX) has 3 qubits, want 2", -1, -1},
		{"first pair", parseAll("XI", "ZI"), "pauli: family members 0 (XI) and 1 (ZI) do not commute", 0, 1},
		{"later pair", parseAll("XI", "IZ", "IX", "ZZ"), "pauli: family members 1 (IZ) and 2 (IX) do not commute", 1, 2},
		{"dependent breaker", parseAll("XX", "ZZ", "YY", "ZI"), "pauli: family members 0 (XX) and 3 (ZI) do not commute", 0, 3},
		{"smallest partner", parseAll("ZZ", "XX", "XI"), "pauli: family members 0 (ZZ) and 2 (XI) do not commute", 0, 2},
	}
	for _, tc := range cases {
		_, err := Diagonalize(tc.fam)
		if err == nil || err.Error() != tc.want {
			t.Errorf("%s: Diagonalize error = %v, want %q", tc.name, err, tc.want)
			continue
		}
		var nc *NonCommutingError
		if tc.i < 0 {
			if errors.Is(err, ErrNotCommuting) {
				t.Errorf("%s: error %v wraps ErrNotCommuting", tc.name, err)
			}
			continue
		}
		if !errors.As(err, &nc) || !errors.Is(err, ErrNotCommuting) || nc.I != tc.i || nc.J != tc.j {
			t.Errorf("%s: error %#v, want NonCommutingError{I: %d, J: %d} wrapping ErrNotCommuting", tc.name, err, tc.i, tc.j)
		}
	}
}

func TestDiagonalizeNonMembers(t *testing.T) {
	d, err := Diagonalize(parseAll("XXI", "ZZI"))
	if err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		p    string
		want bool
	}{{"YYI", true}, {"III", true}, {"XII", false}, {"IZI", false}, {"XXX", false}} {
		p := MustParse(tc.p)
		img, s := refConjugate(d.Circuit(), p)
		if ref := isZString(img); ref != tc.want {
			t.Fatalf("reference: %s maps to %s, Z-string %v, want %v", tc.p, signed(s, img), ref, tc.want)
		}
		if got := d.Diagonalizes(p); got != tc.want {
			t.Errorf("Diagonalizes(%s) = %v, want %v", tc.p, got, tc.want)
		}
		z, zs, ok := d.Diagonal(p)
		if ok != tc.want || (ok && (!z.Equal(img) || zs != s)) {
			t.Errorf("Diagonal(%s) = %s, %v, want %s, %v", tc.p, signed(zs, z), ok, signed(s, img), tc.want)
		}
		if c, cs := d.Conjugate(p); !c.Equal(img) || cs != s {
			t.Errorf("Conjugate(%s) = %s, want %s", tc.p, signed(cs, c), signed(s, img))
		}
	}
}

func TestDiagonalizationSampleAllocs(t *testing.T) {
	rng := rand.New(rand.NewPCG(13, 14))
	fam := randomCommutingFamily(rng, 80, 40, 50, false)
	d, err := Diagonalize(fam)
	if err != nil {
		t.Fatal(err)
	}
	b := NewBits(80)
	b[0], b[1] = rng.Uint64(), rng.Uint64()&(1<<16-1)
	var sink int
	if a := testing.AllocsPerRun(100, func() {
		for i := range fam {
			sink += d.Sample(i, b)
		}
	}); a != 0 {
		t.Errorf("Sample allocates %v times per run, want 0", a)
	}
	_ = sink
	p := randomString(rng, 80)
	if a := testing.AllocsPerRun(100, func() { d.Diagonalizes(p) }); a != 0 {
		t.Errorf("Diagonalizes allocates %v times per run, want 0", a)
	}
}

// FuzzDiagonalize builds a family from the input: generators V Z_q V† for
// a scrambling circuit V conjugated by the letter-level reference, products
// of them, and optionally one raw string that may break commutation. A
// family that commutes (by refCommutes) must be diagonalised, checked
// against refConjugate; one that does not must give a NonCommutingError
// naming the first offending pair.
func FuzzDiagonalize(f *testing.F) {
	f.Add([]byte{4, 9, 1, 0, 1, 4, 0, 1, 2, 2, 3, 5, 6, 7}, false, []byte{})
	f.Add([]byte{7, 200, 3, 1, 2, 4, 5, 6, 1, 2, 3, 4}, true, []byte{1, 2, 3, 0, 1, 2, 3})
	f.Add([]byte{2, 0}, true, []byte{1, 3})
	f.Fuzz(func(t *testing.T, data []byte, addRaw bool, raw []byte) {
		if len(data) < 2 {
			return
		}
		n := 1 + int(data[0])%9
		k := 1 + int(data[1])%n
		data = data[2:]
		v := NewCircuit(n)
		for len(data) >= 3 && data[0]%7 != 6 {
			kind := GateKind(1 + data[0]%5)
			g := Gate{Kind: kind, Q0: int(data[1]) % n}
			if kind.TwoQubit() && n > 1 {
				g.Q1 = (g.Q0 + 1 + int(data[2])%(n-1)) % n
				v.Append(g)
			} else if !kind.TwoQubit() {
				v.Append(g)
			}
			data = data[3:]
		}
		gens := make([]String, k)
		for q := range k {
			gens[q], _ = refConjugate(v, Identity(n).With(q, Z))
		}
		fam := append([]String(nil), gens...)
		for _, m := range data {
			p := Identity(n)
			for j := range k {
				if m>>(j%8)&1 == 1 {
					p, _ = Mul(p, gens[j])
				}
			}
			fam = append(fam, p)
		}
		if addRaw {
			ls := make([]Letter, n)
			for q := range ls {
				if q < len(raw) {
					ls[q] = Letter(raw[q] % 4)
				}
			}
			fam = append(fam[:len(fam)/2], append([]String{FromLetters(ls)}, fam[len(fam)/2:]...)...)
		}
		bi, bj := -1, -1
	search:
		for j := range fam {
			for i := range j {
				if !refCommutes(fam[i], fam[j]) {
					bi, bj = i, j
					break search
				}
			}
		}
		d, err := Diagonalize(fam)
		if bi >= 0 {
			var nc *NonCommutingError
			if !errors.As(err, &nc) || nc.I != bi || nc.J != bj {
				t.Fatalf("Diagonalize(%v) error %v, want members %d and %d do not commute", fam, err, bi, bj)
			}
			if !strings.Contains(err.Error(), fam[bi].String()) {
				t.Fatalf("error %q does not name %s", err, fam[bi])
			}
			return
		}
		if err != nil {
			t.Fatalf("Diagonalize(%v) error %v for a commuting family", fam, err)
		}
		checkDiagonalization(t, fam, d)
		// Arbitrary strings from raw: covered exactly when the reference maps
		// them to ±(a Z-string).
		tab := NewTable(n, 0)
		for off := 0; off < len(raw); off += n {
			ls := make([]Letter, n)
			for q := range ls {
				if off+q < len(raw) {
					ls[q] = Letter(raw[off+q] % 4)
				}
			}
			tab.Append(FromLetters(ls))
		}
		mask := make([]bool, tab.Len())
		d.coverMask(mask, tab)
		for r := range tab.Len() {
			img, s := refConjugate(d.Circuit(), tab.At(r))
			if mask[r] != isZString(img) {
				t.Fatalf("CoverMask row %s = %v, but the circuit maps it to %s", tab.At(r), mask[r], signed(s, img))
			}
		}
	})
}

func TestDiagonalizeZeroQubitsAndInputUnchanged(t *testing.T) {
	d, err := Diagonalize([]String{Identity(0), Identity(0)})
	if err != nil || d.Len() != 2 || d.rank() != 0 || d.Circuit().Len() != 0 {
		t.Fatalf("Diagonalize of two zero-qubit identities = %v, %v; want empty circuit, rank 0", d, err)
	}
	if z, s := d.Image(1); z.Qubits() != 0 || s != 1 || d.Sample(1, nil) != 1 {
		t.Errorf("zero-qubit Image(1) = %s, Sample = %d, want +I, +1", signed(s, z), d.Sample(1, nil))
	}
	rng := rand.New(rand.NewPCG(15, 16))
	fam := randomCommutingFamily(rng, 70, 30, 60, true)
	keep := make([]String, len(fam))
	for i, p := range fam {
		keep[i] = p.Clone()
	}
	if _, err := Diagonalize(fam); err != nil {
		t.Fatal(err)
	}
	for i := range fam {
		if !fam[i].Equal(keep[i]) {
			t.Fatalf("Diagonalize modified member %d: %s, was %s", i, fam[i], keep[i])
		}
	}
}

// Covered and CoverMask against the letter-level reference: row r is covered
// exactly when refConjugate maps it to ±(a Z-string).
func TestDiagonalizationCovered(t *testing.T) {
	rng := rand.New(rand.NewPCG(19, 20))
	for _, n := range []int{1, 4, 9, 64, 70} {
		for range 5 {
			fam := randomCommutingFamily(rng, n, 1+rng.IntN(n), 10, true)
			d, err := Diagonalize(fam)
			if err != nil {
				t.Fatal(err)
			}
			tab := NewTable(n, 0)
			for range 60 {
				switch rng.IntN(3) {
				case 0: // a product of members: always covered
					p := Identity(n)
					for _, m := range fam {
						if rng.IntN(2) == 1 {
							p, _ = Mul(p, m)
						}
					}
					tab.Append(p)
				case 1: // a member with one letter changed: usually not
					p := fam[rng.IntN(len(fam))]
					tab.Append(p.With(rng.IntN(n), Letter(rng.IntN(4))))
				default:
					tab.Append(randomString(rng, n))
				}
			}
			var want []int
			for r := range tab.Len() {
				img, _ := refConjugate(d.Circuit(), tab.At(r))
				if isZString(img) {
					want = append(want, r)
				}
			}
			got := d.Covered(nil, tab)
			if !slices.Equal(got, want) {
				t.Fatalf("Covered = %v, want %v (circuit %v)", got, want, d.Circuit())
			}
			mask := make([]bool, tab.Len())
			d.coverMask(mask, tab)
			k := 0
			for r, m := range mask {
				inWant := k < len(want) && want[k] == r
				if inWant {
					k++
				}
				if m != inWant {
					t.Fatalf("CoverMask[%d] = %v, want %v", r, m, inWant)
				}
				if d.Diagonalizes(tab.At(r)) != inWant {
					t.Fatalf("Diagonalizes(row %d) = %v, want %v", r, !inWant, inWant)
				}
			}
			dst := make([]int, 0, tab.Len())
			if a := testing.AllocsPerRun(20, func() { d.Covered(dst, tab) }); a != 0 {
				t.Errorf("Covered with room in dst allocates %v times, want 0", a)
			}
		}
	}
}
