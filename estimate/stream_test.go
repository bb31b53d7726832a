package estimate

import (
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"

	"github.com/google/go-cmp/cmp"
	"github.com/google/go-cmp/cmp/cmpopts"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/internal/shotsum"
	"github.com/shotplan/shotplan/pauli"
)

// streamCase is a seeded plan with settings of one shot and of many (one
// of more than two batches of 64), shots in random order, and its records.
type streamCase struct {
	h        *hamiltonian.Hamiltonian
	settings []pauli.Setting
	shots    []int
	order    []int // shot k has setting order[k]
	rec      *Records
	outcomes []pauli.Bits
}

func newStreamCase(t testing.TB, qubits, terms int, seed uint64) *streamCase {
	t.Helper()
	h, err := hamiltonian.RandomLocal(qubits, terms, 3, seed)
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(seed, 77))
	c := &streamCase{h: h}
	letters := make([]byte, qubits)
	for k := range 30 {
		for q := range letters {
			letters[q] = "XYZ"[rng.IntN(3)]
		}
		c.settings = append(c.settings, pauli.MustParseSetting(string(letters)))
		n := 1
		switch {
		case k == 0:
			n = 150
		case k < 8:
			n = 2 + rng.IntN(40)
		}
		c.shots = append(c.shots, n)
		for range n {
			c.order = append(c.order, k)
		}
	}
	rng.Shuffle(len(c.order), func(i, j int) { c.order[i], c.order[j] = c.order[j], c.order[i] })
	c.rec = NewRecords(qubits)
	for _, k := range c.order {
		b := pauli.NewBits(qubits)
		for q := range qubits {
			// Biased bits, so that the means are not all near zero.
			if rng.Float64() < 0.3 {
				b[q>>6] |= 1 << (q & 63)
			}
		}
		c.outcomes = append(c.outcomes, b)
		if err := c.rec.Add(c.settings[k], b); err != nil {
			t.Fatal(err)
		}
	}
	return c
}

func (c *streamCase) stream(t testing.TB, opts *Options) *Stream {
	t.Helper()
	s, err := NewStream(c.h, c.settings, c.shots, opts)
	if err != nil {
		t.Fatal(err)
	}
	for n, k := range c.order {
		if err := s.Add(c.settings[k], c.outcomes[n]); err != nil {
			t.Fatal(err)
		}
	}
	return s
}

// TestStreamMatchesGrouped checks the streamed estimate against Grouped
// on the same shots (and Grouped's own shot-by-shot reference, refGrouped,
// which follows MATH.md §2 literally): every number equal to the last bit,
// the standard error included (both take the within-setting variances from
// running sums in shot order).
func TestStreamMatchesGrouped(t *testing.T) {
	for _, tc := range []struct {
		qubits, terms int
		seed          uint64
		exclude       bool
		readout       bool
	}{
		{8, 60, 1, false, false},
		{8, 60, 2, true, false},
		{70, 300, 3, false, false}, // two words per outcome
		{8, 60, 4, false, true},
	} {
		c := newStreamCase(t, tc.qubits, tc.terms, tc.seed)
		opts := &Options{}
		if tc.exclude {
			opts.Exclude = make([]bool, c.h.Len())
			for i := 0; i < len(opts.Exclude); i += 5 {
				opts.Exclude[i] = true
			}
		}
		scale := make([]float64, c.h.Len())
		for i := range scale {
			scale[i] = 1
		}
		if tc.readout {
			opts.Readout = make([]Readout, tc.qubits)
			for q := range opts.Readout {
				opts.Readout[q] = Readout{P01: 0.02, P10: 0.02}
			}
			for i := range scale {
				scale[i] = math.Pow(0.96, -float64(c.h.Pauli(i).Weight()))
			}
		}
		want, err := Grouped(c.h, c.rec, opts)
		if err != nil {
			t.Fatal(err)
		}
		got, err := c.stream(t, opts).Result()
		if err != nil {
			t.Fatal(err)
		}
		// Past the storage cap the lists are found again per batch; the
		// result must not change at all.
		func() {
			defer func(m int) { shotsum.MaxStored = m }(shotsum.MaxStored)
			shotsum.MaxStored = 10
			rescan, err := c.stream(t, opts).Result()
			if err != nil {
				t.Fatal(err)
			}
			if diff := cmp.Diff(got, rescan, cmpopts.EquateNaNs()); diff != "" {
				t.Errorf("case %+v: stream with lists found again differs (-stored +rescanned):\n%s", tc, diff)
			}
		}()
		if got.Energy != want.Energy || got.Bias != want.Bias || got.ReadoutBias != want.ReadoutBias || got.Shots != want.Shots {
			t.Errorf("case %+v: stream energy %v bias %v %v shots %d, Grouped %v %v %v %d", tc, got.Energy, got.Bias, got.ReadoutBias, got.Shots, want.Energy, want.Bias, want.ReadoutBias, want.Shots)
		}
		for i := range want.Means {
			if got.Cover[i] != want.Cover[i] || math.Float64bits(got.Means[i]) != math.Float64bits(want.Means[i]) {
				t.Fatalf("case %+v: term %d: stream mean %v cover %d, Grouped %v %d", tc, i, got.Means[i], got.Cover[i], want.Means[i], want.Cover[i])
			}
		}
		if math.Float64bits(got.StdErr) != math.Float64bits(want.StdErr) {
			t.Errorf("case %+v: stream std error %v, Grouped %v", tc, got.StdErr, want.StdErr)
		}
		ex := opts.Exclude
		if ex == nil {
			ex = make([]bool, c.h.Len())
		}
		e, se, _, _ := refGrouped(c.h, c.rec, ex, scale)
		if math.Abs(e-got.Energy) > 1e-9 || math.Abs(se-got.StdErr) > 1e-9*se {
			t.Errorf("case %+v: stream %v ± %v, shot-by-shot reference %v ± %v", tc, got.Energy, got.StdErr, e, se)
		}
	}
}

// TestStreamRefuses checks the errors: a setting outside the plan, too
// many shots, too few, an outcome of the wrong width, readout mitigation
// with an entangled setting (which Grouped refuses too).
func TestStreamRefuses(t *testing.T) {
	c := newStreamCase(t, 8, 60, 5)
	s, err := NewStream(c.h, c.settings, c.shots, nil)
	if err != nil {
		t.Fatal(err)
	}
	other := pauli.MustParseSetting("XXXXXXXX")
	for _, st := range c.settings {
		if st.Equal(other) {
			t.Fatal("test setting is in the plan")
		}
	}
	b := pauli.NewBits(8)
	if err := s.Add(other, b); err == nil || !strings.Contains(err.Error(), "XXXXXXXX") {
		t.Errorf("setting outside the plan: %v", err)
	}
	if err := s.Add(c.settings[0], pauli.Bits{1 << 9}); err == nil {
		t.Error("stray bit accepted")
	}
	if err := s.Add(c.settings[29], b); err != nil {
		t.Fatal(err)
	}
	if err := s.Add(c.settings[29], b); err == nil || !strings.Contains(err.Error(), "more than 1 shots") {
		t.Errorf("second shot of a one-shot setting: %v", err)
	}
	if _, err := s.Result(); err == nil || !strings.Contains(err.Error(), c.settings[0].String()) {
		t.Errorf("missing shots: %v", err)
	}
	fam, err := pauli.NewFamilySetting([]pauli.String{pauli.MustParse("XX"), pauli.MustParse("ZZ")})
	if err != nil {
		t.Fatal(err)
	}
	h2, _ := hamiltonian.RandomLocal(2, 3, 2, 1)
	if _, err := NewStream(h2, []pauli.Setting{fam}, []int{3}, nil); err != nil {
		t.Errorf("entangled setting: %v", err)
	}
	ro := &Options{Readout: []Readout{{P01: 0.01, P10: 0.01}, {P01: 0.01, P10: 0.01}}}
	if _, err := NewStream(h2, []pauli.Setting{fam}, []int{3}, ro); err == nil || !strings.Contains(err.Error(), "entangled setting XX|ZZ") {
		t.Errorf("readout mitigation with an entangled setting: %v", err)
	}
}

// TestStreamAddAllocs pins the constant memory of a stream: once every
// setting has had a shot, adding shots allocates nothing (counted by
// testing.AllocsPerRun, which is deterministic).
func TestStreamAddAllocs(t *testing.T) {
	h, err := hamiltonian.RandomLocal(20, 200, 4, 9)
	if err != nil {
		t.Fatal(err)
	}
	settings := []pauli.Setting{pauli.MustParseSetting(strings.Repeat("Z", 20)), pauli.MustParseSetting(strings.Repeat("X", 20))}
	s, err := NewStream(h, settings, []int{1 << 30, 1 << 30}, nil)
	if err != nil {
		t.Fatal(err)
	}
	b := pauli.Bits{0x5a5a5}
	for _, st := range settings {
		if err := s.Add(st, b); err != nil {
			t.Fatal(err)
		}
	}
	k := 0
	if n := testing.AllocsPerRun(1000, func() {
		k++
		if err := s.Add(settings[k%2], b); err != nil {
			t.Fatal(err)
		}
	}); n != 0 {
		t.Errorf("Add allocates %v times per shot, want 0", n)
	}
}

// TestParseBitsInto checks the reader's outcome parser, eight characters
// at a time, against pauli.ParseBits on random texts of 1 to 150 bits,
// some with a bad character, which must be reported at its qubit.
func TestParseBitsInto(t *testing.T) {
	rng := rand.New(rand.NewPCG(12, 13))
	for range 2000 {
		n := 1 + rng.IntN(150)
		b := make([]byte, n)
		for q := range b {
			b[q] = "01"[rng.IntN(2)]
		}
		bad := -1
		if rng.IntN(3) == 0 {
			bad = rng.IntN(n)
			b[bad] = "2 x/"[rng.IntN(4)]
		}
		got := pauli.NewBits(n)
		q, ok := parseBitsInto(got, string(b))
		if bad >= 0 {
			if ok || q != bad {
				t.Fatalf("%q: parseBitsInto = qubit %d, %v; want qubit %d, false", b, q, ok, bad)
			}
			continue
		}
		want, err := pauli.ParseBits(string(b))
		if err != nil {
			t.Fatal(err)
		}
		if !ok || !slices.Equal(got, want) {
			t.Fatalf("%q: parseBitsInto = %x, %v; pauli.ParseBits %x", b, got, ok, want)
		}
	}
}

// NewStream refuses a coefficient split that does not fit the plan (a
// term's weights not adding up to one, a setting the plan lacks) and one
// on a plan of more cover pairs than the stream stores.
func TestStreamRefusesSplit(t *testing.T) {
	h, err := hamiltonian.New(2, 0, []hamiltonian.Term{{Pauli: pauli.MustParse("ZI"), Coeff: 1}, {Pauli: pauli.MustParse("IZ"), Coeff: 0.5}})
	if err != nil {
		t.Fatal(err)
	}
	st := pauli.MustParseSetting("ZZ")
	for _, split := range []hamiltonian.Split{
		{{Setting: st, Terms: []int{0}, Weights: []float64{0.5}}},
		{{Setting: pauli.MustParseSetting("ZX"), Terms: []int{0}, Weights: []float64{1}}},
	} {
		if _, err := NewStream(h, []pauli.Setting{st}, []int{4}, &Options{Split: split}); err == nil || !strings.Contains(err.Error(), "split") {
			t.Errorf("NewStream with split %v: error %v, want one about the split", split, err)
		}
	}
	good := hamiltonian.Split{{Setting: st, Terms: []int{0}, Weights: []float64{1}}}
	if _, err := NewStream(h, []pauli.Setting{st}, []int{4}, &Options{Split: good}); err != nil {
		t.Errorf("NewStream with a fitting split: %v", err)
	}
	defer func(m int) { shotsum.MaxStored = m }(shotsum.MaxStored)
	shotsum.MaxStored = 1
	if _, err := NewStream(h, []pauli.Setting{st}, []int{4}, &Options{Split: good}); err == nil || !strings.Contains(err.Error(), "cover pairs") {
		t.Errorf("NewStream with a split past the storage cap: error %v", err)
	}
}

// TestStreamRepeatedOutcomes is TestStreamMatchesGrouped on the case the
// stream's cache of shot values serves: settings covering many terms (a
// 2-local Hamiltonian) whose outcomes mostly repeat, as a state near a
// basis state gives. Equal to Grouped to the last bit, and to the
// shot-by-shot reference of MATH.md §2 within rounding.
func TestStreamRepeatedOutcomes(t *testing.T) {
	const n = 12
	h, err := hamiltonian.RandomLocal(n, 200, 2, 9)
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(9, 10))
	c := &streamCase{h: h, rec: NewRecords(n)}
	letters := make([]byte, n)
	for k := range 6 {
		for q := range letters {
			letters[q] = "XYZ"[rng.IntN(3)]
		}
		c.settings = append(c.settings, pauli.MustParseSetting(string(letters)))
		c.shots = append(c.shots, 1500+100*k)
		for range c.shots[k] {
			c.order = append(c.order, k)
		}
	}
	rng.Shuffle(len(c.order), func(i, j int) { c.order[i], c.order[j] = c.order[j], c.order[i] })
	common := make([]uint64, 6)
	for k := range common {
		common[k] = rng.Uint64() & (1<<n - 1)
	}
	for _, k := range c.order {
		b := pauli.Bits{common[rng.IntN(len(common))]}
		if rng.IntN(10) == 0 {
			b[0] = rng.Uint64() & (1<<n - 1)
		}
		c.outcomes = append(c.outcomes, b)
		if err := c.rec.Add(c.settings[k], b); err != nil {
			t.Fatal(err)
		}
	}
	want, err := Grouped(h, c.rec, nil)
	if err != nil {
		t.Fatal(err)
	}
	got, err := c.stream(t, nil).Result()
	if err != nil {
		t.Fatal(err)
	}
	if diff := cmp.Diff(want, got, bitsEqual); diff != "" {
		t.Errorf("stream differs from Grouped (-Grouped +stream):\n%s", diff)
	}
	scale := make([]float64, h.Len())
	for i := range scale {
		scale[i] = 1
	}
	e, se, _, _ := refGrouped(h, c.rec, make([]bool, h.Len()), scale)
	if math.Abs(e-got.Energy) > 1e-9 || math.Abs(se-got.StdErr) > 1e-9*se {
		t.Errorf("stream %v ± %v, shot-by-shot reference %v ± %v", got.Energy, got.StdErr, e, se)
	}
}
