package hamiltonian

import (
	"fmt"
	"math"
	"math/bits"
	"runtime"
	"slices"
)

// Sector is a set of computational basis states: those with exactly Ones
// ones among the qubits of Mask and exactly Rest ones among the other qubits.
// With the spin orbitals of a molecule interleaved under the Jordan–Wigner
// encoding (qubit 2p is orbital p with spin α, qubit 2p+1 the same orbital
// with spin β), [ElectronSector] gives the sector of N electrons with a given
// 2S_z: Mask holds the α qubits.
//
// A Hamiltonian can be restricted to a sector only if it conserves both
// counts, that is commutes with the number of ones on Mask and on the rest;
// [GroundState] checks this and refuses it otherwise. The counts are
// electron numbers only under the Jordan–Wigner encoding: under the
// Bravyi–Kitaev and parity encodings the occupation of a spin orbital is a
// product of several Z's, so such Hamiltonians are in general refused, and
// a small one that passes the check (H2 on 4 qubits) is restricted to a set
// of states that is not the electron sector. Use the Jordan–Wigner encoding
// for sector energies.
type Sector struct {
	Mask uint64 // the first group of qubits (bit q is qubit q)
	Ones int    // number of ones among the qubits of Mask
	Rest int    // number of ones among the qubits outside Mask
}

// ElectronSector returns the sector of electrons electrons with
// 2S_z = spinTwice (the number of α minus β electrons, NELEC and MS2 of an
// FCIDUMP) on qubits qubits that hold spin orbitals interleaved α, β under the
// Jordan–Wigner encoding. It returns an error if qubits is odd or above 64,
// or the counts are impossible.
func ElectronSector(qubits, electrons, spinTwice int) (Sector, error) {
	if qubits < 0 || qubits > 64 || qubits%2 != 0 {
		return Sector{}, fmt.Errorf("hamiltonian: %d qubits, want an even number up to 64 (two spin orbitals per orbital)", qubits)
	}
	if electrons < 0 || electrons > qubits {
		return Sector{}, fmt.Errorf("hamiltonian: %d electrons on %d spin orbitals", electrons, qubits)
	}
	if (electrons+spinTwice)%2 != 0 || spinTwice > electrons || -spinTwice > electrons {
		return Sector{}, fmt.Errorf("hamiltonian: 2S_z = %d is impossible with %d electrons (want the same parity and |2S_z| ≤ electrons)", spinTwice, electrons)
	}
	na, nb := (electrons+spinTwice)/2, (electrons-spinTwice)/2
	if na > qubits/2 || nb > qubits/2 {
		return Sector{}, fmt.Errorf("hamiltonian: %d α and %d β electrons do not fit in %d orbitals", na, nb, qubits/2)
	}
	var mask uint64
	for q := 0; q < qubits; q += 2 {
		mask |= 1 << q
	}
	return Sector{Mask: mask, Ones: na, Rest: nb}, nil
}

// String describes the sector.
func (s Sector) String() string {
	return fmt.Sprintf("%d ones on qubits %#x, %d on the others", s.Ones, s.Mask, s.Rest)
}

// check returns an error unless s is a non-empty sector of n qubits.
func (s Sector) check(n int) error {
	all := widthMask(n)
	if s.Mask&^all != 0 {
		return fmt.Errorf("hamiltonian: sector mask %#x has qubits beyond %d", s.Mask, n)
	}
	a, b := bits.OnesCount64(s.Mask), n-bits.OnesCount64(s.Mask)
	if s.Ones < 0 || s.Ones > a || s.Rest < 0 || s.Rest > b {
		return fmt.Errorf("hamiltonian: sector (%v) is empty on %d qubits", s, n)
	}
	return nil
}

// Dim returns the number of basis states of s on n qubits,
// C(|Mask|, Ones)·C(n−|Mask|, Rest), or 0 if that overflows an int64 or s
// does not fit n qubits.
func (s Sector) Dim(n int) int64 {
	if n < 0 || n > 64 || s.check(n) != nil {
		return 0
	}
	a := bits.OnesCount64(s.Mask)
	x, y := binom(a, s.Ones), binom(n-a, s.Rest)
	if x == 0 || y == 0 || x > math.MaxInt64/y {
		return 0
	}
	return x * y
}

func widthMask(n int) uint64 {
	if n >= 64 {
		return ^uint64(0)
	}
	return 1<<n - 1
}

// binom returns C(n, k) for 0 ≤ k ≤ n ≤ 64, or 0 if it overflows an int64.
func binom(n, k int) int64 {
	if k < 0 || k > n {
		return 0
	}
	k = min(k, n-k)
	var c uint64 = 1
	for i := 1; i <= k; i++ {
		// c·(n−k+i)/i stays an integer at every step.
		hi, lo := bits.Mul64(c, uint64(n-k+i))
		if hi >= uint64(i) {
			return 0
		}
		c, _ = bits.Div64(hi, lo, uint64(i))
	}
	if c > math.MaxInt64 {
		return 0
	}
	return int64(c)
}

// subsets returns the subsets of the qubits of mask with k elements, as
// bit masks, in the order of their combinatorial rank (see rankIn).
func subsets(mask uint64, k int) []uint64 {
	pos := positions(mask)
	m := len(pos)
	out := make([]uint64, 0, binom(m, k))
	if k == 0 {
		return append(out, 0)
	}
	// Gosper's hack steps through the k-subsets of m bits in increasing
	// numeric order, which is the order of the combinatorial number system.
	c := uint64(1)<<k - 1
	for m == 64 || c < 1<<m {
		out = append(out, deposit(c, pos))
		u := c & -c
		v := c + u
		if v == 0 {
			break
		}
		c = v + (v^c)/u>>2
	}
	return out
}

func positions(mask uint64) []int {
	var pos []int
	for m := mask; m != 0; m &= m - 1 {
		pos = append(pos, bits.TrailingZeros64(m))
	}
	return pos
}

// deposit places bit i of c on qubit pos[i].
func deposit(c uint64, pos []int) uint64 {
	var s uint64
	for i, p := range pos {
		s |= (c >> i & 1) << p
	}
	return s
}

// rankIn returns the rank of the subset s of the qubits of mask in the
// combinatorial number system: with the elements of s at positions
// c_1 < c_2 < … < c_k within mask, Σ_i C(c_i, i). It numbers the k-subsets
// 0 … C(|mask|, k)−1 in the order of subsets.
func rankIn(s, mask uint64) int {
	r, i := 0, 1
	for t := s; t != 0; t &= t - 1 {
		q := bits.TrailingZeros64(t)
		c := bits.OnesCount64(mask & (1<<q - 1))
		r += int(binom(c, i))
		i++
	}
	return r
}

// sectorLink is one row string of a half of the sector with its partner
// string under a flip: row index i, partner index j, the pattern of the row
// string on the flipped qubits (bit k is the k-th flipped qubit of the half),
// and the row string itself.
type sectorLink struct {
	i, j int32
	pat  uint32
	s    uint64
}

// sectorGroup is one x mask of the Hamiltonian inside a sector. For a row
// basis state a = sA|sB with partner a⊕x, the matrix element is
//
//	Σ_k (−1)^{|zout_k ∧ a|} tab_k[pattern of a on x],
//
// the pattern taking the flipped qubits of the first half as its high bits.
// For wide x masks (more than maxPatternBits qubits) each term is its own
// entry with its whole z mask and a table of one value.
type sectorGroup struct {
	la, lb    int // indices of the links of the two halves
	wb        uint
	pmask     uint32
	zout      []uint64
	tab       [][]complex128
	realValue bool // every table entry is real

	// sep is the separable form of a real group, nil otherwise: for a row
	// string sA of the first half with pattern pa on its flipped qubits,
	// the matrix element at β-link e is Σ_t α_t(sA)·vals[e·T+t] with
	// α_t(sA) = Σ_{(z, c) ∈ alpha[t]} c·(−1)^{|z∧sA|}.
	sep []*sepPattern // indexed by pa; nil entries for patterns never met
}

// sepPattern is the separable form of a group for one pattern of the first
// half: T terms, each an α-side sum and a column of β-side values.
type sepPattern struct {
	alpha [][]sepCoef
	vals  []float64 // len(links of the second half) × T, row-major
}

type sepCoef struct {
	z uint64
	c float64
}

const maxPatternBits = 8

// sectorOp is the restriction of a Hamiltonian to a sector, applied without
// building a matrix. Index iA·len(strB)+iB is the basis state strA[iA]|strB[iB].
type sectorOp struct {
	n          int
	sec        Sector
	strA, strB []uint64
	diag       []float64
	links      [][]sectorLink // per distinct half-flip: A halves first
	li, lj     [][]int32      // the row and partner indices of links, for tight loops
	groups     []sectorGroup
}

// sectorBytes estimates the memory of newSectorOp for h in sec without
// building it: strings, diagonal, links and tables.
func sectorBytes(op *operator, sec Sector) int64 {
	n := op.n
	a := bits.OnesCount64(sec.Mask)
	dA, dB := binom(a, sec.Ones), binom(n-a, sec.Rest)
	total := 8*(dA+dB) + 8*dA*dB
	seenA, seenB := map[uint64]bool{}, map[uint64]bool{}
	linkCount := func(x, mask uint64, k int) int64 {
		f := bits.OnesCount64(x & mask)
		if f%2 != 0 {
			return 0
		}
		return binom(f, f/2) * binom(bits.OnesCount64(mask)-f, k-f/2)
	}
	rest := widthMask(n) &^ sec.Mask
	for _, g := range op.groups {
		xa, xb := g.x&sec.Mask, g.x&rest
		if !seenA[xa] {
			seenA[xa] = true
			total += 24 * linkCount(xa, sec.Mask, sec.Ones)
		}
		if !seenB[xb] {
			seenB[xb] = true
			total += 24 * linkCount(xb, rest, sec.Rest)
		}
		w := bits.OnesCount64(g.x)
		if w <= maxPatternBits {
			total += int64(len(g.zr)+len(g.zi)) * (8 + 16<<w)
			// The separable form: at most one column per term for each
			// pattern of the first half.
			wa := bits.OnesCount64(xa)
			total += binom(wa, wa/2) * int64(len(g.zr)+len(g.zi)) * (8*linkCount(xb, rest, sec.Rest) + 16)
		} else {
			total += int64(len(g.zr)+len(g.zi)) * 24
		}
	}
	return total
}

// leak returns the Pauli 1-norm of the commutator [H, N_mask] with N_mask the
// number of ones on the qubits of mask. For a state ψ of the sector, the part
// of Hψ outside the sector is at most this in norm (the sector count differs
// by at least one there, and (N−c)Hψ = [N, H]ψ).
func (op *operator) leak(mask uint64) float64 {
	// [H, N] = −Σ_P h_P Σ_{q ∈ x_P ∩ mask} P·Z_q, and P·Z_q = ∓i P' with
	// P' = (x, z ⊕ e_q), the sign from z_q (MATH.md §7 phase convention).
	sum := map[[2]uint64]float64{}
	add := func(x, z uint64, c float64) {
		for m := x & mask; m != 0; m &= m - 1 {
			q := m & -m
			if z&q != 0 {
				sum[[2]uint64{x, z ^ q}] += c
			} else {
				sum[[2]uint64{x, z ^ q}] -= c
			}
		}
	}
	for _, g := range op.groups {
		for t, z := range g.zr {
			add(g.x, z, math.Abs(g.cr[t])*sign(g.cr[t], g.x, z))
		}
		for t, z := range g.zi {
			add(g.x, z, math.Abs(g.ci[t])*sign(g.ci[t], g.x, z))
		}
	}
	keys := make([][2]uint64, 0, len(sum))
	for k := range sum {
		keys = append(keys, k)
	}
	// Sum in a fixed order so that the value does not depend on map order.
	slices.SortFunc(keys, func(a, b [2]uint64) int {
		if a[0] != b[0] {
			return cmpU(a[0], b[0])
		}
		return cmpU(a[1], b[1])
	})
	total := 0.0
	for _, k := range keys {
		total += math.Abs(sum[k])
	}
	return total
}

func cmpU(a, b uint64) int {
	switch {
	case a < b:
		return -1
	case a > b:
		return 1
	}
	return 0
}

// sign recovers the sign of the original coefficient h_P from the stored
// factor (−i)^{|x∧z|}·h_P (real part or imaginary part as stored).
func sign(stored float64, x, z uint64) float64 {
	s := 1.0
	if stored < 0 {
		s = -1
	}
	switch bits.OnesCount64(x&z) & 3 {
	case 1: // stored −c
		return -s
	case 2: // stored −c
		return -s
	}
	return s
}

// newSectorOp restricts op to sec. It assumes op conserves both counts.
func newSectorOp(op *operator, sec Sector) *sectorOp {
	n := op.n
	rest := widthMask(n) &^ sec.Mask
	so := &sectorOp{n: n, sec: sec, strA: subsets(sec.Mask, sec.Ones), strB: subsets(rest, sec.Rest)}
	dB := len(so.strB)
	so.diag = make([]float64, len(so.strA)*dB)
	parallel(len(so.diag), func(lo, hi int) {
		for i := lo; i < hi; i++ {
			so.diag[i] = op.diagAt(so.strA[i/dB] | so.strB[i%dB])
		}
	})
	linkIndex := map[[2]uint64]int{}
	linksOf := func(half int, x, mask uint64, k int, strs []uint64) int {
		key := [2]uint64{uint64(half), x}
		if l, ok := linkIndex[key]; ok {
			return l
		}
		var ls []sectorLink
		f := bits.OnesCount64(x)
		if f%2 == 0 {
			pos := positions(x)
			for i, s := range strs {
				if bits.OnesCount64(s&x) != f/2 {
					continue
				}
				var pat uint32
				if f <= maxPatternBits {
					for b, p := range pos {
						pat |= uint32(s>>p&1) << b
					}
				}
				ls = append(ls, sectorLink{i: int32(i), j: int32(rankIn(s^x, mask)), pat: pat, s: s})
			}
		}
		linkIndex[key] = len(so.links)
		so.links = append(so.links, ls)
		li, lj := make([]int32, len(ls)), make([]int32, len(ls))
		for e, l := range ls {
			li[e], lj[e] = l.i, l.j
		}
		so.li, so.lj = append(so.li, li), append(so.lj, lj)
		return len(so.links) - 1
	}
	for _, g := range op.groups {
		xa, xb := g.x&sec.Mask, g.x&rest
		sg := sectorGroup{
			la: linksOf(0, xa, sec.Mask, sec.Ones, so.strA),
			lb: linksOf(1, xb, rest, sec.Rest, so.strB),
		}
		if len(so.links[sg.la]) == 0 || len(so.links[sg.lb]) == 0 {
			continue
		}
		w := bits.OnesCount64(g.x)
		wb := bits.OnesCount64(xb)
		sg.wb = uint(wb)
		type term struct {
			z uint64
			c complex128
		}
		var terms []term
		for t, z := range g.zr {
			terms = append(terms, term{z, complex(g.cr[t], 0)})
		}
		for t, z := range g.zi {
			terms = append(terms, term{z, complex(0, g.ci[t])})
		}
		if w > maxPatternBits {
			for _, t := range terms {
				sg.zout = append(sg.zout, t.z)
				sg.tab = append(sg.tab, []complex128{t.c})
			}
		} else {
			sg.pmask = 1<<w - 1
			// Pattern bit k < wb is the k-th qubit of xb, bit wb+k the k-th of xa.
			pos := append(positions(xb), positions(xa)...)
			index := map[uint64]int{}
			for _, t := range terms {
				zo := t.z &^ g.x
				k, ok := index[zo]
				if !ok {
					k = len(sg.zout)
					index[zo] = k
					sg.zout = append(sg.zout, zo)
					sg.tab = append(sg.tab, make([]complex128, 1<<w))
				}
				var zp uint32
				for b, p := range pos {
					zp |= uint32(t.z>>p&1) << b
				}
				for p := range sg.tab[k] {
					if bits.OnesCount32(zp&uint32(p))&1 == 1 {
						sg.tab[k][p] -= t.c
					} else {
						sg.tab[k][p] += t.c
					}
				}
			}
		}
		sg.realValue = true
		for _, tab := range sg.tab {
			for _, v := range tab {
				if imag(v) != 0 {
					sg.realValue = false
				}
			}
		}
		if sg.realValue && w <= maxPatternBits {
			so.separate(&sg, g.x&sec.Mask)
		}
		so.groups = append(so.groups, sg)
	}
	return so
}

// separate builds the separable form of a real group g whose first-half
// flip is xa: the parity of zout on the second half and the table entry
// become the β-side values, the parity on the first half the α-side sums.
// Terms whose second-half parts agree share one column when the table does
// not depend on the second half's pattern (wb = 0).
func (so *sectorOp) separate(g *sectorGroup, xa uint64) {
	la, lb := so.links[g.la], so.links[g.lb]
	wa := bits.OnesCount64(xa)
	maskB := widthMask(so.n) &^ so.sec.Mask
	g.sep = make([]*sepPattern, 1<<wa)
	for _, ea := range la {
		pa := ea.pat
		if g.sep[pa] != nil {
			continue
		}
		sp := &sepPattern{}
		type col struct {
			zb  uint64
			row uint32 // table row used when wb > 0
			k   int
		}
		var cols []col
		index := map[uint64]int{}
		for k, z := range g.zout {
			zb := z & maskB
			if g.wb == 0 {
				if t, ok := index[zb]; ok {
					sp.alpha[t] = append(sp.alpha[t], sepCoef{z &^ maskB, real(g.tab[k][pa])})
					continue
				}
				index[zb] = len(cols)
			}
			cols = append(cols, col{zb, pa << g.wb, k})
			c := 1.0
			if g.wb == 0 {
				c = real(g.tab[k][pa])
			}
			sp.alpha = append(sp.alpha, []sepCoef{{z &^ maskB, c}})
		}
		T := len(cols)
		sp.vals = make([]float64, len(lb)*T)
		for e, eb := range lb {
			for t, c := range cols {
				v := 1.0
				if g.wb > 0 {
					v = real(g.tab[c.k][(c.row|eb.pat)&g.pmask])
				}
				sp.vals[e*T+t] = flip(v, c.zb&eb.s)
			}
		}
		g.sep[pa] = sp
	}
}

// apply sets dst = H·src on the sector. Rows are split among goroutines by
// blocks of the first half; every amplitude sums the groups in the same
// order whatever the split, so the result does not depend on GOMAXPROCS.
func (so *sectorOp) apply(dst, src []complex128) {
	dB := len(so.strB)
	rows := len(so.strA)
	parallelRows(rows, dB, func(lo, hi int) {
		for i := lo * dB; i < hi*dB; i++ {
			dst[i] = complex(so.diag[i], 0) * src[i]
		}
		var alpha []float64
		for gi := range so.groups {
			g := &so.groups[gi]
			la, lb := so.links[g.la], so.links[g.lb]
			li, lj := so.li[g.lb], so.lj[g.lb]
			// Links are sorted by row index i.
			from, _ := slices.BinarySearchFunc(la, int32(lo), func(l sectorLink, v int32) int { return int(l.i - v) })
			for _, ea := range la[from:] {
				if int(ea.i) >= hi {
					break
				}
				out := dst[int(ea.i)*dB : int(ea.i+1)*dB]
				in := src[int(ea.j)*dB : int(ea.j+1)*dB]
				if g.sep != nil {
					sp := g.sep[ea.pat]
					alpha = alpha[:0]
					for _, terms := range sp.alpha {
						a := 0.0
						for _, t := range terms {
							a += flip(t.c, t.z&ea.s)
						}
						alpha = append(alpha, a)
					}
					if len(alpha) == 1 {
						a := alpha[0]
						vals := sp.vals[:len(li)]
						for e, i := range li {
							v := a * vals[e]
							s := in[lj[e]]
							out[i] += complex(v*real(s), v*imag(s))
						}
						continue
					}
					T := len(alpha)
					for e, i := range li {
						row := sp.vals[e*T : e*T+T]
						v := 0.0
						for t, a := range alpha {
							v += a * row[t]
						}
						s := in[lj[e]]
						out[i] += complex(v*real(s), v*imag(s))
					}
					continue
				}
				base := ea.pat << g.wb
				for _, eb := range lb {
					a := ea.s | eb.s
					p := (base | eb.pat) & g.pmask
					var c complex128
					for k, z := range g.zout {
						v := g.tab[k][p]
						if bits.OnesCount64(z&a)&1 == 1 {
							v = -v
						}
						c += v
					}
					out[eb.i] += c * in[eb.j]
				}
			}
		}
	})
}

// parallelRows calls f on contiguous row ranges covering [0, rows) on up to
// GOMAXPROCS goroutines; a row is width amplitudes.
func parallelRows(rows, width int, f func(lo, hi int)) {
	workers := runtime.GOMAXPROCS(0)
	if rows*width < parallelMin || workers < 2 || rows < 2 {
		f(0, rows)
		return
	}
	// More blocks than workers balance rows with unequal work.
	blocks := min(rows, 8*workers)
	per := (rows + blocks - 1) / blocks
	next := make(chan int, blocks)
	for lo := 0; lo < rows; lo += per {
		next <- lo
	}
	close(next)
	done := make(chan struct{})
	for range workers {
		go func() {
			for lo := range next {
				f(lo, min(lo+per, rows))
			}
			done <- struct{}{}
		}()
	}
	for range workers {
		<-done
	}
}

// expand returns the 2^n amplitudes of the sector vector v.
func (so *sectorOp) expand(v []complex128) []complex128 {
	full := make([]complex128, 1<<so.n)
	dB := len(so.strB)
	for i, c := range v {
		full[so.strA[i/dB]|so.strB[i%dB]] = c
	}
	return full
}
