package estimate

import (
	"cmp"
	"fmt"
	"math"
	"math/bits"
	"math/rand/v2"
	"runtime"
	"slices"
	"sync"
	"sync/atomic"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/internal/statevec"
	"github.com/shotplan/shotplan/internal/symplectic"
	"github.com/shotplan/shotplan/pauli"
)

// Readout is the readout error of one qubit: each read bit flips
// independently of every other qubit and shot.
type Readout struct {
	P01 float64 // probability that a qubit in state 0 (eigenvalue +1) reads 1
	P10 float64 // probability that a qubit in state 1 (eigenvalue −1) reads 0
}

// checkReadout validates per-qubit readout errors for n qubits.
func checkReadout(r []Readout, n int, what string) error {
	if r == nil {
		return nil
	}
	if len(r) != n {
		return fmt.Errorf("estimate: %w: %s: %d readout entries for %d qubits", ErrFormat, what, len(r), n)
	}
	for q, e := range r {
		if !(e.P01 >= 0 && e.P01 <= 1 && e.P10 >= 0 && e.P10 <= 1) {
			return fmt.Errorf("estimate: %w: %s: qubit %d: flip probabilities (%v, %v) outside [0, 1]", ErrFormat, what, q, e.P01, e.P10)
		}
	}
	return nil
}

// SimulatorOptions tunes a [Simulator]. A nil *SimulatorOptions means the
// defaults.
type SimulatorOptions struct {
	// Readout holds the readout error of every qubit, Readout[q] for
	// qubit q. Nil means perfect readout; otherwise the length must be the
	// qubit count.
	Readout []Readout

	// Depolarizing[q] is the probability p that qubit q is replaced by the
	// maximally mixed state just before it is measured, ρ → (1−p)ρ + p·I/2:
	// the outcome of every basis then flips with probability p/2. It models
	// gate and idle noise that a test wants to see bias every term alike.
	// Nil means none; otherwise one entry per qubit.
	Depolarizing []float64

	// Dephasing[q] is the probability p that qubit q loses its coherence
	// just before it is measured, ρ → (1−p)ρ + p·(diagonal of ρ): X and Y
	// outcomes flip with probability p/2, Z outcomes are untouched. It
	// models T2 decay, which biases only terms with X or Y letters. Nil means
	// none; otherwise one entry per qubit.
	//
	// Both channels act on the state before the measurement's basis change;
	// for an entangled setting a Pauli error is carried through its
	// circuit, so it may flip several outcome bits.
	Dephasing []float64

	// PairFlip[q] is the probability that the read bits of neighbouring
	// qubits q and q+1 both flip together (crosstalk in the readout), drawn
	// independently for every pair and shot after the independent Readout
	// flips. It models correlated readout error, which per-qubit
	// calibration does not describe. Nil means none; otherwise n−1 entries.
	PairFlip []float64

	// ReadoutDrift makes the readout rates drift slowly across rounds: in
	// the r-th call of Run that records shots (r = 0, 1, ...), qubit q's
	// rates are Readout[q] + r·ReadoutDrift[q] (Readout nil counts as zero),
	// each clipped to [0, 1]. It models a device whose calibration ages
	// during a long run, the case a stationarity test across rounds must
	// catch. Nil means none; otherwise one entry per qubit, each in [−1, 1].
	ReadoutDrift []Readout

	// CacheBytes bounds the memory kept for the outcome distributions of
	// settings already measured, so a setting that returns in a later Run
	// is not recomputed (within one Run every distinct setting is computed
	// once regardless). A distribution takes 8·2^n bytes. Zero means
	// 256 MiB; a negative value turns the cache off.
	CacheBytes int
}

// defaultCacheBytes is the cache size when SimulatorOptions.CacheBytes is
// zero.
const defaultCacheBytes = 256 << 20

// Simulator is a [Device] that measures copies of a pure state held as a
// state vector. For each distinct setting it rotates every qubit into its
// basis (X: Hadamard; Y: S† then Hadamard; Z: nothing), which costs
// O(n·2^n) — or, for an entangled setting, applies its Clifford circuit to
// the amplitudes, O(2^n) a gate — forms the cumulative Born distribution, and draws outcomes by
// binary search on it, O(n) a shot. Readout errors, if set, flip the drawn
// bits afterwards. All randomness comes from the seed: the same seed, state,
// settings and calls give the same outcomes, on any number of cores (when
// Run takes the whole distributions of several distinct settings that are
// not in the cache, GOMAXPROCS goroutines compute them ahead of the draws,
// which stay in order).
//
// A Simulator is not safe for concurrent use.
type Simulator struct {
	n          int
	state      []complex128
	readoutErr []Readout
	rng        *rand.Rand

	depol, dephase []float64    // channels before readout (nil: none)
	pair           []float64    // correlated pair flips (nil: none)
	drift, base    []Readout    // readout drift per round and the round-0 rates
	round          int          // Run calls that recorded shots
	flip           []float64    // scratch: channel flips of one setting
	masks          [][4]uint64  // scratch: outcome flips of each Pauli, entangled setting
	weights        [][4]float64 // scratch: Pauli probabilities of each qubit's channels

	work  []complex128 // rotated amplitudes
	cum   []float64    // scratch distribution when not cached
	marg  []float64    // cumulative marginal of the high qubits
	blk   []complex128 // amplitudes of one value of the high qubits
	bcum  []float64    // their cumulative weights
	cache distCache
}

// NewSimulator returns a simulator of the state with the given amplitudes:
// state[a] is the amplitude of the basis state with bit q of a on qubit q.
// The amplitudes are copied and normalised. It returns an error if the
// length is not 2^n for 1 ≤ n ≤ [hamiltonian.MaxExactQubits], an amplitude
// is not finite, the norm is zero, or the settings are invalid.
func NewSimulator(state []complex128, seed uint64, opts *SimulatorOptions) (*Simulator, error) {
	if len(state) < 2 || len(state)&(len(state)-1) != 0 {
		return nil, fmt.Errorf("estimate: %d amplitudes, want 2^n with n ≥ 1", len(state))
	}
	n := bits.TrailingZeros(uint(len(state)))
	if n > hamiltonian.MaxExactQubits {
		return nil, fmt.Errorf("estimate: %d qubits exceed the maximum of %d", n, hamiltonian.MaxExactQubits)
	}
	var set SimulatorOptions
	if opts != nil {
		set = *opts
	}
	if err := checkReadout(set.Readout, n, "NewSimulator"); err != nil {
		return nil, err
	}
	if err := checkNoise(&set, n); err != nil {
		return nil, err
	}
	norm := 0.0
	for a, v := range state {
		if math.IsNaN(real(v)) || math.IsNaN(imag(v)) || math.IsInf(real(v), 0) || math.IsInf(imag(v), 0) {
			return nil, fmt.Errorf("estimate: amplitude %d is %v", a, v)
		}
		norm += real(v)*real(v) + imag(v)*imag(v)
	}
	if norm == 0 || math.IsInf(norm, 0) {
		return nil, fmt.Errorf("estimate: state norm² is %v", norm)
	}
	c := complex(1/math.Sqrt(norm), 0)
	psi := make([]complex128, len(state))
	for a, v := range state {
		psi[a] = v * c
	}
	limit := set.CacheBytes
	if limit == 0 {
		limit = defaultCacheBytes
	}
	sim := &Simulator{
		n:          n,
		state:      psi,
		readoutErr: append([]Readout(nil), set.Readout...),
		rng:        rand.New(rand.NewPCG(seed, 0x51a7e5eed)),
		work:       make([]complex128, len(psi)),
		cache:      distCache{limit: limit, m: make(map[string][]float64)},
		depol:      clone(set.Depolarizing),
		dephase:    clone(set.Dephasing),
		pair:       clone(set.PairFlip),
	}
	if set.ReadoutDrift != nil {
		sim.drift = append([]Readout(nil), set.ReadoutDrift...)
		sim.base = make([]Readout, n)
		copy(sim.base, set.Readout)
	}
	return sim, nil
}

// GroundStateSimulator returns a simulator of the ground state of h, found
// by [hamiltonian.GroundState] with default settings, together with the
// eigenpair (its Energy is the exact value an unbiased estimate aims at).
func GroundStateSimulator(h *hamiltonian.Hamiltonian, seed uint64, opts *SimulatorOptions) (*Simulator, hamiltonian.Eigenpair, error) {
	ev, err := hamiltonian.GroundState(h, nil)
	if err != nil {
		return nil, hamiltonian.Eigenpair{}, fmt.Errorf("estimate: %w", err)
	}
	sim, err := NewSimulator(ev.State, seed, opts)
	if err != nil {
		return nil, hamiltonian.Eigenpair{}, err
	}
	return sim, ev, nil
}

// Qubits returns the number of qubits.
func (sim *Simulator) Qubits() int { return sim.n }

// Run measures shots[k] copies in settings[k] for each k and appends the
// outcomes to rec in that order; see [Device]. On bad arguments (including
// more than 2^32 shots in one call, the cap allocate.MaxShots, whose
// outcomes could not be held in memory) Run returns an error and appends
// nothing.
//
// When settings get many shots each, every distinct setting's full
// distribution is computed once (or taken from the cache) and sampled. When
// they get few, Run instead rotates only the h highest qubits, once for all
// settings that agree there, samples those qubits from their marginal
// distribution (which the rotations of the other qubits leave unchanged),
// and then rotates and samples the remaining 2^(n−h) amplitudes that agree
// with the drawn bits. It picks h to minimise the estimated work. A call
// with any entangled setting always uses the full distributions.
func (sim *Simulator) Run(settings []pauli.Setting, shots []int, rec *Records) error {
	if err := checkRun(sim.n, settings, shots, rec); err != nil {
		return err
	}
	sim.driftedRates()
	// Shot k's outcomes go to out[offset[k]:offset[k+1]]: n ≤ 24, one word.
	offset := make([]int, len(settings)+1)
	for k, m := range shots {
		offset[k+1] = offset[k] + m
	}
	out := make([]uint64, offset[len(settings)])
	// The distinct settings in order of first appearance, with the entries
	// of each.
	index := make(map[string]int)
	var order [][]int
	for k, s := range settings {
		if shots[k] == 0 {
			continue
		}
		key := s.Key()
		d, ok := index[key]
		if !ok {
			d = len(order)
			index[key] = d
			order = append(order, nil)
		}
		order[d] = append(order[d], k)
	}
	// Entangled settings have no letters to split on: every distinct
	// setting's full distribution is used.
	h := sim.n
	var keys []uint64
	if !anyEntangled(settings, shots) {
		keys = make([]uint64, len(order))
		for d, ks := range order {
			keys[d] = letterKey(settings[ks[0]])
		}
		h = sim.split(keys, offset[len(settings)])
	}
	if h == sim.n {
		sim.eachDistribution(settings, order, func(ks []int, cum []float64) {
			s := settings[ks[0]]
			if !s.IsLocal() && sim.hasChannels() {
				sim.pauliFlips(s)
				for _, k := range ks {
					for j := offset[k]; j < offset[k+1]; j++ {
						out[j] = sim.noisyEntangled(sim.search(cum))
					}
				}
				return
			}
			f := sim.channelFlips(s)
			for _, k := range ks {
				for j := offset[k]; j < offset[k+1]; j++ {
					out[j] = sim.noisy(sim.search(cum), f)
				}
			}
		})
	} else {
		// Visit the distinct settings sorted by their letters on the h
		// highest qubits, rotating those once per run of equal letters.
		low := sim.n - h
		byKey := make([]int, len(order))
		for d := range byKey {
			byKey[d] = d
		}
		slices.SortStableFunc(byKey, func(a, b int) int { return cmp.Compare(keys[a]>>(2*low), keys[b]>>(2*low)) })
		for r := 0; r < len(byKey); {
			prefix := keys[byKey[r]] >> (2 * low)
			sim.rotateHigh(settings[order[byKey[r]][0]], low)
			for ; r < len(byKey) && keys[byKey[r]]>>(2*low) == prefix; r++ {
				ks := order[byKey[r]]
				f := sim.channelFlips(settings[ks[0]])
				for _, k := range ks {
					for j := offset[k]; j < offset[k+1]; j++ {
						out[j] = sim.noisy(sim.drawSplit(settings[k], low), f)
					}
				}
			}
		}
	}
	if len(out) > 0 {
		sim.round++
	}
	for k, s := range settings {
		if shots[k] == 0 {
			continue
		}
		g := rec.group(s)
		for j := offset[k]; j < offset[k+1]; j++ {
			rec.appendShot(g, out[j:j+1])
		}
	}
	return nil
}

// letterKey packs the letters of s (at most 32 qubits) two bits each, qubit
// n−1 in the highest place, so that sorting keys groups settings by their
// letters on the highest qubits.
func letterKey(s pauli.Setting) uint64 {
	x, z := s.Words()
	var k uint64
	for q := s.Qubits() - 1; q >= 0; q-- {
		k = k<<2 | uint64(symplectic.Code(x, z, q))
	}
	return k
}

// split returns the number h of highest qubits to rotate once per group of
// settings that agree on them, minimising the estimated number of
// amplitude operations: for every distinct prefix, (1 + ⅔h)·2^n to rotate
// and sum the marginal; for every shot, (1 + ⅔(n−h))·2^(n−h) to rotate and
// sum the rest (⅔ of random letters need a gate). h = n is the full
// distribution of every distinct setting.
func (sim *Simulator) split(keys []uint64, shots int) int {
	n := sim.n
	sorted := slices.Clone(keys)
	slices.Sort(sorted)
	// distinct[h] counts the distinct letter prefixes on the h highest
	// qubits: consecutive sorted keys that first differ at qubit q (from
	// the top, 0-based) are distinct for every h > q.
	distinct := make([]int, n+1)
	for h := range distinct {
		distinct[h] = 1
	}
	for i := 1; i < len(sorted); i++ {
		d := sorted[i] ^ sorted[i-1]
		top := (bits.LeadingZeros64(d) - (64 - 2*n)) / 2 // equal highest letters
		for h := top + 1; h <= n; h++ {
			distinct[h]++
		}
	}
	best, bestCost := n, math.Inf(1)
	full := float64(uint64(1) << n)
	for h := 0; h <= n; h++ {
		rest := float64(uint64(1) << (n - h))
		cost := float64(distinct[h])*full*(1+2*float64(h)/3) + float64(shots)*rest*(1+2*float64(n-h)/3)
		if cost < bestCost {
			best, bestCost = h, cost
		}
	}
	return best
}

// rotateHigh rotates qubits low..n−1 of a copy of the state into the bases
// of s and sets sim.marg to the cumulative marginal weights of those
// qubits' outcomes.
func (sim *Simulator) rotateHigh(s pauli.Setting, low int) {
	copy(sim.work, sim.state)
	statevec.RotateQubits(sim.work, s, low, sim.n)
	nh := 1 << (sim.n - low)
	if cap(sim.marg) < nh {
		sim.marg = make([]float64, nh)
	}
	sim.marg = sim.marg[:nh]
	t := 0.0
	size := 1 << low
	for hi := range nh {
		for _, v := range sim.work[hi*size : (hi+1)*size] {
			t += real(v)*real(v) + imag(v)*imag(v)
		}
		sim.marg[hi] = t
	}
}

// drawSplit draws one outcome of s after rotateHigh: the high bits from
// their marginal, then the low bits from the rotated block of amplitudes
// that carry those high bits.
func (sim *Simulator) drawSplit(s pauli.Setting, low int) uint64 {
	hi := sim.search(sim.marg)
	size := 1 << low
	if cap(sim.blk) < size {
		sim.blk = make([]complex128, size)
		sim.bcum = make([]float64, size)
	}
	blk, cum := sim.blk[:size], sim.bcum[:size]
	copy(blk, sim.work[int(hi)*size:(int(hi)+1)*size])
	statevec.RotateQubits(blk, s, 0, low)
	t := 0.0
	for a, v := range blk {
		t += real(v)*real(v) + imag(v)*imag(v)
		cum[a] = t
	}
	return sim.search(cum) | hi<<low
}

// search draws an index from the cumulative weights cum: the first index
// whose cumulative weight exceeds a uniform draw below the total, so
// outcomes of zero weight are never chosen.
func (sim *Simulator) search(cum []float64) uint64 {
	u := sim.rng.Float64() * cum[len(cum)-1]
	lo, hi := 0, len(cum)-1
	for lo < hi {
		mid := int(uint(lo+hi) >> 1)
		if cum[mid] > u {
			hi = mid
		} else {
			lo = mid + 1
		}
	}
	return uint64(lo)
}

// readout applies the readout errors to outcome b.
func (sim *Simulator) readout(b uint64) uint64 {
	for q, e := range sim.readoutErr {
		p := e.P01
		if b>>q&1 == 1 {
			p = e.P10
		}
		if p > 0 && sim.rng.Float64() < p {
			b ^= 1 << q
		}
	}
	return b
}

// parallelStates bounds the work of eachDistribution's goroutines: they
// run only while GOMAXPROCS times the amplitudes is at most this (2^24: two
// goroutines up to 23 qubits), their buffers then taking at most 32 bytes
// an amplitude each, 512 MiB in all.
const parallelStates = 1 << 24

// eachDistribution calls use, in the order of order, with the entries of
// every distinct setting (settings[ks[0]] is the setting) and its
// cumulative outcome weights, as distribution gives them; use must not
// keep them. When there are several distinct settings, none of them in the
// cache, and GOMAXPROCS > 1, the distributions are computed by GOMAXPROCS
// goroutines, each rotating its own copy of the state, at most 2·GOMAXPROCS
// settings ahead of use: the same arithmetic gives the same numbers, and
// use — which draws the outcomes — runs in order in the caller's
// goroutine, so the outcomes do not depend on the number of cores. They are
// put in the cache as distribution would.
func (sim *Simulator) eachDistribution(settings []pauli.Setting, order [][]int, use func(ks []int, cum []float64)) {
	workers := runtime.GOMAXPROCS(0)
	size := len(sim.state)
	var keys []string // the settings' cache keys, when the cache is on
	parallel := workers >= 2 && len(order) >= 2 && workers*size <= parallelStates
	if parallel && sim.cache.limit > 0 {
		keys = make([]string, len(order))
		for d, ks := range order {
			keys[d] = settings[ks[0]].Key()
			if _, ok := sim.cache.m[keys[d]]; ok {
				parallel = false
				break
			}
		}
	}
	if !parallel {
		for _, ks := range order {
			use(ks, sim.distribution(settings[ks[0]]))
		}
		return
	}
	window := 2 * workers
	free := make(chan []float64, window)
	for range window {
		free <- make([]float64, size)
	}
	done := make([]chan []float64, len(order))
	for d := range done {
		done[d] = make(chan []float64, 1)
	}
	// A goroutine takes a free buffer, then the next setting: every
	// setting handed out is computed, and the one use waits for either is
	// or will be handed out next (earlier ones are done and their buffers
	// back), so the window never deadlocks.
	var next atomic.Int64
	var wg sync.WaitGroup
	for range workers {
		wg.Go(func() {
			work := make([]complex128, size)
			for {
				cum := <-free
				d := int(next.Add(1)) - 1
				if d >= len(order) {
					free <- cum
					return
				}
				sim.cumulative(cum, work, settings[order[d][0]])
				done[d] <- cum
			}
		})
	}
	for d, ks := range order {
		cum := <-done[d]
		use(ks, cum)
		if sim.cache.limit >= 8*size {
			copy(sim.cache.put(keys[d], 8*size), cum)
		}
		free <- cum
	}
	wg.Wait()
}

// distribution returns the cumulative outcome weights of setting s (not
// normalised: the last entry is the total).
func (sim *Simulator) distribution(s pauli.Setting) []float64 {
	key := ""
	if sim.cache.limit > 0 {
		key = s.Key()
		if cum, ok := sim.cache.m[key]; ok {
			return cum
		}
	}
	var cum []float64
	if sim.cache.limit >= 8*len(sim.work) {
		cum = sim.cache.put(key, 8*len(sim.work))
	} else {
		if sim.cum == nil {
			sim.cum = make([]float64, len(sim.work))
		}
		cum = sim.cum
	}
	sim.cumulative(cum, sim.work, s)
	return cum
}

// cumulative writes into cum the cumulative outcome weights of setting s,
// rotating a copy of the state in work (both of the state's length). It
// only reads the simulator, so goroutines with their own cum and work may
// call it together.
func (sim *Simulator) cumulative(cum []float64, work []complex128, s pauli.Setting) {
	copy(work, sim.state)
	statevec.Rotate(work, s, sim.n)
	t := 0.0
	for a, v := range work {
		t += real(v)*real(v) + imag(v)*imag(v)
		cum[a] = t
	}
}

// Probabilities sets dst[a] to the Born probability of outcome a (bit q of a
// for qubit q) when the state is measured in setting s, without readout
// error, and returns dst; a nil or short dst is replaced by a new slice. It
// panics if s has the wrong width.
func (sim *Simulator) Probabilities(dst []float64, s pauli.Setting) []float64 {
	if s.Qubits() != sim.n {
		panic("estimate: Probabilities: setting width differs from the simulator's")
	}
	if len(dst) < len(sim.state) {
		dst = make([]float64, len(sim.state))
	}
	dst = dst[:len(sim.state)]
	copy(sim.work, sim.state)
	statevec.Rotate(sim.work, s, sim.n)
	t := 0.0
	for a, v := range sim.work {
		dst[a] = real(v)*real(v) + imag(v)*imag(v)
		t += dst[a]
	}
	for a := range dst {
		dst[a] /= t
	}
	return dst
}

// distCache keeps distributions of recent settings, evicting the oldest
// first, within a byte limit.
type distCache struct {
	limit int
	bytes int
	m     map[string][]float64
	fifo  []string
}

// put returns a buffer of size/8 float64s stored under key, reusing the
// storage of evicted entries when it can.
func (c *distCache) put(key string, size int) []float64 {
	var buf []float64
	for c.bytes+size > c.limit && len(c.fifo) > 0 {
		old := c.fifo[0]
		c.fifo = c.fifo[1:]
		buf = c.m[old]
		delete(c.m, old)
		c.bytes -= 8 * len(buf)
	}
	if len(buf) != size/8 {
		buf = make([]float64, size/8)
	}
	c.m[key] = buf
	c.fifo = append(c.fifo, key)
	c.bytes += size
	return buf
}

// clone copies a float64 slice, keeping nil as nil.
func clone(r []float64) []float64 {
	if r == nil {
		return nil
	}
	return append([]float64(nil), r...)
}
