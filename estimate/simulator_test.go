package estimate

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"

	"github.com/shotplan/shotplan/pauli"
)

// randomState returns a seeded random state on n qubits (complex Gaussian
// amplitudes, not normalised).
func randomState(n int, seed uint64) []complex128 {
	rng := rand.New(rand.NewPCG(seed, 3))
	psi := make([]complex128, 1<<n)
	for a := range psi {
		psi[a] = complex(rng.NormFloat64(), rng.NormFloat64())
	}
	return psi
}

// eigenvector returns the eigenvector of letter l with eigenvalue (−1)^bit,
// from the Pauli matrices (Nielsen & Chuang §2.1.3; common practice):
// X: (|0⟩ ± |1⟩)/√2, Y: (|0⟩ ± i|1⟩)/√2, Z: |0⟩, |1⟩.
func eigenvector(l pauli.Letter, bit uint64) [2]complex128 {
	r := complex(1/math.Sqrt2, 0)
	sign := complex(1-2*float64(bit), 0)
	switch l {
	case pauli.X:
		return [2]complex128{r, sign * r}
	case pauli.Y:
		return [2]complex128{r, sign * r * 1i}
	}
	var v [2]complex128
	v[bit] = 1
	return v
}

// bornReference returns p(b) = |⟨e_b|ψ⟩|²/⟨ψ|ψ⟩ for every outcome b of
// setting s, with e_b the product of the letters' eigenvectors: the Born
// rule written out term by term, independent of the simulator's gates.
func bornReference(psi []complex128, s pauli.Setting) []float64 {
	n := s.Qubits()
	p := make([]float64, len(psi))
	norm := 0.0
	for _, v := range psi {
		norm += real(v)*real(v) + imag(v)*imag(v)
	}
	for b := range psi {
		var amp complex128
		for a, v := range psi {
			e := complex(1, 0)
			for q := range n {
				e *= cmplx.Conj(eigenvector(s.At(q), uint64(b)>>q&1)[a>>q&1])
			}
			amp += e * v
		}
		p[b] = (real(amp)*real(amp) + imag(amp)*imag(amp)) / norm
	}
	return p
}

// TestSimulatorBorn checks outcome frequencies against the Born rule with
// a χ² goodness-of-fit test (seeded). Under a correct simulator the p-value
// is uniform, so the threshold 0.001 fails a correct simulator with
// probability 0.1% per case.
func TestSimulatorBorn(t *testing.T) {
	const shots = 20000
	for _, tc := range []struct {
		name    string
		setting string
		seed    uint64
	}{
		{"XYZ", "XYZ", 1},
		{"YYX", "YYX", 2},
		{"ZZZ", "ZZZ", 3},
	} {
		psi := randomState(3, tc.seed)
		s := pauli.MustParseSetting(tc.setting)
		want := bornReference(psi, s)
		sim, err := NewSimulator(psi, tc.seed, nil)
		if err != nil {
			t.Fatal(err)
		}
		got := sim.Probabilities(nil, s)
		for b := range want {
			if math.Abs(got[b]-want[b]) > 1e-12 {
				t.Errorf("%s: Probabilities[%03b] = %v, want %v (tolerance 1e-12)", tc.name, b, got[b], want[b])
			}
		}
		rec := NewRecords(3)
		if err := sim.Run([]pauli.Setting{s}, []int{shots}, rec); err != nil {
			t.Fatal(err)
		}
		count := make([]float64, 8)
		for _, sh := range rec.Shots() {
			count[sh.Outcome[0]]++
		}
		chi2 := 0.0
		for b, p := range want {
			e := shots * p
			chi2 += (count[b] - e) * (count[b] - e) / e
		}
		pv := (distuv.ChiSquared{K: 7}).Survival(chi2)
		t.Logf("%s: χ² = %.2f, 7 degrees of freedom, p = %.3f", tc.name, chi2, pv)
		if pv < 0.001 {
			t.Errorf("%s: χ² = %.2f with 7 degrees of freedom, p = %.2g < 0.001; counts %v, Born %v", tc.name, chi2, pv, count, want)
		}
	}
}

// TestEigenStateDeterministic checks that every product eigenstate gives
// its outcome with certainty in its own setting.
func TestEigenStateDeterministic(t *testing.T) {
	letters := []pauli.Letter{pauli.X, pauli.Y, pauli.Z}
	for k := range 27 {
		s, _ := pauli.NewSetting(pauli.FromLetters([]pauli.Letter{letters[k%3], letters[k/3%3], letters[k/9]}))
		for b := range uint64(8) {
			psi, err := EigenState(s, pauli.Bits{b})
			if err != nil {
				t.Fatal(err)
			}
			sim, _ := NewSimulator(psi, b, nil)
			rec := NewRecords(3)
			sim.Run([]pauli.Setting{s}, []int{5}, rec)
			for j := range 5 {
				if got := rec.Outcome(0, j)[0]; got != b {
					t.Fatalf("EigenState(%s, %03b) measured in %s gave %03b", s, b, s, got)
				}
			}
		}
	}
}

// TestSimulatorReadout checks flip frequencies: with P01 = 0.1 on qubit 0
// in state |0⟩ and P10 = 0.25 on qubit 1 in state |1⟩, the flip counts are
// binomial; the check allows 4.5 standard deviations (false-failure rate
// below 1e-5).
func TestSimulatorReadout(t *testing.T) {
	psi, _ := BasisState(2, pauli.Bits{0b10})
	sim, err := NewSimulator(psi, 9, &SimulatorOptions{Readout: []Readout{{P01: 0.1, P10: 0.5}, {P01: 0.5, P10: 0.25}}})
	if err != nil {
		t.Fatal(err)
	}
	const shots = 40000
	rec := NewRecords(2)
	sim.Run([]pauli.Setting{pauli.MustParseSetting("ZZ")}, []int{shots}, rec)
	var flip0, flip1 float64
	for j := range shots {
		b := rec.Outcome(0, j)
		flip0 += float64(b.Get(0))
		flip1 += float64(1 - b.Get(1))
	}
	for _, c := range []struct {
		name   string
		flips  float64
		p      float64
		qubits int
	}{{"qubit 0 read 1", flip0, 0.1, 0}, {"qubit 1 read 0", flip1, 0.25, 1}} {
		sd := math.Sqrt(shots * c.p * (1 - c.p))
		if math.Abs(c.flips-shots*c.p) > 4.5*sd {
			t.Errorf("%s: %v of %d shots, want %v ± %.0f", c.name, c.flips, shots, shots*c.p, 4.5*sd)
		}
	}
}

func TestSimulatorSeed(t *testing.T) {
	psi := randomState(4, 5)
	settings := []pauli.Setting{pauli.MustParseSetting("XYZX"), pauli.MustParseSetting("ZZZZ"), pauli.MustParseSetting("XYZX")}
	shots := []int{30, 20, 10}
	run := func(seed uint64, cache int) *Records {
		sim, err := NewSimulator(psi, seed, &SimulatorOptions{CacheBytes: cache})
		if err != nil {
			t.Fatal(err)
		}
		rec := NewRecords(4)
		if err := sim.Run(settings, shots, rec); err != nil {
			t.Fatal(err)
		}
		if err := sim.Run(settings[:1], shots[:1], rec); err != nil {
			t.Fatal(err)
		}
		return rec
	}
	a, b := run(42, 0), run(42, -1)
	if !a.Equal(b) {
		t.Errorf("the same seed gave different outcomes (with and without the cache)")
	}
	if a.Len() != 90 || a.Groups() != 2 {
		t.Errorf("Len, Groups = %d, %d, want 90, 2", a.Len(), a.Groups())
	}
	want := []string{"XYZX", "ZZZZ", "XYZX", "XYZX"}
	runs := []int{30, 20, 10, 30}
	k := 0
	for r, n := range runs {
		for range n {
			g, _ := a.Shot(k)
			if got := a.Setting(g).String(); got != want[r] {
				t.Fatalf("shot %d has setting %s, want %s", k, got, want[r])
			}
			k++
		}
	}
	if run(43, 0).Equal(a) {
		t.Errorf("seeds 42 and 43 gave identical outcomes")
	}
}

func TestSimulatorErrors(t *testing.T) {
	if _, err := NewSimulator(make([]complex128, 3), 1, nil); err == nil {
		t.Errorf("NewSimulator(3 amplitudes) succeeded")
	}
	if _, err := NewSimulator(make([]complex128, 4), 1, nil); err == nil {
		t.Errorf("NewSimulator(zero vector) succeeded")
	}
	if _, err := NewSimulator([]complex128{1, complex(math.NaN(), 0)}, 1, nil); err == nil {
		t.Errorf("NewSimulator(NaN amplitude) succeeded")
	}
	if _, err := NewSimulator([]complex128{1, 0}, 1, &SimulatorOptions{Readout: []Readout{{P01: 1.5}}}); err == nil {
		t.Errorf("NewSimulator(P01 = 1.5) succeeded")
	}
	sim, _ := NewSimulator([]complex128{1, 0, 0, 0}, 1, nil)
	rec := NewRecords(2)
	zz, zzz := pauli.MustParseSetting("ZZ"), pauli.MustParseSetting("ZZZ")
	tests := []struct {
		name     string
		settings []pauli.Setting
		shots    []int
		rec      *Records
	}{
		{"lengths differ", []pauli.Setting{zz, zz}, []int{1}, rec},
		{"setting width", []pauli.Setting{zz, zzz}, []int{1, 1}, rec},
		{"negative count", []pauli.Setting{zz, zz}, []int{1, -1}, rec},
		{"records width", []pauli.Setting{zz}, []int{1}, NewRecords(3)},
		{"nil records", []pauli.Setting{zz}, []int{1}, nil},
		// Counts whose total overflows an int, or exceeds what one call can
		// hold, must be refused rather than panic in make.
		{"total overflows", []pauli.Setting{zz, zz}, []int{math.MaxInt, math.MaxInt}, rec},
		{"total too large", []pauli.Setting{zz}, []int{math.MaxInt}, rec},
	}
	for _, tc := range tests {
		if err := sim.Run(tc.settings, tc.shots, tc.rec); err == nil {
			t.Errorf("%s: Run succeeded", tc.name)
		}
	}
	if rec.Len() != 0 {
		t.Errorf("failed Runs appended %d shots", rec.Len())
	}
}

func TestProductState(t *testing.T) {
	r := complex(1/math.Sqrt2, 0)
	psi, err := ProductState([][2]complex128{{1, 0}, {r, r}, {0, 1}})
	if err != nil {
		t.Fatal(err)
	}
	// |0⟩ ⊗ |+⟩ ⊗ |1⟩: amplitude r on indices 0b100 and 0b110 (qubit 0 least
	// significant).
	for a, v := range psi {
		want := complex(0, 0)
		if a == 0b100 || a == 0b110 {
			want = r
		}
		if cmplx.Abs(v-want) > 1e-15 {
			t.Errorf("ProductState amplitude %03b = %v, want %v", a, v, want)
		}
	}
}

// TestSimulatorSplitBorn checks the sampler that rotates the high qubits
// once and the low qubits per shot, for every split point, against the
// Born rule with the same χ² test as TestSimulatorBorn (p < 0.001 fails,
// a 0.1% false-failure rate per case).
func TestSimulatorSplitBorn(t *testing.T) {
	const shots = 8000
	psi := randomState(4, 31)
	s := pauli.MustParseSetting("YXZX")
	want := bornReference(psi, s)
	sim, err := NewSimulator(psi, 5, nil)
	if err != nil {
		t.Fatal(err)
	}
	for low := 0; low <= 4; low++ {
		sim.rotateHigh(s, low)
		count := make([]float64, 16)
		for range shots {
			count[sim.drawSplit(s, low)]++
		}
		chi2 := 0.0
		for b, p := range want {
			e := shots * p
			chi2 += (count[b] - e) * (count[b] - e) / e
		}
		pv := (distuv.ChiSquared{K: 15}).Survival(chi2)
		t.Logf("%d low qubits: χ² = %.2f, 15 degrees of freedom, p = %.3f", low, chi2, pv)
		if pv < 0.001 {
			t.Errorf("%d low qubits: χ² = %.2f, p = %.2g < 0.001; counts %v, Born %v", low, chi2, pv, count, want)
		}
	}
}

// TestSimulatorManySettings runs one shot in each of 3000 random settings
// on a product eigenstate of XYZXYZXYZX, so that Run splits the qubits;
// every qubit whose basis matches the state's must read its eigenvalue's
// bit, and the others must read 0 and 1 about equally often.
func TestSimulatorManySettings(t *testing.T) {
	const n, count = 10, 3000
	s0 := pauli.MustParseSetting("XYZXYZXYZX")
	b0 := mustBits(t, "1101001110")
	psi, err := EigenState(s0, b0)
	if err != nil {
		t.Fatal(err)
	}
	sim, err := NewSimulator(psi, 77, nil)
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(8, 9))
	settings := make([]pauli.Setting, count)
	shots := make([]int, count)
	keys := make([]uint64, count)
	for k := range settings {
		settings[k] = randomSetting(rng, n)
		shots[k] = 1
		keys[k] = letterKey(settings[k])
	}
	if h := sim.split(keys, count); h == n {
		t.Fatalf("split chose the full distribution for %d one-shot settings", count)
	}
	rec := NewRecords(n)
	if err := sim.Run(settings, shots, rec); err != nil {
		t.Fatal(err)
	}
	var random, ones float64
	for k, sh := range rec.Shots() {
		if !sh.Setting.Equal(settings[k]) {
			t.Fatalf("shot %d has setting %s, want %s", k, sh.Setting, settings[k])
		}
		for q := range n {
			if sh.Setting.At(q) == s0.At(q) {
				if sh.Outcome.Get(q) != b0.Get(q) {
					t.Fatalf("shot %d (%s): qubit %d read %d, want %d", k, sh.Setting, q, sh.Outcome.Get(q), b0.Get(q))
				}
				continue
			}
			random++
			ones += float64(sh.Outcome.Get(q))
		}
	}
	// Binomial(random, 1/2): 4.5 standard deviations, false-failure rate
	// below 1e-5.
	if sd := math.Sqrt(random / 4); math.Abs(ones-random/2) > 4.5*sd {
		t.Errorf("unmatched qubits read 1 in %v of %v cases, want %v ± %.0f", ones, random, random/2, 4.5*sd)
	}
}
