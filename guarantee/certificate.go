package guarantee

import (
	"cmp"
	"fmt"
	"math"
	"slices"
	"strings"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// Options adjusts a certificate. A nil *Options means the defaults.
type Options struct {
	// Top is the number of largest contributors listed in
	// [Certificate].Top. Zero means 10; a negative value lists none.
	Top int
	// Enumerate is the largest number of candidate terms for which the
	// optimal truncation is found by trying every subset (2^Enumerate
	// evaluations); more candidates go to a branch and bound, which may
	// stop at its work limit (see [Truncation].Exact). Zero means 16;
	// values above 30 count as 30.
	Enumerate int

	// searchSteps bounds the work of the branch and bound, in elementary
	// steps. Zero means 20 000 000; a negative value means none (tests use
	// it to cut the search off at once).
	searchSteps int
}

func (o *Options) top() int {
	switch {
	case o == nil || o.Top == 0:
		return 10
	case o.Top < 0:
		return 0
	}
	return o.Top
}

func (o *Options) searchBudget() int {
	switch {
	case o == nil || o.searchSteps == 0:
		return 20_000_000
	case o.searchSteps < 0:
		return 0
	}
	return o.searchSteps
}

func (o *Options) enumerate() int {
	if o == nil || o.Enumerate <= 0 {
		return 16
	}
	return min(o.Enumerate, 30)
}

// Certificate is an a-priori guarantee for a fixed plan (MATH.md §3): with
// probability at least 1 − Delta over the shots, the grouped estimator of
// MATH.md §2 errs by at most Bound, for every state. It depends only on the
// Hamiltonian, the settings and their shot counts — not on the order of the
// shots, and not on the data.
type Certificate struct {
	// Delta is the failure probability the bounds are stated at.
	Delta float64
	// Shots is the total number of shots; Settings the number of distinct
	// settings among them.
	Shots, Settings int
	// Cover[i] is N_i, the number of shots whose setting covers term i.
	Cover []int

	// Variance is V = Σ_n (Σ_{i◁Q_n} |h_i|/N_i)² of MATH.md §3.1, computed
	// exactly (summing over distinct settings with their multiplicities).
	Variance float64
	// Radius is ε_stat = sqrt(2 V ln(2/δ)), the shot-wise Hoeffding radius
	// of MATH.md §3.1.
	Radius float64
	// ScaledOneNorm is ‖h'‖_1 = Σ_{i: N_i>0} |h_i|/sqrt(N_i) (MATH.md §3.2), and
	// RelaxedRadius is ScaledOneNorm · sqrt(2 ln(2/δ)) ≥ Radius, its relaxation.
	ScaledOneNorm, RelaxedRadius float64
	// Uncovered is the number of terms with N_i = 0 and Bias their bound
	// B_0 = Σ_{i: N_i=0} |h_i|: the estimator omits them.
	Uncovered int
	Bias      float64
	// Bound is Radius + Bias: the guaranteed error at confidence 1 − Delta.
	Bound float64

	// Share[i] is term i's part of Bound; the shares add up to Bound (up
	// to rounding). A covered term's share is Radius · v_i / V with
	//
	//	v_i = a_i Σ_{n: i◁Q_n} s_{Q_n},  a_i = |h_i|/N_i,  s_Q = Σ_{k◁Q} a_k,
	//
	// so that Σ_i v_i = V; it equals |h_i| ∂Radius/∂|h_i|, the Euler
	// allocation of a bound that is homogeneous of degree one in the
	// coefficients. An uncovered term's share is |h_i|, its bias.
	Share []float64
	// RelaxedShare[i] is term i's part of RelaxedRadius + Bias under the
	// separable relaxation: sqrt(2 ln(2/δ)) |h_i|/sqrt(N_i) for a covered
	// term, |h_i| for an uncovered one.
	RelaxedShare []float64
	// Top lists the terms with the largest Share, largest first (ties by
	// term index).
	Top []Contribution

	// Threshold is the δ-only truncation rule of MATH.md §3.3: drop every
	// term with N_i < 2 ln(2/δ) (with a coefficient split, every term with
	// 2 ln(2/δ) r_i² > 1; see CertifyPlan). Optimal is the dropped set that
	// minimises bias plus exact radius, or the best one its search found
	// (see [Truncation].Exact). Both are evaluated with the exact V of the
	// kept terms; the certificate above is for dropping nothing.
	Threshold, Optimal Truncation
}

// Contribution is one term's part of a certificate's bound.
type Contribution struct {
	Term         int
	Pauli        pauli.String
	Coeff        float64
	Cover        int     // N_i
	Share        float64 // as Certificate.Share
	RelaxedShare float64 // as Certificate.RelaxedShare
}

// Certify returns the certificate of MATH.md §3 at confidence 1 − δ for the
// plan that measures settings[k] for shots[k] shots. A setting may appear
// more than once; entries with zero shots are ignored. It returns an error
// for δ outside [MinDelta, 1), lengths that disagree, a setting of the wrong width or
// a negative shot count, naming the setting.
//
// The cost is one coverage scan of h's terms per distinct setting.
func Certify(h *hamiltonian.Hamiltonian, settings []pauli.Setting, shots []int, delta float64, opts *Options) (*Certificate, error) {
	if !validDelta(delta) {
		return nil, fmt.Errorf("guarantee: confidence parameter δ = %v is not in [1e-300, 1) (MinDelta ≤ δ < 1)", delta)
	}
	c, err := newCoverage(h, settings, shots)
	if err != nil {
		return nil, err
	}
	return certify(c, delta, opts), nil
}

// CertifyPlan is [Certify] for a plan made by any allocator. It returns an
// error if the plan's Cover counts disagree with h (a plan made for another
// Hamiltonian), naming the first term that differs, or its Split does not
// fit ([hamiltonian.Split.Check]). Without a split the result is identical
// to Certify(h, p.Settings, p.Shots, δ, opts). With one (MATH.md §2.5) the
// certificate is that of the split estimator: Variance is
// V = Σ_g (Σ_i |h_i| α_{ig})²/m_g, ScaledOneNorm is Σ_i |h_i| r_i with
// r_i² = Σ_g α_{ig}²/m_g (which reduces to 1/N_i without a split), the
// shares are Radius·v_i/V with v_i = |h_i| Σ_g s_g α_{ig}, s_g the group's
// Σ_i |h_i| α_{ig}/m_g, and the truncations are the threshold rule with
// 1/r_i² in place of N_i and, as Optimal, the search of MATH.md §3.3 over
// the terms that rule drops, with dropping term i removing |h_i| α_{ig}
// from every group g that covers it: exact by enumeration or branch and
// bound, or else the best set found with Lower a lower bound on Bias +
// Radius over every dropped set, as without a split.
func CertifyPlan(h *hamiltonian.Hamiltonian, p *allocate.Plan, delta float64, opts *Options) (*Certificate, error) {
	if p == nil {
		return nil, fmt.Errorf("guarantee: nil plan")
	}
	if !validDelta(delta) {
		return nil, fmt.Errorf("guarantee: confidence parameter δ = %v is not in [1e-300, 1) (MinDelta ≤ δ < 1)", delta)
	}
	if h != nil && p.Qubits != h.Qubits() {
		return nil, fmt.Errorf("guarantee: plan has %d qubits, Hamiltonian has %d", p.Qubits, h.Qubits())
	}
	c, err := newCoverage(h, p.Settings, p.Shots)
	if err != nil {
		return nil, err
	}
	if p.Cover != nil {
		if len(p.Cover) != len(c.cover) {
			return nil, fmt.Errorf("guarantee: plan has cover counts for %d terms, Hamiltonian has %d terms", len(p.Cover), len(c.cover))
		}
		for i, n := range c.cover {
			if p.Cover[i] != n {
				return nil, fmt.Errorf("guarantee: term %d (%s): plan says %d covering shots, its settings give %d", i, h.Pauli(i), p.Cover[i], n)
			}
		}
	}
	if err := c.setSplit(p.Split); err != nil {
		return nil, err
	}
	if c.sp != nil {
		return certifySplit(c, delta, opts), nil
	}
	return certify(c, delta, opts), nil
}

func certify(c *coverage, delta float64, opts *Options) *Certificate {
	h := c.h
	l := math.Log(2 / delta)
	sq := math.Sqrt(2 * l)
	a := c.weights()
	s := c.loads(a, nil)
	v := c.variance(s)

	cert := &Certificate{
		Delta:    delta,
		Shots:    c.shots,
		Settings: len(c.settings),
		Cover:    c.cover,
		Variance: v,
		Radius:   math.Sqrt(2 * v * l),
	}
	// load[i] = Σ_{n: i◁Q_n} s_{Q_n} = Σ_{Q∋i} m_Q s_Q.
	load := c.termLoads(s)
	cert.Share = make([]float64, h.Len())
	cert.RelaxedShare = make([]float64, h.Len())
	for i, n := range c.cover {
		abs := math.Abs(h.Coeff(i))
		if n == 0 {
			cert.Uncovered++
			cert.Bias += abs
			cert.Share[i] = abs
			cert.RelaxedShare[i] = abs
			continue
		}
		r := abs / math.Sqrt(float64(n))
		cert.ScaledOneNorm += r
		cert.RelaxedShare[i] = sq * r
		if v > 0 {
			cert.Share[i] = cert.Radius * a[i] * load[i] / v
		}
	}
	cert.RelaxedRadius = cert.ScaledOneNorm * sq
	cert.Bound = cert.Radius + cert.Bias

	cert.Top = topContributions(c, cert.Share, cert.RelaxedShare, min(opts.top(), h.Len()))
	cert.Threshold = thresholdTruncation(c, a, s, delta)
	eval := func(drop []bool, method string) Truncation { return evaluate(c, a, s, drop, delta, method) }
	cert.Optimal = optimalTruncation(c, s, cert.Threshold.Drop, "0 < N_i < 2 ln(2/δ)", eval, delta, opts.enumerate(), opts.searchBudget())
	return cert
}

// topContributions lists the k terms with the largest share, largest first
// (ties by term index); nil when k is 0.
func topContributions(c *coverage, share, relaxed []float64, k int) []Contribution {
	if k <= 0 {
		return nil
	}
	h := c.h
	order := make([]int, h.Len())
	for i := range order {
		order[i] = i
	}
	slices.SortFunc(order, func(x, y int) int {
		if d := cmp.Compare(share[y], share[x]); d != 0 {
			return d
		}
		return cmp.Compare(x, y)
	})
	var top []Contribution
	for _, i := range order[:k] {
		top = append(top, Contribution{
			Term: i, Pauli: h.Pauli(i), Coeff: h.Coeff(i), Cover: c.cover[i],
			Share: share[i], RelaxedShare: relaxed[i],
		})
	}
	return top
}

// String summarises the certificate in a few lines.
func (c *Certificate) String() string {
	var b strings.Builder
	fmt.Fprintf(&b, "confidence %.4g: certified bound ±%.6g (radius %.6g + bias %.6g of %d uncovered terms)\n",
		1-c.Delta, c.Bound, c.Radius, c.Bias, c.Uncovered)
	fmt.Fprintf(&b, "%d shots, %d distinct settings; variance V = %.6g; relaxed bound %.6g\n",
		c.Shots, c.Settings, c.Variance, c.RelaxedRadius+c.Bias)
	fmt.Fprintf(&b, "threshold truncation: drop %d terms, bound %.6g; optimal: drop %d terms, bound %.6g\n",
		c.Threshold.Dropped, c.Threshold.Bound, c.Optimal.Dropped, c.Optimal.Bound)
	for _, t := range c.Top {
		fmt.Fprintf(&b, "  term %d %s coeff %.6g: %d shots, share %.6g\n", t.Term, t.Pauli, t.Coeff, t.Cover, t.Share)
	}
	return b.String()
}
