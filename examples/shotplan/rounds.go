package main

import (
	"bytes"
	"crypto/sha256"
	"encoding/base64"
	"encoding/hex"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"math/bits"
	"math/rand/v2"
	"os"
	"slices"
	"strings"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/guarantee"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/hamiltonian/molecule"
	"github.com/shotplan/shotplan/internal/atomicfile"
	"github.com/shotplan/shotplan/pauli"
)

// The rounds state file: its "format" value and layout version.
const (
	roundsFormat  = "shotplan rounds"
	roundsVersion = 1
	// maxStateBytes caps what the state reader reads.
	maxStateBytes = 1 << 30
)

// roundsState is the state file of a round-by-round run. It holds all the
// run needs (the Hamiltonian too), so that every step reads only it. The
// interval is never trusted alone: rounds add and rounds status recompute it
// from the outcomes and check it against the one recorded with each round.
type roundsState struct {
	Format      string          `json:"format"`
	Version     int             `json:"version"`
	Hamiltonian json.RawMessage `json:"hamiltonian"`
	Strategy    string          `json:"strategy"`
	Seed        uint64          `json:"seed"`
	Epsilon     float64         `json:"target"`
	Delta       float64         `json:"delta"`
	FirstRound  int             `json:"first_round"`
	Growth      float64         `json:"growth"`
	MaxShots    int             `json:"max_shots"`
	// Settings and Weights are the distribution every shot draws its
	// setting from: the reference plan's distinct settings and shot counts.
	Settings []string `json:"settings"`
	Weights  []int    `json:"weights"`
	// Baseline, if present, holds the constant c_i of every term that the
	// single-shot values are shifted by (guarantee.IID.WithBaseline,
	// MATH.md §4.11), fixed at the start; BaselineSource says where it came
	// from. Absent means no shift.
	Baseline       []float64    `json:"baseline,omitempty"`
	BaselineSource string       `json:"baseline_source,omitempty"`
	Rounds         []roundEntry `json:"rounds"`
}

// roundEntry is one round whose records were added.
type roundEntry struct {
	Round int `json:"round"`
	Shots int `json:"shots"`
	// Digest is the SHA-256 of the round's records in canonical form; a
	// second submission of the same records is recognised by it.
	Digest string `json:"records_sha256"`
	// Outcomes holds the outcome of every shot in draw order, packed: each
	// shot takes ⌈qubits/8⌉ bytes, bit q of the outcome being bit q mod 8
	// of the shot's byte q/8 (unused high bits zero); the bytes of all
	// shots in a row, in standard base64.
	Outcomes string     `json:"outcomes"`
	Interval [2]float64 `json:"interval"`
}

// roundsRun is a state file read and replayed.
type roundsRun struct {
	st   *roundsState
	path string
	h    *hamiltonian.Hamiltonian
	d    *guarantee.IID
	cs   guarantee.ConfSeq // nil when every shot has the same value
	lo   float64           // that value
	used int               // shots added so far
	done int               // rounds replayed or added
	// sorted lists the support's settings in order of their text, for
	// the digests; made on first use.
	sorted []int
	// interval and radius after the last round (bias included).
	interval [2]float64
	radius   float64
	// parity holds, per setting of the distribution, its shots and
	// odd-parity outcomes in every round, for the drift test.
	parity []guarantee.DriftCounts
}

// countParities adds a round's shots (setting index of each draw, packed
// outcomes) to the parity counts of the drift test.
func (r *roundsRun) countParities(draws []int32, packed []byte) {
	if r.parity == nil {
		r.parity = make([]guarantee.DriftCounts, len(r.d.Settings))
		for k := range r.parity {
			r.parity[k].Setting = r.d.Settings[k]
		}
	}
	for k := range r.parity {
		r.parity[k].Shots = append(r.parity[k].Shots, 0)
		r.parity[k].Odd = append(r.parity[k].Odd, 0)
	}
	w := bytesPerShot(r.h.Qubits())
	last := len(r.parity[0].Shots) - 1
	for j, k := range draws {
		ones := 0
		for _, c := range packed[j*w : (j+1)*w] {
			ones += bits.OnesCount8(c)
		}
		r.parity[k].Shots[last]++
		r.parity[k].Odd[last] += ones & 1
	}
}

func (r *roundsRun) certified() bool {
	return r.done > 0 && r.radius <= r.st.Epsilon
}

func (r *roundsRun) spent() bool { return r.used >= r.st.MaxShots }

// maxRound caps the shots of one round (a round's draws are held in memory).
const maxRound = 1 << 26

// roundSize returns the shots of round k (1-based) given the shots used
// before it: ⌈first·growth^(k−1)⌉, cut to maxRound and to the cap.
func (r *roundsRun) roundSize(k, used int) int {
	size := math.Ceil(float64(r.st.FirstRound)*math.Pow(r.st.Growth, float64(k-1)) - 1e-9)
	return int(min(size, maxRound, float64(r.st.MaxShots-used)))
}

// draws returns the setting index of every shot of round k, drawn from the
// distribution with a generator seeded by the run's seed and k alone, so
// that the plan of a round is the same whenever it is asked for.
func (r *roundsRun) draws(k, n int) []int32 {
	rng := rand.New(rand.NewPCG(r.st.Seed, 0x726f756e64<<16|uint64(k)))
	out := make([]int32, n)
	for j := range out {
		out[j] = int32(r.d.Draw(rng))
	}
	return out
}

// feed adds one shot's value to the confidence sequence.
func (r *roundsRun) feed(k int, b pauli.Bits) error {
	if r.cs == nil {
		return nil
	}
	return r.cs.Add(r.d.Value(k, b))
}

// update recomputes the interval after a round.
func (r *roundsRun) update() {
	l, u := r.lo, r.lo
	if r.cs != nil {
		l, u = r.cs.Interval()
	}
	r.interval = [2]float64{l - r.d.Bias, u + r.d.Bias}
	r.radius = (r.interval[1] - r.interval[0]) / 2
}

// stateError is a problem with the state file: it names the file and the
// entry.
func stateError(path, entry, format string, args ...any) error {
	msg := fmt.Sprintf(format, args...)
	if entry != "" {
		return badf("%s: %s: %s", path, entry, msg)
	}
	return badf("%s: %s", path, msg)
}

// readRoundsState reads a state file and checks it; with replay it also
// feeds every outcome to the confidence sequence again and checks the
// recorded intervals (see parseRoundsState).
func readRoundsState(path string, replay bool) (*roundsRun, error) {
	if err := need("state", path); err != nil {
		return nil, err
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, bad(err)
	}
	defer f.Close()
	if fi, err := f.Stat(); err == nil && !fi.Mode().IsRegular() {
		return nil, badf("%s: not a regular file", path)
	}
	data, err := io.ReadAll(io.LimitReader(f, maxStateBytes+1))
	if err != nil {
		return nil, badf("%s: %w", path, err)
	}
	return parseRoundsState(path, data, replay)
}

// parseRoundsState checks a state file's content: its fields, every
// round's size, outcomes and digest. With replay it feeds the outcomes to
// the confidence sequence again, which adding a round needs, and checks each
// recorded interval against the replayed one. Without replay, cheaper (the
// sequence costs most of a replay), it takes the recorded intervals as they
// are: enough to write the next round's plan, which depends only on the
// seed, the round's number and whether the run has stopped.
func parseRoundsState(path string, data []byte, replay bool) (*roundsRun, error) {
	if len(data) > maxStateBytes {
		return nil, stateError(path, "", "larger than %d bytes", maxStateBytes)
	}
	var st roundsState
	dec := json.NewDecoder(bytes.NewReader(data))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&st); err != nil {
		return nil, stateError(path, "", "%s", jsonProblem(data, err))
	}
	if dec.More() {
		return nil, stateError(path, "", "text after the state's closing brace")
	}
	switch {
	case st.Format != roundsFormat:
		return nil, stateError(path, "format", "%q, want %q (is this a rounds state file?)", st.Format, roundsFormat)
	case st.Version != roundsVersion:
		return nil, stateError(path, "version", "%d, this shotplan reads version %d", st.Version, roundsVersion)
	case !(st.Epsilon > 0) || math.IsInf(st.Epsilon, 0):
		return nil, stateError(path, "target", "%v, want a positive number", st.Epsilon)
	case !(st.Delta > 0 && st.Delta < 1):
		return nil, stateError(path, "delta", "%v, want a value in (0, 1)", st.Delta)
	case st.FirstRound < 1:
		return nil, stateError(path, "first_round", "%d, want at least 1", st.FirstRound)
	case !(st.Growth >= 1) || st.Growth > 100:
		return nil, stateError(path, "growth", "%v, want a number in [1, 100]", st.Growth)
	case st.MaxShots < 1:
		return nil, stateError(path, "max_shots", "%d, want at least 1", st.MaxShots)
	case len(st.Settings) == 0 || len(st.Settings) != len(st.Weights):
		return nil, stateError(path, "settings", "%d settings and %d weights, want the same positive number", len(st.Settings), len(st.Weights))
	}
	var h hamiltonian.Hamiltonian
	if err := json.Unmarshal(st.Hamiltonian, &h); err != nil {
		return nil, stateError(path, "hamiltonian", "%v", err)
	}
	settings := make([]pauli.Setting, len(st.Settings))
	weights := make([]float64, len(st.Settings))
	for k, text := range st.Settings {
		s, err := pauli.ParseSetting(text)
		if err != nil {
			return nil, stateError(path, fmt.Sprintf("settings[%d]", k), "%v", err)
		}
		if s.Qubits() != h.Qubits() {
			return nil, stateError(path, fmt.Sprintf("settings[%d]", k), "%d qubits, the Hamiltonian has %d", s.Qubits(), h.Qubits())
		}
		if st.Weights[k] < 1 {
			return nil, stateError(path, fmt.Sprintf("weights[%d]", k), "%d, want at least 1", st.Weights[k])
		}
		settings[k], weights[k] = s, float64(st.Weights[k])
	}
	d, err := guarantee.NewIID(&h, settings, weights)
	if err != nil {
		return nil, stateError(path, "settings", "%v", err)
	}
	if len(d.Settings) != len(settings) {
		return nil, stateError(path, "settings", "a setting is listed twice")
	}
	if st.Baseline != nil {
		if d, err = d.WithBaseline(st.Baseline); err != nil {
			return nil, stateError(path, "baseline", "%v", err)
		}
	}
	r := &roundsRun{st: &st, path: path, h: &h, d: d}
	if err := r.start(); err != nil {
		return nil, stateError(path, "", "%v", err)
	}
	seen := make(map[string]int)
	n := h.Qubits()
	for j, e := range st.Rounds {
		entry := fmt.Sprintf("rounds[%d]", j)
		if e.Round != j+1 {
			return nil, stateError(path, entry, "round %d, want %d", e.Round, j+1)
		}
		if r.spent() || r.certified() {
			return nil, stateError(path, entry, "a round after the run stopped")
		}
		if want := r.roundSize(e.Round, r.used); e.Shots != want {
			return nil, stateError(path, entry, "%d shots, round %d has %d", e.Shots, e.Round, want)
		}
		packed, err := base64.StdEncoding.DecodeString(e.Outcomes)
		if err != nil {
			return nil, stateError(path, entry+".outcomes", "not base64: %v", err)
		}
		if len(packed) != e.Shots*bytesPerShot(n) {
			return nil, stateError(path, entry+".outcomes", "%d bytes, %d shots of %d qubits take %d", len(packed), e.Shots, n, e.Shots*bytesPerShot(n))
		}
		if len(e.Digest) != 64 {
			return nil, stateError(path, entry+".records_sha256", "%q is not a SHA-256 in hex", e.Digest)
		}
		if i, ok := seen[e.Digest]; ok {
			return nil, stateError(path, entry+".records_sha256", "the same records as round %d", i)
		}
		seen[e.Digest] = e.Round
		draws := r.draws(e.Round, e.Shots)
		b := pauli.NewBits(n)
		for i := range e.Shots {
			if !unpackShot(b, packed, i, n) {
				return nil, stateError(path, entry+".outcomes", "shot %d has bits set beyond qubit %d", i, n-1)
			}
			if !replay {
				continue
			}
			if err := r.feed(int(draws[i]), b); err != nil {
				return nil, stateError(path, entry+".outcomes", "shot %d: %v", i, err)
			}
		}
		if r.outcomesDigest(draws, packed) != e.Digest {
			return nil, stateError(path, entry+".records_sha256", "does not match the round's outcomes (the file was changed)")
		}
		r.countParities(draws, packed)
		r.used += e.Shots
		r.done++
		if !replay {
			if iv := e.Interval; !(iv[0] <= iv[1]) || math.IsInf(iv[0], 0) || math.IsInf(iv[1], 0) {
				return nil, stateError(path, entry+".interval", "[%g, %g] is not an interval", iv[0], iv[1])
			}
			r.interval, r.radius = e.Interval, (e.Interval[1]-e.Interval[0])/2
			continue
		}
		r.update()
		if !sameInterval(r.interval, e.Interval) {
			return nil, stateError(path, entry+".interval", "[%.10g, %.10g], its outcomes give [%.10g, %.10g]", e.Interval[0], e.Interval[1], r.interval[0], r.interval[1])
		}
	}
	return r, nil
}

// sameInterval compares a replayed interval with a recorded one: the replay
// is deterministic, so only the decimal round trip of JSON may differ.
func sameInterval(a, b [2]float64) bool {
	for k := range a {
		if math.Abs(a[k]-b[k]) > 1e-12*(1+math.Abs(a[k])) {
			return false
		}
	}
	return true
}

// start creates the confidence sequence: the betting sequence of
// [guarantee.BettingCS] on the range of the single-shot values, its bets
// aimed at the target less the bias, as guarantee.Anytime does without a
// pilot.
func (r *roundsRun) start() error {
	lo, hi := r.d.Range()
	r.lo = lo
	if r.d.Dist.Width == 0 {
		return nil
	}
	opts := &guarantee.BettingOptions{}
	if aim := r.st.Epsilon - r.d.Bias; aim > 0 {
		opts.Aim = aim
	}
	cs, err := guarantee.NewBettingCS(lo, hi, r.st.Delta, opts)
	if err != nil {
		return err
	}
	r.cs = cs
	return nil
}

// jsonProblem turns a decoding error into a message with the line it is on.
func jsonProblem(data []byte, err error) string {
	var off int64 = -1
	var se *json.SyntaxError
	var te *json.UnmarshalTypeError
	switch {
	case errors.As(err, &se):
		off = se.Offset
	case errors.As(err, &te):
		off = te.Offset
	}
	if errors.Is(err, io.ErrUnexpectedEOF) {
		return fmt.Sprintf("line %d: the file ends early (cut off?)", 1+bytes.Count(data, []byte("\n")))
	}
	if off < 0 || off > int64(len(data)) {
		return err.Error()
	}
	line := 1 + bytes.Count(data[:off], []byte("\n"))
	return fmt.Sprintf("line %d: %v", line, err)
}

// write saves the state atomically: a kill leaves the old file or the new,
// never a mix.
func (st *roundsState) write(path string) error {
	b, err := json.Marshal(st)
	if err != nil {
		return err
	}
	var out bytes.Buffer
	if err := json.Indent(&out, b, "", " "); err != nil {
		return err
	}
	out.WriteByte('\n')
	return atomicfile.Write(path, func(w io.Writer) error {
		_, err := w.Write(out.Bytes())
		return err
	})
}

// nextPlan returns round k's plan: the distinct drawn settings with their
// counts, in order of first draw.
func (r *roundsRun) nextPlan(k int, draws []int32) *allocate.Plan {
	count := make([]int, len(r.d.Settings))
	var order []int
	for _, q := range draws {
		if count[q] == 0 {
			order = append(order, int(q))
		}
		count[q]++
	}
	p := &allocate.Plan{Qubits: r.h.Qubits(), Cover: make([]int, r.h.Len())}
	p.Stats.Strategy = r.st.Strategy
	tab := r.h.Table()
	var rows []int
	for _, q := range order {
		s := r.d.Settings[q]
		p.Settings = append(p.Settings, s)
		p.Shots = append(p.Shots, count[q])
		rows = tab.Covered(rows[:0], s)
		for _, i := range rows {
			p.Cover[i] += count[q]
		}
	}
	return p
}

// bytesPerShot is the packed size of one outcome of n qubits.
func bytesPerShot(n int) int { return (n + 7) / 8 }

// packShot writes outcome b of n qubits as shot j of packed.
func packShot(packed []byte, j int, b pauli.Bits, n int) {
	w := bytesPerShot(n)
	for q := range n {
		packed[j*w+q/8] |= byte(b.Get(q)) << (q % 8)
	}
}

// unpackShot reads shot j of packed into b; it reports false if a bit
// beyond qubit n−1 is set.
func unpackShot(b pauli.Bits, packed []byte, j, n int) bool {
	w := bytesPerShot(n)
	clear(b)
	for k, c := range packed[j*w : (j+1)*w] {
		for i := range 8 {
			if c>>i&1 == 0 {
				continue
			}
			q := 8*k + i
			if q >= n {
				return false
			}
			b.Set(q, 1)
		}
	}
	return true
}

// The digest of a round's records is the SHA-256 of a canonical form: the
// settings in sorted order of their text, each as its text and a newline
// followed by its outcomes in order, packed as in roundEntry.Outcomes. It
// does not depend on the order of the shots between settings, nor on how
// the records were split into files.

// recordsDigest is the digest of records read from files.
func recordsDigest(rec *estimate.Records) string {
	n := rec.Qubits()
	type group struct {
		key string
		g   int
	}
	var gs []group
	for g := range rec.Groups() {
		gs = append(gs, group{rec.Setting(g).String(), g})
	}
	slices.SortFunc(gs, func(a, b group) int { return strings.Compare(a.key, b.key) })
	sum := sha256.New()
	buf := make([]byte, bytesPerShot(n))
	for _, g := range gs {
		io.WriteString(sum, g.key+"\n")
		for j := range rec.GroupLen(g.g) {
			clear(buf)
			packShot(buf, 0, rec.Outcome(g.g, j), n)
			sum.Write(buf)
		}
	}
	return hex.EncodeToString(sum.Sum(nil))
}

// outcomesDigest is the digest of a round as stored: draws[i] is the
// setting of shot i and packed its outcomes.
func (r *roundsRun) outcomesDigest(draws []int32, packed []byte) string {
	w := bytesPerShot(r.h.Qubits())
	// Shots by setting, in draw order (a counting sort).
	start := make([]int, len(r.d.Settings)+1)
	for _, q := range draws {
		start[q+1]++
	}
	for q := range r.d.Settings {
		start[q+1] += start[q]
	}
	order := make([]int32, len(draws))
	fill := slices.Clone(start[:len(r.d.Settings)])
	for i, q := range draws {
		order[fill[q]] = int32(i)
		fill[q]++
	}
	if r.sorted == nil {
		r.sorted = make([]int, len(r.d.Settings))
		for q := range r.sorted {
			r.sorted[q] = q
		}
		slices.SortFunc(r.sorted, func(a, b int) int {
			return strings.Compare(r.d.Settings[a].String(), r.d.Settings[b].String())
		})
	}
	sum := sha256.New()
	for _, q := range r.sorted {
		if start[q] == start[q+1] {
			continue
		}
		io.WriteString(sum, r.d.Settings[q].String()+"\n")
		for _, i := range order[start[q]:start[q+1]] {
			sum.Write(packed[int(i)*w : int(i+1)*w])
		}
	}
	return hex.EncodeToString(sum.Sum(nil))
}

func roundsStartFlags(fs *flag.FlagSet, e *env) func() error {
	ham := fs.String("ham", "", "Hamiltonian file (required)")
	eps := fs.Float64("eps", 0, "target accuracy ε: the run stops once the certified interval is E ± ε or narrower (required)")
	delta := fs.Float64("delta", 0.05, "failure probability δ: the interval misses the energy at any round with probability at most δ")
	strategy := fs.String("strategy", "greedy", "strategy of the reference plan the shots draw their settings from: "+strings.Join(allocate.Names(), ", "))
	reference := fs.Int("reference", 0, "shots of the reference plan (default: doubled from max(1000, 2·terms) until every term is measured)")
	seed := fs.Uint64("seed", 1, "seed of the strategy and of the draws of every round")
	first := fs.Int("first", 1000, "shots of round 1")
	growth := fs.Float64("growth", 1.5, "round k has first·growth^(k−1) shots (1 for equal rounds)")
	maxShots := fs.Int("max-shots", 100_000_000, "stop after this many shots in all, certified or not")
	baseline := fs.String("baseline", "none", baselineUsage)
	proxy := fs.String("proxy", "worst", "variance proxy for the group shares of "+proxyStrategies+" in the reference plan (as plan -proxy): "+proxyUsage)
	sf := addSectorFlags(fs)
	out := fs.String("o", "", "state file to create (required; an existing file is kept)")
	return func() error {
		if err := e.positional(0, ""); err != nil {
			return err
		}
		if err := need("o", *out); err != nil {
			return err
		}
		if _, err := os.Lstat(*out); err == nil {
			return badf("-o %s exists: a run's state is never overwritten; choose another name or remove it", *out)
		}
		switch {
		case !(*eps > 0) || math.IsInf(*eps, 0):
			return badf("-eps %g: want a positive target accuracy (flag -eps is required)", *eps)
		case *first < 1:
			return badf("-first %d: want at least 1", *first)
		case !(*growth >= 1) || *growth > 100:
			return badf("-growth %g: want a number in [1, 100]", *growth)
		case *maxShots < 1:
			return badf("-max-shots %d: want at least 1", *maxShots)
		case *reference < 0:
			return badf("-reference %d: want 0 (automatic) or a number of shots", *reference)
		}
		if err := checkDelta(*delta); err != nil {
			return err
		}
		if *strategy == "fixed" {
			return badf("-strategy fixed has no settings of its own here")
		}
		a, err := allocate.ByName(*strategy, *seed)
		if err != nil {
			return bad(err)
		}
		if _, ok := a.(allocate.Observer); ok {
			return badf("-strategy %s reads outcomes back; the rounds need a plan fixed before the data", *strategy)
		}
		if err := need("ham", *ham); err != nil {
			return err
		}
		if p := strings.TrimSpace(*proxy); p != "worst" && p != "" && !setProxy(a, nil) {
			return badf("-proxy %s: strategy %s does not weigh groups; -proxy is for %s", *proxy, *strategy, proxyStrategies)
		}
		h, g, err := readHamAny(*ham)
		if err != nil {
			return bad(err)
		}
		px, c, source, err := readProxyBaseline(*proxy, *baseline, *ham, h, g, sf)
		if err != nil {
			return err
		}
		setProxy(a, px.proxy)
		n, fixed := *reference, *reference > 0
		if !fixed {
			n = max(1000, 2*h.Len())
		}
		var p *allocate.Plan
		for {
			if p, err = allocate.Run(h, n, a, nil); err != nil {
				return runError(*ham, err)
			}
			if fixed || !slices.Contains(p.Cover, 0) || n >= 1<<18 {
				break
			}
			n *= 2
		}
		hj, err := json.Marshal(h)
		if err != nil {
			return err
		}
		st := &roundsState{
			Format: roundsFormat, Version: roundsVersion, Hamiltonian: hj,
			Strategy: p.Stats.Strategy, Seed: *seed, Epsilon: *eps, Delta: *delta,
			FirstRound: *first, Growth: *growth, MaxShots: *maxShots, Rounds: []roundEntry{},
			Baseline: c, BaselineSource: source,
		}
		settings, shots := p.Distinct()
		for k, s := range settings {
			st.Settings = append(st.Settings, s.String())
			st.Weights = append(st.Weights, shots[k])
		}
		// Read back what will be written: the state must be one the other
		// steps accept.
		raw, err := json.Marshal(st)
		if err != nil {
			return err
		}
		r, err := parseRoundsState(*out, raw, true)
		if err != nil {
			return err
		}
		if r.d.Bias >= *eps {
			return badf("%s: terms the %s reference plan never measures add a bias of %.4g ≥ ε; give a larger -reference", *ham, *strategy, r.d.Bias)
		}
		if err := st.write(*out); err != nil {
			return bad(err)
		}
		lo, hi := r.d.Range()
		res := struct {
			State     string     `json:"state"`
			Strategy  string     `json:"strategy"`
			Reference int        `json:"reference_shots"`
			Settings  int        `json:"settings"`
			Bias      float64    `json:"bias"`
			Proxy     string     `json:"proxy"`
			Baseline  string     `json:"baseline"`
			Range     [2]float64 `json:"shot_range"`
		}{*out, st.Strategy, p.TotalShots(), len(st.Settings), r.d.Bias, px.name, "none", [2]float64{lo, hi}}
		if source != "" {
			res.Baseline = source
		}
		if e.json {
			return e.writeJSON(res)
		}
		shift := ""
		if px.proxy != nil && setProxy(a, px.proxy) {
			shift = ", group shares from the proxy " + px.name
		}
		if source != "" {
			shift += ", values shifted by the baseline ⟨P_i⟩ of " + source
		}
		fmt.Fprintf(e.stdout, "wrote %s: every shot draws one of %d settings of a %d-shot %s plan%s; next: shotplan rounds next -state %s -o round1.json\n",
			*out, len(st.Settings), res.Reference, st.Strategy, shift, *out)
		return nil
	}
}

// baselineUsage is the text of -baseline in rounds start and budget.
const baselineUsage = "shift every shot's value by constants c_i = ⟨P_i⟩ of a classical state, fixed now (a control variate: same mean, smaller variance near that state): none, hf (the Hartree–Fock determinant of an FCIDUMP -ham), exact (the exact ground state, at most 20 qubits), BITS (a basis state, qubit 0 first) or an amplitude FILE, as -proxy of plan"

// readProxyBaseline resolves -proxy and -baseline of rounds start and
// budget for h, read from the file ham (g its integrals for an FCIDUMP
// file, else nil): the proxy state, the baseline (nil for none) and the
// baseline state's description ("" for none). The sector flags may serve
// either; a state named twice is resolved once.
func readProxyBaseline(proxy, baseline, ham string, h *hamiltonian.Hamiltonian, g *molecule.Integrals, sf sectorFlags) (chosenProxy, []float64, string, error) {
	if err := sf.usedBy([]string{"proxy", "baseline"}, []string{proxy, baseline}); err != nil {
		return chosenProxy{}, nil, "", err
	}
	px, err := resolveProxy(proxy, ham, h, g, sf)
	if err != nil {
		return chosenProxy{}, nil, "", err
	}
	var same *chosenProxy
	if px.proxy != nil && strings.TrimSpace(proxy) == strings.TrimSpace(baseline) {
		same = &px
	}
	c, source, err := readBaseline(baseline, ham, h, g, sf, same)
	if err != nil {
		return chosenProxy{}, nil, "", err
	}
	return px, c, source, nil
}

// readBaseline resolves -baseline of rounds start and budget: nil for
// none, else the ⟨P_i⟩ of every term in the state -proxy would read from
// the same text (resolveState), with the state's description. same, if not
// nil, is the state already resolved from the same text (the command's
// -proxy), taken instead of resolving it again. The caller checks the
// sector flags (sectorFlags.usedBy).
func readBaseline(spec, ham string, h *hamiltonian.Hamiltonian, g *molecule.Integrals, sf sectorFlags, same *chosenProxy) ([]float64, string, error) {
	switch strings.TrimSpace(spec) {
	case "none", "":
		return nil, "", nil
	case "worst":
		return nil, "", badf("-baseline worst: a baseline is one state's values; use -baseline none for no shift")
	}
	var px chosenProxy
	var err error
	if same != nil {
		px = *same
	} else if px, err = resolveState("baseline", spec, ham, h, g, sf); err != nil {
		return nil, "", err
	}
	c, err := guarantee.BaselineOf(h, px.proxy)
	if err != nil {
		return nil, "", badf("-baseline %s: %w", spec, err)
	}
	return c, px.name, nil
}

func roundsNextFlags(fs *flag.FlagSet, e *env) func() error {
	state := fs.String("state", "", "state file of the run (required)")
	out := fs.String("o", "", "plan file to write for the next round (required)")
	return func() error {
		if err := e.positional(0, ""); err != nil {
			return err
		}
		if err := need("o", *out); err != nil {
			return err
		}
		if err := notInput(*out, *state); err != nil {
			return err
		}
		r, err := readRoundsState(*state, false)
		if err != nil {
			return err
		}
		if err := r.stopped(); err != nil {
			return err
		}
		k := len(r.st.Rounds) + 1
		n := r.roundSize(k, r.used)
		p := r.nextPlan(k, r.draws(k, n))
		if err := allocate.WritePlanFile(*out, p, r.st.Seed); err != nil {
			return bad(err)
		}
		res := struct {
			Output   string `json:"output"`
			Round    int    `json:"round"`
			Shots    int    `json:"shots"`
			Settings int    `json:"settings"`
		}{*out, k, n, len(p.Settings)}
		if e.json {
			return e.writeJSON(res)
		}
		fmt.Fprintf(e.stdout, "wrote %s: round %d, %d shots on %s; measure them, then: shotplan rounds add -state %s -records FILE\n",
			*out, k, n, plural(len(p.Settings), "setting"), *state)
		return nil
	}
}

// stopped refuses another round once the run has stopped.
func (r *roundsRun) stopped() error {
	switch {
	case r.certified():
		return badf("%s: the run is certified (±%.6g ≤ ε = %g after %d shots); no round is needed", r.path, r.radius, r.st.Epsilon, r.used)
	case r.spent():
		return badf("%s: the run has used its %d shots (-max-shots); start a new run to go on", r.path, r.st.MaxShots)
	}
	return nil
}

func roundsAddFlags(fs *flag.FlagSet, e *env) func() error {
	state := fs.String("state", "", "state file of the run (required)")
	var records listFlag
	fs.Var(&records, "records", "records of the round's plan: CSV, or JSON for a .json name; - reads standard input; repeat the flag or separate names by commas to combine files (required)")
	return func() error {
		if err := e.positional(0, ""); err != nil {
			return err
		}
		if err := need("state", *state); err != nil {
			return err
		}
		unlock, err := lockDir(*state)
		if err != nil {
			return bad(err)
		}
		defer unlock()
		r, err := readRoundsState(*state, true)
		if err != nil {
			return err
		}
		k := len(r.st.Rounds) + 1
		if err := r.stopped(); err != nil {
			return err
		}
		n := r.roundSize(k, r.used)
		draws := r.draws(k, n)
		p := r.nextPlan(k, draws)
		rec, err := readRecords(records, p.Settings, r.h.Qubits())
		if err != nil {
			return err
		}
		name := strings.Join(records, ", ")
		digest := recordsDigest(rec)
		for _, old := range r.st.Rounds {
			if old.Digest == digest {
				return badf("%s: these records were already added as round %d; nothing changed (measure the plan of round %d: shotplan rounds next)", name, old.Round, k)
			}
		}
		settings, shots := p.Distinct()
		if err := matchRecords(name, rec, p, settings, shots); err != nil {
			return badf("%w (round %d's plan)", err, k)
		}
		// The outcomes of each setting go to its draws in draw order.
		group := make([]int, len(r.d.Settings))
		next := make([]int, len(r.d.Settings))
		for _, q := range draws {
			g, _ := rec.Group(r.d.Settings[q])
			group[q] = g
		}
		entry := roundEntry{Round: k, Shots: n, Digest: digest}
		packed := make([]byte, n*bytesPerShot(r.h.Qubits()))
		for j, q := range draws {
			b := rec.Outcome(group[q], next[q])
			next[q]++
			packShot(packed, j, b, r.h.Qubits())
			if err := r.feed(int(q), b); err != nil {
				return err
			}
		}
		entry.Outcomes = base64.StdEncoding.EncodeToString(packed)
		r.countParities(draws, packed)
		r.used += n
		r.done++
		r.update()
		entry.Interval = r.interval
		r.st.Rounds = append(r.st.Rounds, entry)
		if err := r.st.write(*state); err != nil {
			return bad(err)
		}
		return r.report(e)
	}
}

func roundsStatusFlags(fs *flag.FlagSet, e *env) func() error {
	state := fs.String("state", "", "state file of the run (required)")
	return func() error {
		if err := e.positional(0, ""); err != nil {
			return err
		}
		r, err := readRoundsState(*state, true)
		if err != nil {
			return err
		}
		return r.report(e)
	}
}

// report prints where the run stands.
func (r *roundsRun) report(e *env) error {
	verdict := "continue"
	switch {
	case r.certified():
		verdict = "stop: certified"
	case r.spent():
		verdict = "stop: shots spent"
	}
	res := struct {
		Rounds   int        `json:"rounds"`
		Shots    int        `json:"shots"`
		Interval [2]float64 `json:"interval"`
		Estimate float64    `json:"estimate"`
		Radius   float64    `json:"radius"`
		Epsilon  float64    `json:"target"`
		Delta    float64    `json:"delta"`
		Verdict  string     `json:"verdict"`
		// The stationarity test of the rounds (guarantee.DriftTest at
		// guarantee.DefaultDriftLevel).
		DriftP       float64 `json:"drift_p_value"`
		DriftTested  int     `json:"drift_settings_tested"`
		DriftSetting string  `json:"drift_setting,omitempty"`
		Drifted      bool    `json:"drift_rejected"`
	}{Rounds: len(r.st.Rounds), Shots: r.used, Interval: r.interval, Estimate: (r.interval[0] + r.interval[1]) / 2, Radius: r.radius, Epsilon: r.st.Epsilon, Delta: r.st.Delta, Verdict: verdict, DriftP: 1}
	if r.parity != nil {
		d, err := guarantee.DriftTest(r.parity, guarantee.DefaultDriftLevel)
		if err != nil {
			return err
		}
		res.DriftP, res.DriftTested, res.Drifted = d.PValue, d.Tested, d.Rejected
		if d.Setting >= 0 {
			res.DriftSetting = r.parity[d.Setting].Setting.String()
		}
	}
	if len(r.st.Rounds) == 0 {
		res.Interval, res.Estimate, res.Radius = [2]float64{math.Inf(-1), math.Inf(1)}, 0, math.Inf(1)
	}
	if e.json {
		if len(r.st.Rounds) == 0 {
			// JSON has no infinity: no interval yet.
			return e.writeJSON(struct {
				Rounds  int     `json:"rounds"`
				Shots   int     `json:"shots"`
				Epsilon float64 `json:"target"`
				Delta   float64 `json:"delta"`
				Verdict string  `json:"verdict"`
			}{0, 0, r.st.Epsilon, r.st.Delta, verdict})
		}
		return e.writeJSON(res)
	}
	if len(r.st.Rounds) == 0 {
		fmt.Fprintf(e.stdout, "no round added yet; target ±%g at confidence %g%%\n", r.st.Epsilon, 100*(1-r.st.Delta))
		return nil
	}
	fmt.Fprintf(e.stdout, "after %s and %d shots: energy in [%.8f, %.8f] (%.8f ± %.3g) with probability ≥ %g%%, at every round at once\n",
		plural(res.Rounds, "round"), res.Shots, res.Interval[0], res.Interval[1], res.Estimate, res.Radius, 100*(1-r.st.Delta))
	if res.Drifted {
		fmt.Fprintf(e.stdout, "warning: the outcomes of %s changed across rounds (drift test p = %.3g < %g over %s): the rounds are not copies of one experiment, so the interval is not to be trusted\n",
			res.DriftSetting, res.DriftP, guarantee.DefaultDriftLevel, plural(res.DriftTested, "setting"))
	}
	switch verdict {
	case "continue":
		fmt.Fprintf(e.stdout, "continue: ±%.3g > ε = %g; next: shotplan rounds next -state %s -o round%d.json\n", res.Radius, r.st.Epsilon, r.path, res.Rounds+1)
	case "stop: certified":
		fmt.Fprintf(e.stdout, "stop: certified, ±%.3g ≤ ε = %g\n", res.Radius, r.st.Epsilon)
	default:
		fmt.Fprintf(e.stdout, "stop: the %d shots of -max-shots are spent, not certified (±%.3g > ε = %g)\n", r.st.MaxShots, res.Radius, r.st.Epsilon)
	}
	return nil
}

func roundsHelp() string {
	return `
A run on a device, one round at a time, with the state in one file:
  shotplan rounds start -ham H -eps E [-delta D] -o STATE
  shotplan rounds next -state STATE -o round1.json     (the plan of the next round)
  ... measure round1.json (shotplan export writes its circuits) ...
  shotplan rounds add -state STATE -records R1.csv    (prints the interval and stop or continue)
  shotplan rounds status -state STATE
Every shot draws its setting at random from the reference plan's shares; the
interval is an anytime-valid betting confidence sequence, so it holds at
every round at once and the run may stop whenever it is narrow enough.
-baseline hf|exact|BITS|FILE (rounds start) shifts every shot's value by the
terms' expectations in a classical state fixed before any shot: the mean is
unchanged and the variance falls when the measured state is near it.
-proxy (rounds start, as plan -proxy) gives the reference plan of sorted,
sorted-gc, color-gc or overlap its group shares from a classical state; the
plan is still fixed before any shot. shotplan budget with the same -strategy,
-reference, -seed, -proxy and -baseline prints the shots this run is
expected to need in its proxy state (its anytime column). The
state file is replaced atomically after each round; re-adding a round's
records is refused. Shot noise only: readout error is not covered. Drift is
tested: every report checks that each setting's outcome parity stayed the
same across rounds (guarantee.DriftTest) and warns when it did not.
`
}
