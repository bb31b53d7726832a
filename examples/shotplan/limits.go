package main

import (
	"flag"
	"fmt"
	"math"
	"strconv"
	"strings"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/pauli"
)

// The command's resource limits. Each is checked against an estimate of
// the cost made before any work starts, and each can be raised by a flag;
// the README's "Limits and bad input" lists them.
const (
	// defaultShotLimit bounds -shots for the strategies that choose a
	// setting for every shot: their plan holds up to one entry per shot,
	// and their run time grows as shots × terms.
	defaultShotLimit = 1_000_000
	// defaultCompactShotLimit is that bound when the plan is written in the
	// compact layout: the run then merges every repeat as it goes, so its
	// memory grows with the distinct settings (at most 3^n), and the bound
	// guards the run time. Measured on LiH (12 qubits, 630 terms), random
	// strategy, 10^7 shots: 33 s and 328 MB peak resident size compact,
	// 138 s and 3.0 GB with a .json output (README, "Limits").
	defaultCompactShotLimit = 10_000_000
	// defaultMemoryLimit bounds the memory that info -exact and simulate
	// may plan to use for the exact ground state and the outcomes.
	defaultMemoryLimit = 2 << 30
	// defaultProgramLimit bounds the number of program files of export.
	defaultProgramLimit = 10_000
	// planEntryBytes is the memory one entry of a shot-by-shot plan takes,
	// with its share of the run's bookkeeping: at most about 450 bytes
	// measured at 12 qubits (random strategy, 10^6 shots, peak resident
	// size), plus the letters of wider settings.
	planEntryBytes = 512
	// planFileEntryBytes is the size of one entry of a plan file:
	// {"setting": "...", "shots": k}, one line, plus the setting's letters.
	planFileEntryBytes = 32
)

// byteSize is a flag holding a number of bytes, written as 2GiB, 500MB,
// 1.5GiB or a plain number of bytes.
type byteSize float64

func (b *byteSize) String() string { return formatBytes(float64(*b)) }

func (b *byteSize) Set(s string) error {
	v, err := parseBytes(s)
	if err != nil {
		return err
	}
	*b = byteSize(v)
	return nil
}

// memoryLimitFlag defines -memory-limit on fs.
func memoryLimitFlag(fs *flag.FlagSet, what string) *byteSize {
	b := byteSize(defaultMemoryLimit)
	fs.Var(&b, "memory-limit", "refuse to start when "+what+" would need more memory than this (such as 8GiB or 500MB)")
	return &b
}

var byteUnits = []struct {
	suffix string
	scale  float64
}{
	{"kib", 1 << 10}, {"mib", 1 << 20}, {"gib", 1 << 30}, {"tib", 1 << 40},
	{"kb", 1e3}, {"mb", 1e6}, {"gb", 1e9}, {"tb", 1e12}, {"b", 1},
}

// parseBytes parses a size such as 2GiB, 500MB, 1.5gib or 1000000.
func parseBytes(s string) (float64, error) {
	t := strings.ToLower(strings.TrimSpace(s))
	scale := 1.0
	for _, u := range byteUnits {
		if rest, ok := strings.CutSuffix(t, u.suffix); ok {
			t, scale = strings.TrimSpace(rest), u.scale
			break
		}
	}
	v, err := strconv.ParseFloat(t, 64)
	if err != nil || !(v > 0) || math.IsInf(v, 0) {
		return 0, fmt.Errorf("%q is not a size such as 2GiB, 500MB or 1000000", s)
	}
	return v * scale, nil
}

// formatBytes writes a size with a binary unit: "4.3 GiB".
func formatBytes(b float64) string {
	units := []string{"bytes", "KiB", "MiB", "GiB", "TiB", "PiB", "EiB"}
	k := 0
	for b >= 1024 && k < len(units)-1 {
		b /= 1024
		k++
	}
	if k == 0 {
		return fmt.Sprintf("%.0f bytes", b)
	}
	return fmt.Sprintf("%.3g %s", b, units[k])
}

// exactBytes estimates the memory of the exact ground state of n qubits
// (hamiltonian.GroundState with its default settings): KrylovDim + 2
// vectors of 2^n complex128 amplitudes, KrylovDim being 40 lowered above 22
// qubits as that function documents, plus the returned state.
func exactBytes(n int) float64 {
	dim := math.Ldexp(1, n)
	krylov := 40.0
	if n > 22 {
		krylov = max(10, math.Floor(math.Ldexp(4, 30-4-n))-2)
	}
	return (krylov + 3) * dim * 16
}

// checkMemory refuses a step whose estimated memory exceeds the limit.
func checkMemory(what string, need float64, limit *byteSize) error {
	if need > float64(*limit) {
		return badf("%s would need about %s of memory, over -memory-limit %s (raise -memory-limit to run it anyway)", what, formatBytes(need), limit)
	}
	return nil
}

// shotByShot reports whether a strategy chooses a setting for every shot
// (it does not plan batches of shots per setting).
func shotByShot(a allocate.Allocator) bool {
	_, batches := a.(allocate.Batcher)
	return !batches
}

// checkShotLimit refuses more than limit shots for a strategy that chooses
// a setting for every shot, giving the estimated size of the plan.
func checkShotLimit(name string, a allocate.Allocator, shots, limit, qubits int) error {
	if !shotByShot(a) || shots <= limit {
		return nil
	}
	entries := float64(shots)
	mem := entries * float64(planEntryBytes+2*((qubits+63)/64)*8)
	file := entries * float64(planFileEntryBytes+qubits)
	return badf("-shots %d: strategy %s chooses a setting for every shot, so the plan may hold up to %d entries (up to about %s of memory and a %s file, and a run time growing as shots × terms); the limit is %d (raise -shot-limit to run it anyway, use a strategy that plans by groups such as sorted, or for random, biased and importance write a seed plan with -by-seed)",
		shots, name, shots, formatBytes(mem), formatBytes(file), limit)
}

// simulateBytes estimates the memory of simulate: the exact ground state,
// the simulator's cache of outcome distributions (at most 256 MiB, or one
// distribution of 2^n float64 when that is larger) and, per shot, the
// outcome word the simulator draws and the one the records keep.
func simulateBytes(n, shots int, c chosenSector) float64 {
	return groundBytes(n, c) + max(256<<20, math.Ldexp(8, n)) + 16*float64(shots)
}

// groundBytes estimates the memory of the exact ground state in the chosen
// sector: the solver's vectors over the sector (as exactBytes, over its
// dimension) plus the state expanded to the whole space, or exactBytes for
// the whole space.
func groundBytes(n int, c chosenSector) float64 {
	if c.sector == nil {
		return exactBytes(n)
	}
	return 43*16*float64(c.sector.Dim(n)) + math.Ldexp(16, n)
}

// checkPrograms refuses to export more distinct settings than limit as
// program files, pointing to the compact form.
func checkPrograms(distinct []pauli.Setting, limit int) error {
	if len(distinct) <= limit {
		return nil
	}
	local := true
	for _, s := range distinct {
		local = local && s.IsLocal()
	}
	advice := "-one-program writes one program whose inputs choose the setting"
	if !local {
		advice = "the plan has entangled settings, which need their own programs; plan with fewer distinct settings (such as -strategy sorted-gc)"
	}
	return badf("the plan has %d distinct settings: %d program files are over -program-limit %d (%s, or raise -program-limit)", len(distinct), len(distinct), limit, advice)
}

// programs is the number of program files export writes.
func programs(distinct []pauli.Setting, one bool) int {
	if one {
		return 1
	}
	return len(distinct)
}
