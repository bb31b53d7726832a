package main

import (
	"fmt"
	"math"
	"strings"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/hamiltonian"
	"github.com/shotplan/shotplan/hamiltonian/fermion"
	"github.com/shotplan/shotplan/hamiltonian/molecule"
	"github.com/shotplan/shotplan/pauli"
)

// maxExactProxyQubits caps -proxy exact: the sector's ground state is found
// by the exact solver before any planning.
const maxExactProxyQubits = 20

// proxyUsage is the text of -proxy in plan, budget and rounds start.
const proxyUsage = "classical stand-in for the measured state, computed before any shot: worst (every state), hf (the Hartree–Fock determinant of an FCIDUMP -ham, NELEC and MS2 or -electrons and -spin), exact (the exact ground state of the sector, at most 20 qubits), BITS (a basis state, qubit 0 first), or an amplitude FILE (\"shotplan amplitudes 1\", as simulate -prepare); the plan stays fixed before any shot, so every certificate of it stays rigorous"

// chosenProxy is the state of -proxy.
type chosenProxy struct {
	name  string         // what the output calls it
	proxy allocate.Proxy // nil for worst
	// state is the proxy's 2^n amplitudes, nil for worst or when the
	// width is beyond hamiltonian.MaxExactQubits (a basis state only).
	state []complex128
}

// readHamProxy reads the Hamiltonian file ham (-ham, required) and resolves
// -proxy spec for it with the sector flags.
func readHamProxy(ham, spec string, sf sectorFlags) (*hamiltonian.Hamiltonian, chosenProxy, error) {
	if err := need("ham", ham); err != nil {
		return nil, chosenProxy{}, err
	}
	if err := sf.usedBy([]string{"proxy"}, []string{spec}); err != nil {
		return nil, chosenProxy{}, err
	}
	h, g, err := readHamAny(ham)
	if err != nil {
		return nil, chosenProxy{}, bad(err)
	}
	px, err := resolveProxy(spec, ham, h, g, sf)
	if err != nil {
		return nil, chosenProxy{}, err
	}
	return h, px, nil
}

// resolveProxy reads -proxy for h, read from the file ham (g holds its
// integrals if it is an FCIDUMP file, else nil) and the sector flags.
func resolveProxy(spec string, ham string, h *hamiltonian.Hamiltonian, g *molecule.Integrals, sf sectorFlags) (chosenProxy, error) {
	return resolveState("proxy", spec, ham, h, g, sf)
}

// usedBy refuses -electrons or -spin when none of the flags names (such as
// "proxy", "baseline") has the value hf or exact in specs: the sector flags
// choose the sector of those states only.
func (sf sectorFlags) usedBy(names, specs []string) error {
	if *sf.electrons == "" && *sf.spin == "" {
		return nil
	}
	var given []string
	for k, spec := range specs {
		spec = strings.TrimSpace(spec)
		if spec == "hf" || spec == "exact" {
			return nil
		}
		given = append(given, "-"+names[k]+" "+spec)
	}
	return badf("-electrons and -spin choose the sector of -%s hf or exact, not of %s", strings.Join(names, " or -"), strings.Join(given, " "))
}

// resolveState reads a classical state given as flag -name (-proxy of plan,
// budget and rounds start, -baseline of budget and rounds start) for h:
// worst (no state), hf, exact, a bit string or an amplitude file; see
// resolveProxy. The caller checks the sector flags (sectorFlags.usedBy).
func resolveState(name, spec string, ham string, h *hamiltonian.Hamiltonian, g *molecule.Integrals, sf sectorFlags) (chosenProxy, error) {
	n := h.Qubits()
	spec = strings.TrimSpace(spec)
	switch spec {
	case "worst", "":
		return chosenProxy{name: "worst case over all states"}, nil
	case "hf":
		if g == nil {
			return chosenProxy{}, badf("-%s hf needs an FCIDUMP file as -ham (%s is a qubit Hamiltonian)", name, ham)
		}
		sec, err := sf.resolve(n, g)
		if err != nil {
			return chosenProxy{}, err
		}
		if sec.sector == nil {
			return chosenProxy{}, badf("-%s hf needs a number of electrons, not -electrons all", name)
		}
		gs := *g
		gs.Electrons, gs.SpinTwice = sec.electrons, sec.spinTwice
		b, err := gs.HartreeFockBits(fermion.JordanWigner)
		if err != nil {
			return chosenProxy{}, bad(err)
		}
		px := allocate.BasisProxy{Bits: b}
		return chosenProxy{
			name:  fmt.Sprintf("Hartree–Fock determinant %s (%s, energy %.10f)", b.Format(n), sec, basisEnergy(h, b)),
			proxy: px, state: basisVector(n, b),
		}, nil
	case "exact":
		if n > maxExactProxyQubits {
			return chosenProxy{}, badf("-%s exact: %d qubits, at most %d (use hf, a basis state or an amplitude file)", name, n, maxExactProxyQubits)
		}
		sec, err := sf.resolve(n, g)
		if err != nil {
			return chosenProxy{}, err
		}
		ev, err := groundState(h, sec)
		if err != nil {
			return chosenProxy{}, err
		}
		px, err := allocate.NewStateProxy(ev.State)
		if err != nil {
			return chosenProxy{}, err
		}
		return chosenProxy{name: fmt.Sprintf("exact ground state (%s, energy %.10f)", sec, ev.Energy), proxy: px, state: ev.State}, nil
	}
	if isBitString(spec) {
		b, err := pauli.ParseBits(spec)
		if err != nil || len(spec) != n {
			return chosenProxy{}, badf("-%s %q: a basis state needs %d bits, qubit 0 first (or worst, hf, exact, an amplitude file)", name, spec, n)
		}
		return chosenProxy{name: "basis state " + spec + fmt.Sprintf(" (energy %.10f)", basisEnergy(h, b)), proxy: allocate.BasisProxy{Bits: b}, state: basisVector(n, b)}, nil
	}
	state, err := estimate.ReadAmplitudesFile(spec)
	if err != nil {
		return chosenProxy{}, badf("-%s %q: want worst, hf, exact, a bit string or an amplitude file: %w", name, spec, err)
	}
	if len(state) != 1<<n {
		return chosenProxy{}, badf("-%s %s: the state has %d amplitudes; the Hamiltonian %s has %d qubits (2^%d amplitudes)", name, spec, len(state), ham, n, n)
	}
	norm := 0.0
	for _, a := range state {
		norm += real(a)*real(a) + imag(a)*imag(a)
	}
	for k := range state {
		state[k] /= complex(math.Sqrt(norm), 0)
	}
	px, err := allocate.NewStateProxy(state)
	if err != nil {
		return chosenProxy{}, badf("-%s %s: %w", name, spec, err)
	}
	return chosenProxy{name: fmt.Sprintf("the state of %s (energy %.10f)", spec, h.Energy(state)), proxy: px, state: state}, nil
}

// isBitString reports whether s is made of 0 and 1 only.
func isBitString(s string) bool {
	return s != "" && strings.Trim(s, "01") == ""
}

// basisEnergy returns ⟨b|H|b⟩: the offset plus the diagonal terms, each
// (−1)^{|z∧b|} times its coefficient (MATH.md §7).
func basisEnergy(h *hamiltonian.Hamiltonian, b pauli.Bits) float64 {
	px := allocate.BasisProxy{Bits: b}
	e := h.Offset()
	for _, t := range h.Terms() {
		e += t.Coeff * px.Expect(t.Pauli)
	}
	return e
}

// basisVector returns |b⟩ as 2^n amplitudes, or nil beyond
// hamiltonian.MaxExactQubits.
func basisVector(n int, b pauli.Bits) []complex128 {
	if n > hamiltonian.MaxExactQubits {
		return nil
	}
	v := make([]complex128, 1<<n)
	v[b[0]] = 1
	return v
}

// setProxy gives the proxy to a strategy that weighs its groups by one and
// reports whether it took it.
func setProxy(a allocate.Allocator, px allocate.Proxy) bool {
	switch s := a.(type) {
	case *allocate.Sorted:
		s.Proxy = px
	case *allocate.SortedGC:
		s.Proxy = px
	case *allocate.ColorGC:
		s.Proxy = px
	case *allocate.Overlap:
		s.Proxy = px
	case *allocate.OverlapGC:
		s.Proxy = px
	default:
		return false
	}
	return true
}

// proxyStrategies names the strategies setProxy serves.
const proxyStrategies = "sorted, sorted-gc, color-gc, overlap, overlap-gc"
