package estimate

import (
	"fmt"
	"math"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/internal/shotsum"
	"github.com/shotplan/shotplan/pauli"
)

// Stream computes the grouped estimate of a fixed plan ([Grouped]) from
// shots fed one at a time, in memory that does not grow with the number of
// shots (MATH.md §4.10): it keeps, per distinct setting of the plan, the
// shot count and the running sums of the shot's contribution
// Z = Σ_{i◁Q} a_i s_i (a_i = h_i/N_i, N_i from the plan) and of its square,
// per term the number of −1 samples, and the outcome of every setting the
// plan measures once (for its leave-one-out residual). The shots must be
// exactly the plan's: the estimate needs the cover counts N_i before the
// first shot, and [Stream.Result] refuses counts that differ from the plan.
//
// The result equals that of [Grouped] on the same shots to the last bit:
// both sum every shot's Z over its terms in table order and take a
// setting's variance from the running sums Σ (Z − Z_first) and
// Σ (Z − Z_first)² in shot order (MATH.md §4.10).
// [guarantee.EmpiricalStream] computes the data bounds of [guarantee.Empirical]
// from a Stream.
//
// Settings may be local or entangled ([pauli.NewFamilySetting]). A term
// covered by an entangled setting is read as [Grouped] reads it: its
// sample is the sign of its image under the setting's circuit times
// (−1)^(parity of the outcome on the image's Z support) (MATH.md §8,
// §4.10), and the result again equals Grouped's to the last bit, with or
// without a coefficient split. Readout mitigation (Options.Readout) is
// refused for entangled settings, as by Grouped.
//
// Shots of one setting are processed 64 at a time; the work per shot is
// about two floating-point operations per term its setting covers, except
// for outcomes of the setting met before: a shot's value depends only on
// its setting and outcome, and a fixed-size cache (about 1 MB) keeps the
// values of recent (setting, outcome) pairs. The
// covered terms of every setting are kept (4 bytes a pair) up to 2^27
// pairs; past that those of local settings are found again for every
// batch of 64 shots of a setting, which costs time instead of memory. An
// entangled setting's covered terms are found once, through its circuit,
// and always kept with their images (4 bytes a pair and 2 a qubit of an
// image). A Stream serves one goroutine at a time.
type Stream struct {
	cfg  *config
	sums *shotsum.Sums
	// With a coefficient split, split.a[g][k] is the weight α of term
	// Rows[k] of plan group g in its mean (MATH.md §2.5); nil without.
	split *streamSplit
}

// streamSplit is a Stream's coefficient split (behind a pointer, so that
// a Stream stays comparable).
type streamSplit struct{ a [][]float64 }

// NewStream returns a Stream for the plan that measures settings[k] for
// shots[k] shots (a setting may repeat; zero counts are ignored). Options
// work as for [Grouped] (Batches is ignored). With Options.Split, the
// plan's coefficient split (MATH.md §2.5), every setting weighs its terms
// as the split says and the result is that of Grouped with the same split
// on the same shots, to the last bit; the stream then also counts each
// setting's −1 samples per term (8 bytes a cover pair). It returns an
// error for a nil Hamiltonian, lengths that disagree, a setting of the
// wrong width, a negative count, invalid options, a split that does not
// fit the plan, a split on a plan of more cover pairs than are stored (see
// the Stream's doc), or readout mitigation with an entangled setting.
func NewStream(h *hamiltonian.Hamiltonian, settings []pauli.Setting, shots []int, opts *Options) (*Stream, error) {
	if h == nil {
		return nil, fmt.Errorf("estimate: Stream: nil Hamiltonian")
	}
	c, err := configFor(h, opts, "Stream")
	if err != nil {
		return nil, err
	}
	s, err := shotsum.New(h, settings, shots)
	if err != nil {
		return nil, fmt.Errorf("estimate: Stream: %w", err)
	}
	if c.readoutBias != nil {
		// The per-term factor of Options.Readout assumes local readout
		// (MATH.md §8.1), as Grouped says.
		for _, g := range s.Groups {
			if !g.Setting.IsLocal() {
				return nil, fmt.Errorf("estimate: %w: Stream: readout mitigation is not supported for entangled setting %s", ErrFormat, g.Setting)
			}
		}
	}
	coef := h.Coeffs()
	a := make([]float64, h.Len())
	for i, n := range s.Cover {
		if n > 0 && !c.excluded(i) {
			a[i] = coef[i] * c.scale[i] / float64(n)
		}
	}
	s.SetWeights(a)
	s.Mitigated = c.readoutBias != nil
	s.Exclude = c.exclude
	st := &Stream{cfg: c, sums: s}
	if opts != nil && len(opts.Split) > 0 {
		if err := st.setSplit(opts.Split); err != nil {
			return nil, err
		}
	}
	return st, nil
}

// setSplit gives every setting its own weights of the split estimate
// (MATH.md §2.5), as groupedSplit computes them, and makes the sums count
// each setting's −1 samples per term for the split means.
func (s *Stream) setSplit(split hamiltonian.Split) error {
	sm, c := s.sums, s.cfg
	h := sm.H
	settings := make([]pauli.Setting, len(sm.Groups))
	shots := make([]int, len(sm.Groups))
	for k, g := range sm.Groups {
		settings[k], shots[k] = g.Setting, g.Planned
	}
	if err := split.Check(h, settings, shots); err != nil {
		return fmt.Errorf("estimate: Stream: the plan does not fit the split: %w", err)
	}
	if !sm.Stored() {
		return fmt.Errorf("estimate: Stream: a coefficient split is streamed for plans of at most %d (setting, term) cover pairs; use Grouped on records in memory", shotsum.MaxStored)
	}
	m := h.Len()
	coef := h.Coeffs()
	listed := split.Listed(m)
	index := split.Groups()
	alpha := make([]float64, m) // scratch: the setting's split weights by term
	s.split = &streamSplit{a: make([][]float64, len(sm.Groups))}
	for gi, g := range sm.Groups {
		j, ok := index[g.Setting.Key()]
		if ok {
			for k, i := range split[j].Terms {
				alpha[i] = split[j].Weights[k]
			}
		}
		mg := float64(g.Planned)
		as := make([]float64, len(g.Rows))
		w := make([]float64, len(g.Rows))
		for k, r := range g.Rows {
			i := int(r)
			a, u := mg/float64(sm.Cover[i]), 1/float64(sm.Cover[i])
			if listed[i] {
				a, u = alpha[i], alpha[i]/mg
			}
			as[k] = a
			if !c.excluded(i) {
				w[k] = coef[i] * u * c.scale[i]
			}
		}
		sm.SetGroupWeights(g, w)
		s.split.a[gi] = as
		if ok {
			for _, i := range split[j].Terms {
				alpha[i] = 0
			}
		}
	}
	sm.CountRows()
	return nil
}

// resultSplit is Result for a plan with a coefficient split: the
// operations of groupedSplit, in the same order, on the running sums.
func (s *Stream) resultSplit() *Result {
	sm := s.Sums()
	h, c := sm.H, s.cfg
	m := h.Len()
	coef := h.Coeffs()
	res := &Result{Means: make([]float64, m), Cover: make([]int, m), Shots: sm.Shots, Energy: h.Offset()}
	copy(res.Cover, sm.Cover)
	for _, gi := range sm.Order {
		g := sm.Groups[gi]
		mg := float64(g.T)
		for k, i := range g.Rows {
			// The sum of the ±1 samples, an integer and so exact.
			gsum := float64(int64(g.T) - 2*g.RowOnes[k])
			res.Means[i] += s.split.a[gi][k] * gsum / mg
		}
	}
	c.finishSplitMeans(coef, res)
	vsum := 0.0
	for _, gi := range sm.Order {
		g := sm.Groups[gi]
		if g.T > 1 {
			vsum += float64(g.T) * g.Variance()
			continue
		}
		r := 0.0
		for a, i := range g.Kept {
			ck := g.Coef[a]
			v := 1.0
			if sm.Odd(g, i, g.One) {
				v = -1
			}
			if n := res.Cover[i]; n > 1 {
				plain := float64(int64(n) - 2*sm.Ones[i])
				r += ck * (v - (plain-v)/float64(n-1))
			} else {
				vsum += ck * ck // no data on its spread: Var(s) ≤ 1
			}
		}
		vsum += r * r
	}
	res.StdErr = math.Sqrt(vsum)
	c.finish(h, res, func(i int) bool { return res.Cover[i] == 0 })
	return res
}

// Add adds one shot: setting st gave outcome b (the bits are copied). It
// returns an error, and changes nothing, for a setting not in the plan, a
// shot beyond the plan's count of its setting, or an outcome of the wrong
// length or with bits set beyond the last qubit.
func (s *Stream) Add(st pauli.Setting, b pauli.Bits) error {
	if err := s.sums.Add(st, b); err != nil {
		return fmt.Errorf("estimate: %w", err)
	}
	return nil
}

// Len returns the number of shots added.
func (s *Stream) Len() int { return s.sums.Shots }

// Groups returns the number of distinct settings that have had a shot.
func (s *Stream) Groups() int { return len(s.sums.Order) }

// Check returns an error naming the first setting, in plan order, whose
// number of shots added differs from the plan's.
func (s *Stream) Check() error {
	if err := s.sums.Check(); err != nil {
		return fmt.Errorf("estimate: %w", err)
	}
	return nil
}

// Sums returns the running sums, for package guarantee; the caller must
// not change them.
func (s *Stream) Sums() *shotsum.Sums {
	s.sums.Flush()
	return s.sums
}

// Result returns the grouped estimate of the shots added, which must be
// exactly the plan's ([Stream.Check]). Shots may still be added afterwards
// only if the plan allows them, so in practice Result is called once.
func (s *Stream) Result() (*Result, error) {
	if err := s.Check(); err != nil {
		return nil, err
	}
	if s.sums.Shots == 0 {
		return nil, fmt.Errorf("estimate: %w: Stream: no shot", ErrFormat)
	}
	if s.split != nil {
		return s.resultSplit(), nil
	}
	sm := s.Sums()
	h, c := sm.H, s.cfg
	m := h.Len()
	coef := h.Coeffs()
	res := &Result{Means: make([]float64, m), Cover: make([]int, m), Shots: sm.Shots, Energy: h.Offset()}
	copy(res.Cover, sm.Cover)
	a := sm.A
	raw := make([]float64, m)
	// The same operations, in the same order, as Grouped.
	for i := range m {
		n := res.Cover[i]
		if n == 0 {
			res.Means[i] = math.NaN()
			continue
		}
		raw[i] = 1 - 2*float64(sm.Ones[i])/float64(n)
		res.Means[i] = c.scale[i] * raw[i]
		if !c.excluded(i) {
			res.Energy += coef[i] * res.Means[i]
		}
	}
	vsum := 0.0
	for i := range m {
		if a[i] != 0 && res.Cover[i] == 1 {
			vsum += a[i] * a[i]
		}
	}
	for _, gi := range sm.Order {
		g := sm.Groups[gi]
		if g.T > 1 {
			vsum += float64(g.T) * g.Variance()
			continue
		}
		r := 0.0
		_, kept, _ := sm.Lists(g)
		local := g.Setting.IsLocal()
		for _, i := range kept {
			n := res.Cover[i]
			if n < 2 {
				continue
			}
			ai := a[i]
			di := ai * float64(n) / float64(n-1)
			if di == 0 {
				continue
			}
			if !local {
				// Grouped's form for an entangled setting: d_i·(s − raw_i).
				s := 1.0
				if sm.Odd(g, i, g.One) {
					s = -1
				}
				r += di * (s - raw[i])
				continue
			}
			base, step := di*(1-raw[i]), 2*di
			odd := 0.0
			if sm.Odd(g, i, g.One) {
				odd = 1
			}
			r += base - step*odd
		}
		vsum += r * r
	}
	res.StdErr = math.Sqrt(vsum)
	c.finish(h, res, func(i int) bool { return res.Cover[i] == 0 })
	return res, nil
}

// runningVariance returns the unbiased sample variance of x (two or more
// values) from the running sums Σ (x − x_0) and Σ (x − x_0)² taken in
// order, the one-pass form a [Stream] keeps, so that Grouped and a Stream
// agree to the last bit. Shifting by the first value keeps the sums small
// for values within a setting's range (MATH.md §4.10).
func runningVariance(x []float64) float64 {
	var sum, ssq float64
	for _, v := range x {
		d := v - x[0]
		sum += d
		ssq += d * d
	}
	t := float64(len(x))
	m := sum / t
	return max(0, (ssq-t*m*m)/(t-1))
}
