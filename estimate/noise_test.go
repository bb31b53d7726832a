package estimate

import (
	"math"
	"math/cmplx"
	"testing"

	"gonum.org/v1/gonum/stat/distuv"

	"github.com/shotplan/shotplan/pauli"
)

// density is a density matrix on n qubits, basis index bit q = qubit q.
type density [][]complex128

func pureDensity(psi []complex128) density {
	norm := 0.0
	for _, v := range psi {
		norm += real(v)*real(v) + imag(v)*imag(v)
	}
	rho := make(density, len(psi))
	for i := range rho {
		rho[i] = make([]complex128, len(psi))
		for j := range rho[i] {
			rho[i][j] = psi[i] * cmplx.Conj(psi[j]) / complex(norm, 0)
		}
	}
	return rho
}

// kraus returns Σ_k K_k ρ K_k† with each K_k acting on qubit q alone.
func (rho density) kraus(q int, ks ...[2][2]complex128) density {
	d := len(rho)
	out := make(density, d)
	for i := range out {
		out[i] = make([]complex128, d)
	}
	bit := func(a int) int { return a >> q & 1 }
	for _, k := range ks {
		// (KρK†)_{ij} = Σ_{a,b} K_{i_q a_q} ρ_{ab} conj(K_{j_q b_q}), the
		// other bits of a equal to i's and of b to j's.
		for i := range d {
			for j := range d {
				var s complex128
				for x := range 2 {
					for y := range 2 {
						a := i&^(1<<q) | x<<q
						b := j&^(1<<q) | y<<q
						s += k[bit(i)][x] * rho[a][b] * cmplx.Conj(k[bit(j)][y])
					}
				}
				out[i][j] += s
			}
		}
	}
	return out
}

// Pauli matrices (Nielsen & Chuang §2.1.3).
var (
	matI = [2][2]complex128{{1, 0}, {0, 1}}
	matX = [2][2]complex128{{0, 1}, {1, 0}}
	matY = [2][2]complex128{{0, -1i}, {1i, 0}}
	matZ = [2][2]complex128{{1, 0}, {0, -1}}
)

func scaled(c float64, m [2][2]complex128) [2][2]complex128 {
	r := complex(math.Sqrt(c), 0)
	return [2][2]complex128{{r * m[0][0], r * m[0][1]}, {r * m[1][0], r * m[1][1]}}
}

// depolarise applies the depolarising channel of probability p to qubit q in
// its Kraus form (1−3p/4)ρ + (p/4)(XρX + YρY + ZρZ), which equals
// (1−p)ρ + p·I/2 (Nielsen & Chuang section 8.3.4, from memory; the identity
// I/2 = (ρ + XρX + YρY + ZρZ)/4 holds for every one-qubit ρ of trace 1).
func (rho density) depolarise(q int, p float64) density {
	return rho.kraus(q, scaled(1-3*p/4, matI), scaled(p/4, matX), scaled(p/4, matY), scaled(p/4, matZ))
}

// dephase erases the coherences of qubit q with probability p:
// (1−p)ρ + p(P0ρP0 + P1ρP1), with the projectors P0, P1 as Kraus operators
// (the phase-damping form of Nielsen & Chuang section 8.3.6, from memory).
func (rho density) dephase(q int, p float64) density {
	return rho.kraus(q, scaled(1-p, matI), scaled(p, [2][2]complex128{{1, 0}, {0, 0}}), scaled(p, [2][2]complex128{{0, 0}, {0, 1}}))
}

// measure returns the probability of each outcome of local setting s on
// rho: ⟨e_b|ρ|e_b⟩ with e_b the product of the letters' eigenvectors.
func (rho density) measure(s pauli.Setting) []float64 {
	n := s.Qubits()
	p := make([]float64, len(rho))
	for b := range p {
		e := make([]complex128, len(rho))
		for a := range e {
			v := complex128(1)
			for q := range n {
				v *= eigenvector(s.At(q), uint64(b>>q&1))[a>>q&1]
			}
			e[a] = v
		}
		var s complex128
		for i := range e {
			for j := range e {
				s += cmplx.Conj(e[i]) * rho[i][j] * e[j]
			}
		}
		p[b] = real(s)
	}
	return p
}

// readoutReference pushes a distribution of true outcomes through the
// readout model by enumerating every pattern of errors: each qubit's bit
// flips with P01 (if 0) or P10 (if 1); then each pair (q, q+1) flips
// together with probability pair[q].
func readoutReference(p []float64, n int, ro []Readout, pair []float64) []float64 {
	out := make([]float64, len(p))
	for a, pa := range p {
		for f := range 1 << n { // f: which qubits the independent readout flips
			w := pa
			for q := range n {
				e := ro[q].P01
				if a>>q&1 == 1 {
					e = ro[q].P10
				}
				if f>>q&1 == 1 {
					w *= e
				} else {
					w *= 1 - e
				}
			}
			for g := range 1 << len(pair) { // g: which pairs flip
				v := w
				b := a ^ f
				for q, r := range pair {
					if g>>q&1 == 1 {
						v *= r
						b ^= 3 << q
					} else {
						v *= 1 - r
					}
				}
				out[b] += v
			}
		}
	}
	return out
}

// TestOutcomeProbabilitiesOneQubit checks the noisy outcome distribution of
// one qubit in each basis against the density matrix after the channels,
// computed from their Kraus operators, measured by the Born rule and pushed
// through the readout error by enumeration. Agreement to 1e-12 (rounding of
// a few dozen products).
func TestOutcomeProbabilitiesOneQubit(t *testing.T) {
	for si, psi := range [][]complex128{{1, 0}, {1, 1}, {1, 1i}, randomState(1, 4)} {
		for _, d := range []float64{0, 0.1, 1} {
			for _, f := range []float64{0, 0.3, 1} {
				ro := []Readout{{P01: 0.02, P10: 0.07}}
				sim, err := NewSimulator(psi, 1, &SimulatorOptions{Readout: ro, Depolarizing: []float64{d}, Dephasing: []float64{f}})
				if err != nil {
					t.Fatal(err)
				}
				for _, l := range []string{"X", "Y", "Z"} {
					s := pauli.MustParseSetting(l)
					got, err := sim.OutcomeProbabilities(nil, s)
					if err != nil {
						t.Fatal(err)
					}
					want := readoutReference(pureDensity(psi).dephase(0, f).depolarise(0, d).measure(s), 1, ro, nil)
					for b := range want {
						if math.Abs(got[b]-want[b]) > 1e-12 {
							t.Errorf("state %d, depolarising %v, dephasing %v, %s: P(%d) = %v, want %v", si, d, f, l, b, got[b], want[b])
						}
					}
				}
			}
		}
	}
}

// TestOutcomeProbabilitiesTwoQubits does the same on two qubits of a random
// state with different channels on each qubit and a correlated pair flip.
func TestOutcomeProbabilitiesTwoQubits(t *testing.T) {
	psi := randomState(2, 9)
	ro := []Readout{{P01: 0.01, P10: 0.05}, {P01: 0.03, P10: 0.02}}
	opts := &SimulatorOptions{Readout: ro, Depolarizing: []float64{0.2, 0.05}, Dephasing: []float64{0.1, 0.4}, PairFlip: []float64{0.08}}
	sim, err := NewSimulator(psi, 1, opts)
	if err != nil {
		t.Fatal(err)
	}
	for _, text := range []string{"XX", "XY", "YZ", "ZZ", "ZX", "YY"} {
		s := pauli.MustParseSetting(text)
		got, err := sim.OutcomeProbabilities(nil, s)
		if err != nil {
			t.Fatal(err)
		}
		rho := pureDensity(psi).dephase(0, 0.1).dephase(1, 0.4).depolarise(0, 0.2).depolarise(1, 0.05)
		want := readoutReference(rho.measure(s), 2, ro, opts.PairFlip)
		for b := range want {
			if math.Abs(got[b]-want[b]) > 1e-12 {
				t.Errorf("%s: P(%02b) = %v, want %v", text, b, got[b], want[b])
			}
		}
	}
}

// TestNoisySamplesMatch checks that Run draws from the distribution
// OutcomeProbabilities states: 200 000 shots of three settings of a
// 3-qubit state with every noise model, a chi-square test of each with
// 7 degrees of freedom at level 1e-6 each (false-failure rate ≤ 3·10^-6 per
// run; the chi-square approximation is good with every expected count
// above 1000).
func TestNoisySamplesMatch(t *testing.T) {
	opts := &SimulatorOptions{
		Readout:      []Readout{{P01: 0.01, P10: 0.05}, {P01: 0.03, P10: 0.02}, {P01: 0, P10: 0.1}},
		Depolarizing: []float64{0.2, 0, 0.1},
		Dephasing:    []float64{0.1, 0.4, 0},
		PairFlip:     []float64{0.08, 0.03},
	}
	sim, err := NewSimulator(randomState(3, 2), 11, opts)
	if err != nil {
		t.Fatal(err)
	}
	const m = 200000
	for _, text := range []string{"XYZ", "ZZZ", "YXX"} {
		s := pauli.MustParseSetting(text)
		want, err := sim.OutcomeProbabilities(nil, s)
		if err != nil {
			t.Fatal(err)
		}
		rec := NewRecords(3)
		if err := sim.Run([]pauli.Setting{s}, []int{m}, rec); err != nil {
			t.Fatal(err)
		}
		count := make([]float64, 8)
		for g := range rec.Groups() {
			for j := range rec.GroupLen(g) {
				count[rec.Outcome(g, j)[0]]++
			}
		}
		chi2 := 0.0
		for b, p := range want {
			if p*m < 1000 {
				t.Fatalf("%s: expected count %v of outcome %d too small for the chi-square test", text, p*m, b)
			}
			d := count[b] - p*m
			chi2 += d * d / (p * m)
		}
		if pv := (distuv.ChiSquared{K: 7}).Survival(chi2); pv < 1e-6 {
			t.Errorf("%s: chi-square %.1f, p-value %.2g: samples do not follow OutcomeProbabilities", text, chi2, pv)
		}
	}
}

// TestNoiseRefusals checks bad noise settings.
func TestNoiseRefusals(t *testing.T) {
	psi := randomState(2, 1)
	for _, o := range []SimulatorOptions{
		{Depolarizing: []float64{0.1}},
		{Dephasing: []float64{0.1, 1.5}},
		{PairFlip: []float64{0.1, 0.1}},
		{PairFlip: []float64{math.NaN()}},
		{ReadoutDrift: []Readout{{P01: 2}, {}}},
		{ReadoutDrift: []Readout{{}}},
	} {
		if _, err := NewSimulator(psi, 1, &o); err == nil {
			t.Errorf("%+v: no error", o)
		}
	}
	sim, err := NewSimulator(psi, 1, nil)
	if err != nil {
		t.Fatal(err)
	}
	if _, err := sim.OutcomeProbabilities(nil, pauli.MustParseSetting("XYZ")); err == nil {
		t.Error("OutcomeProbabilities of a 3-qubit setting on 2 qubits: no error")
	}
}

// pauli2 is the 4×4 matrix of the two-qubit Pauli string l0 l1 (qubit 0 is
// bit 0 of the index).
func pauli2(l0, l1 [2][2]complex128) [][]complex128 {
	m := make([][]complex128, 4)
	for i := range m {
		m[i] = make([]complex128, 4)
		for j := range m[i] {
			m[i][j] = l0[i&1][j&1] * l1[i>>1][j>>1]
		}
	}
	return m
}

// TestEntangledChannels checks the channels before an entangled setting,
// the Bell measurement of the family {XX, ZZ}. The reference is the joint
// distribution of the two members' values (x, z) ∈ {±1}², which is
// Tr(ρ' (I + x·XX)/2 (I + z·ZZ)/2) for the state ρ' after the channels' Kraus
// forms (the projectors onto the joint eigenspaces of commuting Paulis;
// common practice); the simulator's outcome probabilities are summed over
// the outcomes whose member values are (x, z). Agreement to 1e-12. Then
// 200 000 shots follow the simulator's distribution by a chi-square test
// with 3 degrees of freedom at level 1e-6 (false-failure rate ≤ 1e-6).
func TestEntangledChannels(t *testing.T) {
	xx, zz := pauli.MustParse("XX"), pauli.MustParse("ZZ")
	bell, err := pauli.NewFamilySetting([]pauli.String{xx, zz})
	if err != nil || bell.IsLocal() {
		t.Fatal("the Bell family XX, ZZ:", err)
	}
	psi := randomState(2, 6)
	opts := &SimulatorOptions{Depolarizing: []float64{0.2, 0.05}, Dephasing: []float64{0.3, 0.1}}
	sim, err := NewSimulator(psi, 8, opts)
	if err != nil {
		t.Fatal(err)
	}
	got, err := sim.OutcomeProbabilities(nil, bell)
	if err != nil {
		t.Fatal(err)
	}
	rho := pureDensity(psi).dephase(0, 0.3).dephase(1, 0.1).depolarise(0, 0.2).depolarise(1, 0.05)
	mXX, mZZ := pauli2(matX, matX), pauli2(matZ, matZ)
	b := make(pauli.Bits, 1)
	const m = 200000
	rec := NewRecords(2)
	if err := sim.Run([]pauli.Setting{bell}, []int{m}, rec); err != nil {
		t.Fatal(err)
	}
	count := make([]float64, 4)
	for g := range rec.Groups() {
		for j := range rec.GroupLen(g) {
			count[rec.Outcome(g, j)[0]]++
		}
	}
	chi2 := 0.0
	for a, p := range got {
		d := count[a] - p*m
		chi2 += d * d / (p * m)
	}
	if pv := (distuv.ChiSquared{K: 3}).Survival(chi2); pv < 1e-6 {
		t.Errorf("chi-square %.1f, p-value %.2g: samples do not follow OutcomeProbabilities", chi2, pv)
	}
	for _, x := range []int{1, -1} {
		for _, z := range []int{1, -1} {
			want := 0.0
			for i := range 4 {
				for j := range 4 {
					// ((I + x·XX)(I + z·ZZ)/4)_{ji}
					var proj complex128
					for k := range 4 {
						var l, r complex128
						if j == k {
							l = 1
						}
						if k == i {
							r = 1
						}
						proj += (l + complex(float64(x), 0)*mXX[j][k]) * (r + complex(float64(z), 0)*mZZ[k][i]) / 4
					}
					want += real(rho[i][j] * proj)
				}
			}
			sum := 0.0
			for a, p := range got {
				b[0] = uint64(a)
				if bell.Sample(xx, b) == x && bell.Sample(zz, b) == z {
					sum += p
				}
			}
			if math.Abs(sum-want) > 1e-12 {
				t.Errorf("P(XX = %d, ZZ = %d) = %v, want %v", x, z, sum, want)
			}
		}
	}
}

// TestReadoutDriftRates checks the rates of each round: base + r·drift,
// clipped, read through OutcomeProbabilities of |0⟩ measured in Z, which
// reads 1 with probability P01 exactly.
func TestReadoutDriftRates(t *testing.T) {
	sim, err := NewSimulator([]complex128{1, 0}, 1, &SimulatorOptions{
		Readout: []Readout{{P01: 0.1}}, ReadoutDrift: []Readout{{P01: 0.25}},
	})
	if err != nil {
		t.Fatal(err)
	}
	z := pauli.MustParseSetting("Z")
	for r, want := range []float64{0.1, 0.35, 0.6, 0.85, 1, 1} {
		p, err := sim.OutcomeProbabilities(nil, z)
		if err != nil {
			t.Fatal(err)
		}
		if sim.Round() != r || math.Abs(p[1]-want) > 1e-15 {
			t.Errorf("round %d (Round %d): P(read 1) = %v, want %v", r, sim.Round(), p[1], want)
		}
		if err := sim.Run([]pauli.Setting{z}, []int{1}, NewRecords(1)); err != nil {
			t.Fatal(err)
		}
	}
}
