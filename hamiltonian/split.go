package hamiltonian

import (
	"errors"
	"fmt"
	"math"

	"github.com/shotplan/shotplan/internal/inputcap"
	"github.com/shotplan/shotplan/pauli"
)

// A Split says how a plan's estimate divides each listed term's
// coefficient among the distinct settings that measure it (coefficient
// splitting, MATH.md §2.5): group g estimates O_g = Σ_i α_{ig} h_i P_i from
// its own shots, and the estimate of term i is Σ_g α_{ig}·mean_g(s_i), the
// weights α_{ig} of a listed term adding up to one over the groups that list
// it. A term that no group lists keeps the implicit weights m_g/N_i of the
// grouped estimator of MATH.md §2 (its mean over every shot that covers it),
// so a nil Split is that estimator unchanged.
//
// The Split lives in this package, below allocate (which makes it: the
// field allocate.Plan.Split) and estimate (which uses it:
// estimate.Options.Split), because estimate does not import allocate; it
// names terms by their index in the Hamiltonian the plan was made for.
type Split []SplitGroup

// SplitGroup is one distinct setting's part of a [Split]: the terms it
// estimates with their weights α_{ig}, in matching order.
type SplitGroup struct {
	Setting pauli.Setting
	Terms   []int
	Weights []float64
}

// ErrSplit is wrapped by every error of [Split.Check].
var ErrSplit = errors.New("hamiltonian: invalid coefficient split")

// splitTolerance is how far the weights of a term may add up from one:
// a few thousand roundings of numbers of order one.
const splitTolerance = 1e-9

// Check returns an error wrapping [ErrSplit], naming the setting or term,
// unless s is a valid split for h and the plan that measures settings[k]
// for shots[k] shots: every group's setting has h's width, is measured by
// the plan (with at least one shot) and appears in one group only; Terms
// and Weights have equal lengths; every listed term is a term of h, listed
// once per group and covered by the group's setting; every weight is finite
// and non-negative; and the weights of every listed term add up to one
// (within 1e-9). A nil or empty split is valid.
func (s Split) Check(h *Hamiltonian, settings []pauli.Setting, shots []int) error {
	if len(s) == 0 {
		return nil
	}
	if h == nil {
		return fmt.Errorf("%w: nil Hamiltonian", ErrSplit)
	}
	if len(settings) != len(shots) {
		return fmt.Errorf("%w: %d settings but %d shot counts", ErrSplit, len(settings), len(shots))
	}
	measured := make(map[string]bool, len(settings))
	for k, st := range settings {
		if shots[k] > 0 {
			measured[st.Key()] = true
		}
	}
	seen := make(map[string]int, len(s))
	sum := make([]float64, h.Len())
	listed := make([]bool, h.Len())
	inGroup := make([]int, h.Len()) // 1 + the last group that listed the term
	tab := h.Table()
	for g, gr := range s {
		name := clipSetting(gr.Setting)
		if gr.Setting.Qubits() != h.Qubits() {
			return fmt.Errorf("%w: group %d (%s) has %d qubits, Hamiltonian has %d", ErrSplit, g, name, gr.Setting.Qubits(), h.Qubits())
		}
		key := gr.Setting.Key()
		if !measured[key] {
			return fmt.Errorf("%w: group %d: setting %s is not measured by the plan", ErrSplit, g, name)
		}
		if j, ok := seen[key]; ok {
			return fmt.Errorf("%w: groups %d and %d have the same setting %s", ErrSplit, j, g, name)
		}
		seen[key] = g
		if len(gr.Terms) != len(gr.Weights) {
			return fmt.Errorf("%w: group %d (%s) has %d terms but %d weights", ErrSplit, g, name, len(gr.Terms), len(gr.Weights))
		}
		for k, i := range gr.Terms {
			if i < 0 || i >= h.Len() {
				return fmt.Errorf("%w: group %d (%s) lists term %d, outside [0, %d)", ErrSplit, g, name, i, h.Len())
			}
			if inGroup[i] == g+1 {
				return fmt.Errorf("%w: group %d (%s) lists term %d (%s) twice", ErrSplit, g, name, i, clipPauli(h.Pauli(i)))
			}
			inGroup[i] = g + 1
			w := gr.Weights[k]
			if math.IsNaN(w) || math.IsInf(w, 0) || w < 0 {
				return fmt.Errorf("%w: group %d (%s): term %d (%s) has weight %v, want a finite non-negative number", ErrSplit, g, name, i, clipPauli(h.Pauli(i)), w)
			}
			if !tab.CoversRow(i, gr.Setting) {
				return fmt.Errorf("%w: group %d: setting %s does not cover term %d (%s)", ErrSplit, g, name, i, clipPauli(h.Pauli(i)))
			}
			sum[i] += w
			listed[i] = true
		}
	}
	for i, ok := range listed {
		if ok && math.Abs(sum[i]-1) > splitTolerance {
			return fmt.Errorf("%w: the weights of term %d (%s) add up to %.17g, want 1", ErrSplit, i, clipPauli(h.Pauli(i)), sum[i])
		}
	}
	return nil
}

// Listed returns, for a Hamiltonian of m terms, which terms s lists in
// some group (the others keep the implicit weights). Terms outside [0, m)
// are ignored.
func (s Split) Listed(m int) []bool {
	out := make([]bool, m)
	for _, gr := range s {
		for _, i := range gr.Terms {
			if i >= 0 && i < m {
				out[i] = true
			}
		}
	}
	return out
}

// Groups returns the index of s's group of every setting, by the setting's
// [pauli.Setting.Key].
func (s Split) Groups() map[string]int {
	out := make(map[string]int, len(s))
	for g, gr := range s {
		out[gr.Setting.Key()] = g
	}
	return out
}

// Entries returns the number of (setting, term) pairs s lists.
func (s Split) Entries() int {
	n := 0
	for _, gr := range s {
		n += len(gr.Terms)
	}
	return n
}

// clipSetting and clipPauli shorten a long setting or string for an error
// message.
func clipSetting(s pauli.Setting) string { return inputcap.Clip(s.String()) }
func clipPauli(p pauli.String) string    { return inputcap.Clip(p.String()) }
