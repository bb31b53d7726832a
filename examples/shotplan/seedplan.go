package main

import (
	"errors"
	"fmt"
	"io"
	"strings"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/guarantee"
	"github.com/shotplan/shotplan/hamiltonian"
)

// planBySeed writes the seed plan of an i.i.d. strategy (plan -by-seed):
// its distribution and seed, never its shots, so any -shots up to
// allocate.MaxShots takes the same few lines.
func (e *env) planBySeed(h *hamiltonian.Hamiltonian, hamPath string, a allocate.Allocator, shots int, out string) error {
	sp, err := allocate.NewSeedPlan(h, shots, a)
	switch {
	case errors.Is(err, allocate.ErrNotIID):
		return badf("-by-seed: strategy %s does not draw its shots independently; -by-seed is for random, biased and importance (leave it out to write the compact plan)", allocate.Name(a))
	case errors.Is(err, allocate.ErrBudget):
		return badf("-shots %d: a seed plan holds 1 to %d shots", shots, allocate.MaxShots)
	case errors.Is(err, allocate.ErrEmpty) || errors.Is(err, allocate.ErrNonFinite):
		return badf("%s: %w", hamPath, err)
	case err != nil:
		return err
	}
	if err := e.writeOutput(out, func(w io.Writer) error { return allocate.WriteSeedPlan(w, sp) }); err != nil {
		return err
	}
	res := struct {
		Output   string `json:"output"`
		Strategy string `json:"strategy"`
		Seed     uint64 `json:"seed"`
		Qubits   int    `json:"qubits"`
		Terms    int    `json:"terms"`
		Shots    int    `json:"shots"`
		Layout   string `json:"layout"`
	}{out, sp.Strategy, sp.Seed, sp.Qubits, sp.Terms, sp.Shots, "seed"}
	if e.json {
		return e.writeJSON(res)
	}
	fmt.Fprintf(e.stdout, "wrote %s: %s strategy, %d shots stored as their seed and distribution (each shot regenerated when read)\n", outName(out), res.Strategy, res.Shots)
	return nil
}

// certifySeed certifies a seed plan too large to expand from its
// distribution alone (MATH.md §4.1): the bound is for the mean of the
// single-shot values X of i.i.d. draws.
func (e *env) certifySeed(h *hamiltonian.Hamiltonian, sp *allocate.SeedPlan, hamPath, planPath string, delta float64) error {
	d, err := guarantee.SeedDistribution(h, sp)
	if err != nil {
		return err
	}
	c, err := guarantee.CertifyIID(h, d, sp.Shots, delta)
	if err != nil {
		return err
	}
	if e.json {
		return e.writeJSON(struct {
			Shots     int     `json:"shots"`
			Delta     float64 `json:"delta"`
			Bound     float64 `json:"certified_bound"`
			Radius    float64 `json:"radius"`
			Bias      float64 `json:"bias"`
			Uncovered int     `json:"uncovered"`
			Width     float64 `json:"width"`
			OneNorm   float64 `json:"one_norm"`
			From      string  `json:"certified_from"`
		}{c.Shots, c.Delta, c.Bound, c.Radius, c.Bias, c.Uncovered, c.Width, h.OneNorm(), "distribution"})
	}
	var b strings.Builder
	fmt.Fprintf(&b, "%s on %s: certified before any shot, for every state (shot noise only)\n", planPath, hamPath)
	fmt.Fprintf(&b, "certified from the %s distribution the %d shots are drawn from, i.i.d. (about %s expanded, too many to certify shot by shot);\n",
		sp.Strategy, sp.Shots, formatBytes(float64(sp.PlanBytes())))
	fmt.Fprintf(&b, "the bound is for the mean of the single-shot values X (MATH.md §4.1)\n")
	fmt.Fprintf(&b, "shots %d, δ %g (confidence %g)\n", c.Shots, c.Delta, 1-c.Delta)
	fmt.Fprintf(&b, "certified bound ± %.6g (radius %.6g + bias %.6g)\n", c.Bound, c.Radius, c.Bias)
	fmt.Fprintf(&b, "width %.6g of X's range; %s never measured\n", c.Width, plural(c.Uncovered, "term"))
	_, err = io.WriteString(e.stdout, b.String())
	return err
}
