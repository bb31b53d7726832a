package allocate

import (
	"errors"
	"fmt"
	"math"
	"slices"

	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/pauli"
)

// DeviceLimits are the limits of a device that runs circuits in jobs: at
// most MaxShotsPerCircuit shots of one circuit (one setting) and at most
// MaxCircuitsPerJob circuits in one job. Zero means no limit.
type DeviceLimits struct {
	MaxShotsPerCircuit int
	MaxCircuitsPerJob  int
}

// Job is one job of a plan split by [SplitJobs]: circuits, each a setting
// with its shots. A setting with more shots than a circuit may take appears
// as several circuits, one in each of consecutive jobs (a job holds each
// setting at most once, so that its manifest has one row per setting).
type Job struct {
	Settings []pauli.Setting
	Shots    []int
}

// SplitJobs splits the settings with their shots (repeats are merged
// first, in order of first use, and zero counts left out) into jobs that
// respect lim: every setting is cut into circuits of at most
// MaxShotsPerCircuit shots (all full but the last); the first circuits of
// all settings, in order, fill the first jobs, at most MaxCircuitsPerJob
// circuits each, then the second circuits the next jobs, and so on. So no
// job holds a setting twice, and without a limit on circuits the number of
// jobs is the most circuits of one setting, the least possible. The jobs
// hold exactly the shots given, so a certificate or an estimate of the whole
// plan is unchanged (neither depends on the order of shots, see
// [Plan.Compact]). It returns an error for negative limits or shot counts or
// lengths that disagree.
func SplitJobs(settings []pauli.Setting, shots []int, lim DeviceLimits) ([]Job, error) {
	if lim.MaxShotsPerCircuit < 0 || lim.MaxCircuitsPerJob < 0 {
		return nil, fmt.Errorf("allocate: negative limit (%d shots per circuit, %d circuits per job)", lim.MaxShotsPerCircuit, lim.MaxCircuitsPerJob)
	}
	if len(settings) != len(shots) {
		return nil, fmt.Errorf("allocate: %d settings but %d shot counts", len(settings), len(shots))
	}
	for k, m := range shots {
		if m < 0 {
			return nil, fmt.Errorf("allocate: setting %d (%s) has negative shot count %d", k, settings[k], m)
		}
	}
	distinct, total := pauli.MergeSettings(settings, shots)
	// Layer k holds the k-th circuit of every setting that has one; each
	// layer is cut into jobs of at most MaxCircuitsPerJob circuits.
	var jobs []Job
	for k := 0; ; k++ {
		var layer Job
		for j, s := range distinct {
			m := total[j]
			if lim.MaxShotsPerCircuit > 0 {
				m = min(total[j]-k*lim.MaxShotsPerCircuit, lim.MaxShotsPerCircuit)
			} else if k > 0 {
				m = 0
			}
			if m > 0 {
				layer.Settings = append(layer.Settings, s)
				layer.Shots = append(layer.Shots, m)
			}
		}
		if len(layer.Settings) == 0 {
			return jobs, nil
		}
		step := len(layer.Settings)
		if lim.MaxCircuitsPerJob > 0 {
			step = lim.MaxCircuitsPerJob
		}
		for a := 0; a < len(layer.Settings); a += step {
			b := min(a+step, len(layer.Settings))
			jobs = append(jobs, Job{Settings: layer.Settings[a:b:b], Shots: layer.Shots[a:b:b]})
		}
	}
}

// CostModel is the time (or price) of running a plan on a device: each shot
// costs ShotCost and each distinct circuit (setting) CircuitCost, for
// compiling, loading and calibrating it. Budget is what may be spent.
type CostModel struct {
	ShotCost, CircuitCost, Budget float64
}

// Cost returns the cost of a plan: shots × ShotCost + distinct settings ×
// CircuitCost.
func (c CostModel) Cost(p *Plan) float64 {
	d, _ := p.Distinct()
	return float64(p.TotalShots())*c.ShotCost + float64(len(d))*c.CircuitCost
}

// ErrCost is wrapped by the errors of [FitCost] about the cost model.
var ErrCost = errors.New("allocate: cost model")

// FitExhaustive is the most distinct settings for which [FitCost] searches
// every subset, and FitForward the most for which it also grows a subset
// one setting at a time.
const (
	FitExhaustive = 12
	FitForward    = 256
)

// FitCost fits a plan to a cost budget (MATH.md §5.7). It keeps a subset S
// of p's distinct settings, gives them N shots in proportion to the shots p
// gives them (largest-remainder rounding), with N the most shots the budget
// allows after the circuits of S, N = ⌊(Budget − |S| CircuitCost)/ShotCost⌋,
// and returns the plan whose certified bound at confidence 1 − delta, the
// Total of MATH.md §3.1 (sqrt(2 V ln(2/δ)) plus the coefficients of the
// terms no kept setting covers), is smallest, with that bound. With at most
// [FitExhaustive] distinct settings every subset is tried, so the result is
// the optimum of that rule; with more, a heuristic: the prefixes of the
// settings ordered by shots (most first) on a grid of sizes within 10% of
// each other and, up to [FitForward] settings, the subsets of a forward
// selection that adds, one at a time, the setting that lowers the bound
// most.
//
// The returned plan lists each kept setting once, with cover counts for h
// and no drawn terms (its shots are not draws of a term), and its strategy
// name is p's with "+cost" appended.
//
// FitCost returns an error wrapping [ErrCost] if a cost is negative or not
// finite, ShotCost is zero, or the budget pays for no shot on any setting,
// and an error if p does not fit h or delta is outside (0, 1).
func FitCost(h *hamiltonian.Hamiltonian, p *Plan, cost CostModel, delta float64) (*Plan, float64, error) {
	for _, v := range []float64{cost.ShotCost, cost.CircuitCost, cost.Budget} {
		if v < 0 || math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, 0, fmt.Errorf("%w: costs and budget must be finite and non-negative, got %+v", ErrCost, cost)
		}
	}
	if cost.ShotCost == 0 {
		return nil, 0, fmt.Errorf("%w: ShotCost is zero, so any budget buys unbounded shots", ErrCost)
	}
	if !(delta > 0 && delta < 1) {
		return nil, 0, fmt.Errorf("allocate: δ = %v, want a value in (0, 1)", delta)
	}
	if h == nil || p == nil || len(p.Settings) == 0 {
		return nil, 0, fmt.Errorf("allocate: nil Hamiltonian or empty plan")
	}
	if err := checkFinite(h.Coeffs(), h); err != nil {
		return nil, 0, err
	}
	settings, shots := p.Distinct()
	for _, s := range settings {
		if s.Qubits() != h.Qubits() {
			return nil, 0, fmt.Errorf("allocate: setting %s has %d qubits, Hamiltonian has %d", s, s.Qubits(), h.Qubits())
		}
	}
	f := &fitter{h: h, l: math.Log(2 / delta), shots: shots, cost: cost}
	t := h.Table()
	for _, s := range settings {
		f.covers = append(f.covers, t.Covered(nil, s))
	}
	var subsets [][]int
	if len(settings) <= FitExhaustive {
		for mask := 1; mask < 1<<len(settings); mask++ {
			var sub []int
			for j := range settings {
				if mask&(1<<j) != 0 {
					sub = append(sub, j)
				}
			}
			subsets = append(subsets, sub)
		}
	} else {
		order := make([]int, len(settings))
		for j := range order {
			order[j] = j
		}
		slices.SortStableFunc(order, func(a, b int) int { return shots[b] - shots[a] })
		for k := 1; k <= len(order); k = max(k+1, k*11/10) {
			subsets = append(subsets, slices.Clone(order[:k]))
		}
		subsets = append(subsets, order)
		if len(settings) <= FitForward {
			subsets = append(subsets, f.forward(len(settings))...)
		}
	}
	best, bestM := math.Inf(1), []int(nil)
	var bestS []int
	for _, sub := range subsets {
		m, ok := f.shares(sub)
		if !ok {
			continue
		}
		if b := f.bound(sub, m); b < best {
			best, bestS, bestM = b, sub, m
		}
	}
	if bestS == nil {
		return nil, 0, fmt.Errorf("%w: budget %g pays for no shot (a circuit costs %g, a shot %g)", ErrCost, cost.Budget, cost.CircuitCost, cost.ShotCost)
	}
	q := &Plan{Qubits: p.Qubits, Stats: p.Stats}
	q.Stats.Strategy = p.Stats.Strategy + "+cost"
	for k, j := range bestS {
		if bestM[k] > 0 {
			q.Settings = append(q.Settings, settings[j])
			q.Shots = append(q.Shots, bestM[k])
		}
	}
	q.Cover = make([]int, h.Len())
	countCover(q.Cover, t, q.Settings, q.Shots)
	return q, best, nil
}

type fitter struct {
	h      *hamiltonian.Hamiltonian
	l      float64
	shots  []int
	covers [][]int
	cost   CostModel
}

// shares gives the settings of sub the most shots the budget allows, in
// proportion to their shots in the plan, by largest remainder; ok is false
// when the budget pays for no shot.
func (f *fitter) shares(sub []int) ([]int, bool) {
	left := f.cost.Budget - float64(len(sub))*f.cost.CircuitCost
	if left < f.cost.ShotCost {
		return nil, false
	}
	n := int(math.Min(math.Floor(left/f.cost.ShotCost), float64(MaxShots)))
	w := make([]float64, len(sub))
	for k, j := range sub {
		w[k] = float64(f.shots[j])
	}
	return largestRemainder(n, w), true
}

// bound is the certified bound of MATH.md §3.1 of the settings sub with
// shots m: sqrt(2 V ln(2/δ)) + Σ_{N_i = 0} |h_i|.
func (f *fitter) bound(sub []int, m []int) float64 {
	cover := make([]int, f.h.Len())
	for k, j := range sub {
		for _, i := range f.covers[j] {
			cover[i] += m[k]
		}
	}
	v := 0.0
	for k, j := range sub {
		if m[k] == 0 {
			continue
		}
		s := 0.0
		for _, i := range f.covers[j] {
			s += math.Abs(f.h.Coeff(i)) / float64(cover[i])
		}
		v += float64(m[k]) * s * s
	}
	bias := 0.0
	for i, c := range cover {
		if c == 0 {
			bias += math.Abs(f.h.Coeff(i))
		}
	}
	return math.Sqrt(2*v*f.l) + bias
}

// forward grows a subset from nothing, adding each time the setting whose
// addition gives the lowest bound, and returns every subset on the way.
func (f *fitter) forward(n int) [][]int {
	var out [][]int
	var cur []int
	in := make([]bool, n)
	for len(cur) < n {
		best, pick := math.Inf(1), -1
		for j := range n {
			if in[j] {
				continue
			}
			sub := append(slices.Clone(cur), j)
			m, ok := f.shares(sub)
			if !ok {
				continue
			}
			if b := f.bound(sub, m); b < best {
				best, pick = b, j
			}
		}
		if pick < 0 {
			break
		}
		in[pick] = true
		cur = append(cur, pick)
		out = append(out, slices.Clone(cur))
	}
	return out
}
