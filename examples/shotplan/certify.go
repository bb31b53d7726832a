package main

import (
	"flag"
	"fmt"
	"strings"

	"github.com/shotplan/shotplan/guarantee"
)

func certifyFlags(fs *flag.FlagSet, e *env) func() error {
	ham := fs.String("ham", "", "Hamiltonian file (required)")
	plan := fs.String("plan", "", "plan file (required)")
	delta := fs.Float64("delta", 0.05, "failure probability δ: the bound holds with probability at least 1 − δ")
	top := fs.Int("top", 5, "list the `N` terms with the largest share of the bound (0: none)")
	return func() error {
		if err := e.positional(0, ""); err != nil {
			return err
		}
		if err := checkDelta(*delta); err != nil {
			return err
		}
		h, f, sp, err := loadHamPlanOrSeed(*ham, *plan)
		if err != nil {
			return err
		}
		if sp != nil {
			// A seed plan too large to expand: certify it from its
			// distribution, without drawing its shots.
			return e.certifySeed(h, sp, *ham, *plan, *delta)
		}
		// Options.Top counts zero as its default of 10: ask for none
		// with a negative value.
		n := *top
		if n <= 0 {
			n = -1
		}
		c, err := guarantee.CertifyPlan(h, f.Plan, *delta, &guarantee.Options{Top: n})
		if err != nil {
			return err
		}
		if e.json {
			type term struct {
				Term  int     `json:"term"`
				Pauli string  `json:"pauli"`
				Coeff float64 `json:"coeff"`
				Cover int     `json:"cover"`
				Share float64 `json:"share"`
			}
			type trunc struct {
				Dropped int     `json:"dropped"`
				Bound   float64 `json:"bound"`
			}
			out := struct {
				Shots      int     `json:"shots"`
				Settings   int     `json:"settings"`
				Delta      float64 `json:"delta"`
				Bound      float64 `json:"certified_bound"`
				Radius     float64 `json:"radius"`
				Bias       float64 `json:"bias"`
				Uncovered  int     `json:"uncovered"`
				ScaledNorm float64 `json:"scaled_one_norm"`
				OneNorm    float64 `json:"one_norm"`
				Relaxed    float64 `json:"relaxed_bound"`
				Variance   float64 `json:"variance"`
				Top        []term  `json:"top"`
				Threshold  trunc   `json:"truncation_threshold"`
				Optimal    trunc   `json:"truncation_optimal"`
			}{c.Shots, c.Settings, c.Delta, c.Bound, c.Radius, c.Bias, c.Uncovered, c.ScaledOneNorm, h.OneNorm(), c.RelaxedRadius + c.Bias, c.Variance,
				[]term{}, trunc{c.Threshold.Dropped, c.Threshold.Bound}, trunc{c.Optimal.Dropped, c.Optimal.Bound}}
			for _, t := range c.Top {
				out.Top = append(out.Top, term{t.Term, t.Pauli.String(), t.Coeff, t.Cover, t.Share})
			}
			return e.writeJSON(out)
		}
		fmt.Fprintf(e.stdout, "%s on %s: certified before any shot, for every state (shot noise only)\n", *plan, *ham)
		fmt.Fprintln(e.stdout, strings.TrimRight(c.String(), "\n"))
		return nil
	}
}

func certifyHelp() string {
	return `
The bound holds with probability at least 1 − δ for every state, counting shot
noise only (ideal, independent shots of one state); the plan must be fixed
before the data.

JSON keys: certified_bound = radius + bias; radius is the shot-wise
Hoeffding radius; bias bounds the terms no shot measures; scaled_one_norm is
Σ|h_i|/sqrt(N_i), the plan's figure of merit (ShadowGrouping), and
relaxed_bound = scaled_one_norm·sqrt(2 ln(2/δ)) + bias the looser bound it
gives; one_norm is Σ|h_i| (as in info); top lists the terms with the largest
share of the certified bound; truncation_* give the bound after dropping terms.
`
}
