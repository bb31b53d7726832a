package estimate

import (
	"bytes"
	"math"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// pairConfusion is a 4×4 readout model of one pair, A[r][s] = P(read r |
// true s), s, r = bit(A) + 2·bit(B): independent flips of 10% plus both
// bits flipping together, in multiples of 0.1 so that counts of 10·k shots
// reproduce it exactly. Its columns sum to 1.
var pairConfusion = [4][4]float64{
	{0.7, 0.1, 0.1, 0.1},
	{0.1, 0.6, 0.1, 0.1},
	{0.1, 0.1, 0.7, 0.1},
	{0.1, 0.2, 0.1, 0.7},
}

// TestPairMitigationExact checks the pair model against the matrix
// inversion it stands for (common practice: the read distribution is
// A·q for the ideal distribution q, so inverting A recovers q). The
// calibration holds A exactly (1000 shots per prepared state), the records
// hold A·q exactly for q in multiples of 0.1 (1000 shots), so the
// mitigated estimates of Z0, Z1 and Z0Z1 must equal the sums ±q(s) by hand.
// The per-qubit model, which cannot describe the joint flips, must miss
// ⟨Z0Z1⟩ on the same data.
func TestPairMitigationExact(t *testing.T) {
	q := [4]float64{0.4, 0.3, 0.2, 0.1}
	cal, err := NewPairCalibration(2, [][2]int{{0, 1}})
	if err != nil {
		t.Fatal(err)
	}
	plain := NewCalibration(2)
	preps, err := PairCalibrationPreparations(2, [][2]int{{0, 1}})
	if err != nil {
		t.Fatal(err)
	}
	bitsOf := func(v int) pauli.Bits {
		b := pauli.NewBits(2)
		b.Set(0, uint64(v&1))
		b.Set(1, uint64(v>>1))
		return b
	}
	seen := map[int]bool{}
	for _, p := range preps {
		s := int(p.Get(0) + 2*p.Get(1))
		seen[s] = true
		for r := range 4 {
			for range int(math.Round(1000 * pairConfusion[r][s])) {
				cal.Add(p, bitsOf(r))
				plain.Add(p, bitsOf(r))
			}
		}
	}
	if len(seen) != 4 {
		t.Fatalf("preparations %v do not put the pair in its 4 states", preps)
	}
	setting, _ := pauli.ParseSetting("ZZ")
	rec := NewRecords(2)
	for r := range 4 {
		pr := 0.0
		for s := range 4 {
			pr += pairConfusion[r][s] * q[s]
		}
		for range int(math.Round(1000 * pr)) {
			if err := rec.Add(setting, bitsOf(r)); err != nil {
				t.Fatal(err)
			}
		}
	}
	m, err := cal.Mitigation(0.05)
	if err != nil {
		t.Fatal(err)
	}
	if got := m.Pairs(); len(got) != 1 || got[0] != [2]int{0, 1} {
		t.Errorf("Pairs() = %v", got)
	}
	want := map[string]float64{
		"ZI": q[0] - q[1] + q[2] - q[3],
		"IZ": q[0] + q[1] - q[2] - q[3],
		"ZZ": q[0] - q[1] - q[2] + q[3],
	}
	mp, err := plain.Mitigation(0.05)
	if err != nil {
		t.Fatal(err)
	}
	for term, w := range want {
		h, err := hamiltonian.New(2, 0, []hamiltonian.Term{{Coeff: 1, Pauli: pauli.MustParse(term)}})
		if err != nil {
			t.Fatal(err)
		}
		res, err := Mitigated(h, rec, m, nil)
		if err != nil {
			t.Fatal(err)
		}
		if math.Abs(res.Energy-w) > 1e-12 {
			t.Errorf("%s: pair-mitigated %v, want %v", term, res.Energy, w)
		}
		if !(res.ReadoutBias > 0) {
			t.Errorf("%s: readout bias %v, want > 0 from the calibration's intervals", term, res.ReadoutBias)
		}
		if term == "ZZ" {
			p, err := Mitigated(h, rec, mp, nil)
			if err != nil {
				t.Fatal(err)
			}
			if math.Abs(p.Energy-w) <= p.ReadoutBias {
				t.Errorf("ZZ: per-qubit mitigation %v within its bias bound %v of %v; this model should not fit it", p.Energy, p.ReadoutBias, w)
			}
		}
	}
}

// TestPairBiasBoundHolds checks the bias bound of MATH.md §2.1.5 on true
// matrices inside the calibration's box: for pairConfusion measured with
// 10000 shots per state, any matrix whose cells lie in their intervals and
// whose columns sum to 1 gives each subset's value a conditional mean
// within eps of the ideal ±1. The true matrices are built independently:
// from the plug-in, mass moves between two cells of a column, each moved
// to the end of its interval allowed by the other.
func TestPairBiasBoundHolds(t *testing.T) {
	cal, _ := NewPairCalibration(2, [][2]int{{0, 1}})
	for s := range 4 {
		for r := range 4 {
			cal.Pairs[0].Counts[s][r] = int(math.Round(10000 * pairConfusion[r][s]))
		}
	}
	const delta = 0.05
	m, err := cal.Mitigation(delta)
	if err != nil {
		t.Fatal(err)
	}
	blk := m.pairs[0]
	alpha := delta / 16
	for s := range 4 {
		for r1 := range 4 {
			for r2 := range 4 {
				if r1 == r2 {
					continue
				}
				// Move mass d from cell r2 to r1 of column s.
				k1, k2 := cal.Pairs[0].Counts[s][r1], cal.Pairs[0].Counts[s][r2]
				_, hi1, _ := ClopperPearson(k1, 10000, alpha)
				lo2, _, _ := ClopperPearson(k2, 10000, alpha)
				d := min(hi1-pairConfusion[r1][s], pairConfusion[r2][s]-lo2)
				col := pairConfusion
				col[r1][s] += d
				col[r2][s] -= d
				for S := 1; S < 4; S++ {
					mean := 0.0
					for r := range 4 {
						mean += col[r][s] * blk.g[S][r]
					}
					ideal := 1.0
					if (s&S)&1 != 0 {
						ideal = -ideal
					}
					if (s&S)&2 != 0 {
						ideal = -ideal
					}
					if e := math.Abs(mean - ideal); e > blk.eps[S]*(1+1e-12) {
						t.Errorf("s=%d S=%d: |E − χ| = %v above the bound %v", s, S, e, blk.eps[S])
					}
				}
			}
		}
	}
}

// TestPairCalibrationInput checks the pairs' refusals and the file reader.
func TestPairCalibrationInput(t *testing.T) {
	for _, pairs := range [][][2]int{{{0, 0}}, {{0, 4}}, {{0, 1}, {1, 2}}, {{-1, 2}}} {
		if _, err := NewPairCalibration(4, pairs); err == nil {
			t.Errorf("pairs %v: no error", pairs)
		}
	}
	file := "prepared,outcome\n0000,0000\n1010,1010\n0101,0101\n1111,1111\n"
	c, err := ReadCalibrationPairs(strings.NewReader(file), [][2]int{{0, 1}, {2, 3}})
	if err != nil {
		t.Fatal(err)
	}
	if c.Pairs[1].Counts[1][1] != 1 || c.Pairs[0].Counts[2][2] != 1 || c.Counts[0].Zero != 2 {
		t.Errorf("counts %+v", c)
	}
	if _, err := ReadCalibrationPairs(strings.NewReader(file), [][2]int{{0, 5}}); err == nil || !strings.Contains(err.Error(), "line 2") {
		t.Errorf("pair outside the width: %v", err)
	}
	// A pair never prepared in one of its states has no model.
	c, _ = ReadCalibrationPairs(strings.NewReader("prepared,outcome\n00,00\n11,11\n"), [][2]int{{0, 1}})
	if _, err := c.Mitigation(0.05); err == nil || !strings.Contains(err.Error(), "never prepared") {
		t.Errorf("missing pair state: %v", err)
	}
	var buf bytes.Buffer
	buf.WriteString("prepared,outcome\n")
	for range 10 {
		for _, p := range []string{"00", "10", "01", "11"} {
			buf.WriteString(p + ",00\n") // reads 00 whatever was prepared
		}
	}
	c, _ = ReadCalibrationPairs(&buf, [][2]int{{0, 1}})
	if _, err := c.Mitigation(0.05); err == nil || !strings.Contains(err.Error(), "singular") {
		t.Errorf("singular pair model: %v", err)
	}
}
