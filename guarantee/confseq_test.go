package guarantee

import (
	"math"
	"math/rand/v2"
	"testing"
)

// TestBernsteinCSEpochs checks that the interval changes only at the
// epochs t_1 = 2, t_{k+1} = max(t_k+1, ⌈1.2 t_k⌉), and that at check k it
// is the running intersection of mean ± the Maurer–Pontil radius
// (Theorem 4, one-sided, so at δ_k/2 per side) recomputed here from the
// samples.
func TestBernsteinCSEpochs(t *testing.T) {
	cs, err := NewBernsteinCS(-2, 3, 0.1, 1.2, 1.5)
	if err != nil {
		t.Fatal(err)
	}
	epochs := map[int]bool{}
	for e := 2; e <= 300; e = max(e+1, int(math.Ceil(1.2*float64(e)))) {
		epochs[e] = true
	}
	rng := rand.New(rand.NewPCG(1, 1))
	var xs []float64
	l, u := -2.0, 3.0
	k := 0
	sched := StoppingSchedule{Delta: 0.1, P: 1.5}
	for range 300 {
		x := -2 + 5*rng.Float64()*rng.Float64()
		xs = append(xs, x)
		if err := cs.Add(x); err != nil {
			t.Fatal(err)
		}
		if epochs[len(xs)] {
			k++
			n := float64(len(xs))
			mean := 0.0
			for _, v := range xs {
				mean += v
			}
			mean /= n
			v := 0.0
			for _, x := range xs {
				v += (x - mean) * (x - mean)
			}
			v /= n - 1
			lg := math.Log(2 / (sched.At(k) / 2))
			r := math.Sqrt(2*v*lg/n) + 7*5*lg/(3*(n-1))
			l, u = max(l, mean-r), min(u, mean+r)
		}
		lo, hi := cs.Interval()
		if math.Abs(lo-l) > 1e-9 || math.Abs(hi-u) > 1e-9 {
			t.Fatalf("t = %d (%d checks): interval [%v, %v], want [%v, %v]", len(xs), k, lo, hi, l, u)
		}
	}
	if u-l > 2 {
		t.Errorf("interval after 300 samples [%v, %v] barely shrank", l, u)
	}
}
