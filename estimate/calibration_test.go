package estimate

import (
	"bytes"
	"errors"
	"math"
	"strings"
	"testing"

	"github.com/shotplan/shotplan/pauli"
)

// binomTail returns P(X ≤ k) for X ~ Binomial(n, p), summed term by term
// (independent of gonum's Beta quantiles).
func binomTail(k, n int, p float64) float64 {
	s := 0.0
	for j := 0; j <= k; j++ {
		lg, _ := math.Lgamma(float64(n + 1))
		l1, _ := math.Lgamma(float64(j + 1))
		l2, _ := math.Lgamma(float64(n - j + 1))
		s += math.Exp(lg - l1 - l2 + float64(j)*math.Log(p) + float64(n-j)*math.Log1p(-p))
	}
	return s
}

func TestClopperPearsonZeroSuccesses(t *testing.T) {
	// For k = 0 the upper end solves (1 − p)^n = α/2 (Clopper & Pearson
	// 1934; closed form in every textbook treatment): 1 − (α/2)^{1/n}.
	for _, n := range []int{1, 10, 300, 5000} {
		lo, hi, err := ClopperPearson(0, n, 0.05)
		if err != nil {
			t.Fatal(err)
		}
		want := 1 - math.Pow(0.025, 1/float64(n))
		if lo != 0 || math.Abs(hi-want) > 1e-9 {
			t.Errorf("n=%d: [%v, %v], want [0, %v]", n, lo, hi, want)
		}
		// k = n mirrors it.
		lo, hi, _ = ClopperPearson(n, n, 0.05)
		if hi != 1 || math.Abs(lo-(1-want)) > 1e-9 {
			t.Errorf("k=n=%d: [%v, %v], want [%v, 1]", n, lo, hi, 1-want)
		}
	}
	// n = 10, k = 0: 0.3085 (closed form above, four decimals).
	_, hi, _ := ClopperPearson(0, 10, 0.05)
	if math.Abs(hi-0.3085) > 5e-5 {
		t.Errorf("n=10, k=0: upper %v, want 0.3085", hi)
	}
}

func TestClopperPearsonKnownValue(t *testing.T) {
	// 95% interval for 5 successes in 10: (0.1871, 0.8129), the value
	// tabulated for the exact binomial interval (from memory; four
	// decimals, so the tolerance is half a unit in the last place).
	lo, hi, err := ClopperPearson(5, 10, 0.05)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(lo-0.1871) > 5e-5 || math.Abs(hi-0.8129) > 5e-5 {
		t.Errorf("[%v, %v], want [0.1871, 0.8129]", lo, hi)
	}
}

func TestClopperPearsonDefinition(t *testing.T) {
	// The defining equations (Clopper & Pearson 1934): P(X ≥ k | lo) = α/2
	// and P(X ≤ k | hi) = α/2, checked by summing the binomial law.
	for _, c := range []struct{ k, n int }{{1, 20}, {3, 50}, {17, 400}, {250, 1000}} {
		lo, hi, err := ClopperPearson(c.k, c.n, 0.01)
		if err != nil {
			t.Fatal(err)
		}
		if got := 1 - binomTail(c.k-1, c.n, lo); math.Abs(got-0.005) > 1e-7 {
			t.Errorf("k=%d n=%d: P(X ≥ k | lo=%v) = %v, want 0.005", c.k, c.n, lo, got)
		}
		if got := binomTail(c.k, c.n, hi); math.Abs(got-0.005) > 1e-7 {
			t.Errorf("k=%d n=%d: P(X ≤ k | hi=%v) = %v, want 0.005", c.k, c.n, hi, got)
		}
	}
	if _, _, err := ClopperPearson(3, 2, 0.05); err == nil {
		t.Error("k > n accepted")
	}
	if _, _, err := ClopperPearson(0, 2, 0); err == nil {
		t.Error("α = 0 accepted")
	}
}

// exactMean returns E[Π_{q} f_q(r_q)] over independent flips of the true
// bits v (one per qubit of the mask, all qubits here), enumerating every
// flip pattern.
func exactMean(m *Mitigation, truth []Readout, v []uint64) float64 {
	n := len(v)
	mask := []uint64{1<<n - 1}
	e := 0.0
	for f := 0; f < 1<<n; f++ {
		p := 1.0
		b := pauli.NewBits(n)
		for q := range n {
			flip := f>>q&1 == 1
			r := truth[q].P01
			if v[q] == 1 {
				r = truth[q].P10
			}
			if flip {
				p *= r
			} else {
				p *= 1 - r
			}
			bit := v[q]
			if flip {
				bit ^= 1
			}
			b.Set(q, bit)
		}
		e += p * m.Sample(mask, b)
	}
	return e
}

func TestMitigationUnbiasedAtKnownRates(t *testing.T) {
	// With the true rates as plug-in the mitigated product has the ideal
	// mean Π(−1)^{v_q} exactly (MATH.md §2.1.1), for every true bit-string.
	truth := []Readout{{0.02, 0.07}, {0.05, 0.01}, {0.1, 0.1}}
	m, err := NewMitigation(KnownRates(truth))
	if err != nil {
		t.Fatal(err)
	}
	for v := 0; v < 8; v++ {
		bits := []uint64{uint64(v & 1), uint64(v >> 1 & 1), uint64(v >> 2 & 1)}
		want := 1.0
		for _, b := range bits {
			want *= 1 - 2*float64(b)
		}
		if got := exactMean(m, truth, bits); math.Abs(got-want) > 1e-12 {
			t.Errorf("v=%03b: mean %v, want %v", v, got, want)
		}
	}
	if b := m.Bias([]uint64{7}); b != 0 {
		t.Errorf("bias %v with exact rates", b)
	}
}

func TestMitigationBiasBoundHoldsAndIsTight(t *testing.T) {
	// Every corner of the boxes (the bias is multilinear in the rates, so
	// its extremes are at corners) stays within Bias, and for one qubit the
	// bound is reached: with P01 at its lower end and the qubit in 0 the
	// mean is 1 + 2(P̃01 − P01)/λ̃ = 1 + ε.
	b := []ReadoutBounds{
		{P01: [2]float64{0.01, 0.05}, P10: [2]float64{0.03, 0.06}},
		{P01: [2]float64{0.00, 0.02}, P10: [2]float64{0.05, 0.12}},
		{P01: [2]float64{0.04, 0.04}, P10: [2]float64{0.02, 0.03}},
	}
	m, err := NewMitigation(b)
	if err != nil {
		t.Fatal(err)
	}
	bound := m.Bias([]uint64{7})
	worst := 0.0
	for corner := 0; corner < 64; corner++ {
		truth := make([]Readout, 3)
		for q := range 3 {
			truth[q] = Readout{P01: b[q].P01[corner>>(2*q)&1], P10: b[q].P10[corner>>(2*q+1)&1]}
		}
		for v := 0; v < 8; v++ {
			bits := []uint64{uint64(v & 1), uint64(v >> 1 & 1), uint64(v >> 2 & 1)}
			want := 1.0
			for _, x := range bits {
				want *= 1 - 2*float64(x)
			}
			d := math.Abs(exactMean(m, truth, bits) - want)
			worst = max(worst, d)
			if d > bound+1e-12 {
				t.Fatalf("corner %d v=%03b: deviation %v above the bound %v", corner, v, d, bound)
			}
		}
	}
	if worst < bound/4 {
		t.Errorf("worst corner deviation %v far below the bound %v", worst, bound)
	}
	one, _ := NewMitigation(b[:1])
	lam := 1 - 0.03 - 0.045
	eps := 2 * 0.02 / lam // half-width of P01 (0.02) is the larger one
	if got := exactMean(one, []Readout{{0.01, 0.03}}, []uint64{0}); math.Abs(got-(1+eps)) > 1e-12 {
		t.Errorf("single qubit at the corner: mean %v, want %v", got, 1+eps)
	}
	if got := one.Bias([]uint64{1}); math.Abs(got-eps) > 1e-12 {
		t.Errorf("Bias %v, want %v", got, eps)
	}
}

func TestCalibrationRoundTrip(t *testing.T) {
	rates := []Readout{{0.02, 0.05}, {0, 0.1}, {0.03, 0}}
	var buf bytes.Buffer
	if err := WriteCalibrationShots(&buf, rates, 500, 9); err != nil {
		t.Fatal(err)
	}
	c, err := ReadCalibration(&buf)
	if err != nil {
		t.Fatal(err)
	}
	for q, k := range c.Counts {
		if k.Zero != 500 || k.One != 500 {
			t.Fatalf("qubit %d: %+v", q, k)
		}
		if rates[q].P01 == 0 && k.Flips01 != 0 || rates[q].P10 == 0 && k.Flips10 != 0 {
			t.Errorf("qubit %d: flips at rate 0: %+v", q, k)
		}
	}
	// Simultaneous coverage of the six intervals at δ = 0.01 fails with
	// probability ≤ 0.01 (Bounds' union bound), for this fixed seed.
	bd, err := c.Bounds(0.01)
	if err != nil {
		t.Fatal(err)
	}
	for q, x := range bd {
		if rates[q].P01 < x.P01[0] || rates[q].P01 > x.P01[1] || rates[q].P10 < x.P10[0] || rates[q].P10 > x.P10[1] {
			t.Errorf("qubit %d: rates %+v outside %+v", q, rates[q], x)
		}
	}
}

func TestReadCalibrationErrors(t *testing.T) {
	for _, c := range []struct{ in, want string }{
		{"", "line 1"},
		{"setting,outcome\n", "line 1"},
		{"prepared,outcome\n", "no shots"},
		{"prepared,outcome\n00,01\n00,0\n", "line 3"},
		{"prepared,outcome\n00,01\n000,010\n", "line 3"},
		{"prepared,outcome\n0a,01\n", "line 2"},
		{"prepared,outcome\n01,0x\n", "line 2"},
		{"prepared,outcome\n01,01,1\n", "line 2"},
		{"prepared,outcome\n\n,\n", "line 3"},
		{"prepared,outcome\n" + strings.Repeat("0", 70000) + "\n", "line 2"},
	} {
		_, err := ReadCalibration(strings.NewReader(c.in))
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%.30q: error %v, want one naming %q", c.in, err, c.want)
		}
		if err != nil && !strings.Contains(c.want, "no shots") && !errors.Is(err, ErrFormat) {
			t.Errorf("%.30q: error %v does not match ErrFormat", c.in, err)
		}
	}
}

func FuzzReadCalibration(f *testing.F) {
	f.Add("prepared,outcome\n0000,0100\n1111,1101\n")
	f.Add("prepared,outcome\r\n01,11\r\n\r\n10,10\n")
	f.Add("prepared,outcome\n0,1,\n")
	f.Add("prepared,outcome\n00,00\n10,11\n01,01\n11,10\n")
	f.Fuzz(func(t *testing.T, s string) {
		c, err := ReadCalibration(strings.NewReader(s))
		if err != nil {
			if c != nil {
				t.Fatal("calibration returned with an error")
			}
			return
		}
		for q, k := range c.Counts {
			if k.Flips01 < 0 || k.Flips01 > k.Zero || k.Flips10 < 0 || k.Flips10 > k.One {
				t.Fatalf("qubit %d: impossible counts %+v", q, k)
			}
		}
		if _, err := c.Bounds(0.05); err != nil {
			t.Fatal(err)
		}
		// The same file read with a pair: the pair's table counts every
		// shot once, and the mitigation is made or refused, never a panic.
		cp, err := ReadCalibrationPairs(strings.NewReader(s), [][2]int{{0, 1}})
		if c.Qubits() < 2 {
			if err == nil {
				t.Fatal("a pair on a 1-qubit file: no error")
			}
			return
		}
		if err != nil {
			t.Fatal(err)
		}
		total := 0
		for _, row := range cp.Pairs[0].Counts {
			for _, k := range row {
				total += k
			}
		}
		if total != c.Counts[0].Zero+c.Counts[0].One {
			t.Fatalf("pair table counts %d shots, the file has %d", total, c.Counts[0].Zero+c.Counts[0].One)
		}
		if m, err := cp.Mitigation(0.05); err == nil && m.Half([]uint64{3}) < 1 {
			t.Fatalf("pair mitigation with range %v < 1", m.Half([]uint64{3}))
		}
	})
}
