package main

import (
	"errors"
	"flag"
	"fmt"
	"math"
	"slices"
	"strings"
	"text/tabwriter"
	"time"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/guarantee"
	"github.com/shotplan/shotplan/hamiltonian"
)

// budgetRow is one strategy's line of the budget table.
type budgetRow struct {
	Strategy  string  `json:"strategy"`
	Reference int     `json:"reference_shots"`
	Settings  int     `json:"settings"`
	Bias      float64 `json:"bias"`
	Reachable bool    `json:"reachable"`
	Copies    int     `json:"copies"`
	Shots     int     `json:"certified_shots"`
	Proxy     int     `json:"proxy_shots"`
	Anytime   int     `json:"anytime_shots"`
	Seconds   float64 `json:"seconds"`
	Note      string  `json:"note,omitempty"`
}

func budgetFlags(fs *flag.FlagSet, e *env) func() error {
	ham := fs.String("ham", "", "Hamiltonian file (required)")
	eps := fs.Float64("eps", 0, "target accuracy ε in the Hamiltonian's units, for example 0.0016 (required)")
	delta := fs.Float64("delta", 0.05, "failure probability δ: the bound holds with probability at least 1 − δ")
	strategy := fs.String("strategy", "all", "strategy to answer for, or all: "+strings.Join(allocate.Names(), ", "))
	seed := fs.Uint64("seed", 1, "seed of the random strategies")
	reference := fs.Int("reference", 0, "shots of the reference plan whose copies are counted (default: doubled from max(1000, 2·terms) until every term is measured)")
	proxy := fs.String("proxy", "worst", "variance proxy for the expected figures, and for the group shares of "+proxyStrategies+" (as plan -proxy): "+proxyUsage)
	sf := addSectorFlags(fs)
	return func() error {
		if err := e.positional(0, ""); err != nil {
			return err
		}
		if !(*eps > 0) || math.IsInf(*eps, 0) {
			return badf("-eps %g: want a positive target accuracy (flag -eps is required)", *eps)
		}
		if err := checkDelta(*delta); err != nil {
			return err
		}
		if *reference < 0 {
			return badf("-reference %d: want 0 (automatic) or a number of shots", *reference)
		}
		names := allocate.Names()
		if *strategy != "all" {
			if _, err := allocate.ByName(*strategy, *seed); err != nil {
				return bad(err)
			}
			if *strategy == "fixed" {
				return badf("-strategy fixed has no settings of its own here; plan your settings with shotplan plan and certify them")
			}
			names = []string{*strategy}
		}
		if err := need("ham", *ham); err != nil {
			return err
		}
		h, g, err := readHamAny(*ham)
		if err != nil {
			return bad(err)
		}
		px, err := resolveProxy(*proxy, *ham, h, g, sf)
		if err != nil {
			return err
		}
		if px.proxy != nil && px.state == nil {
			return badf("-proxy %s: %d qubits, the expected figures take a proxy of at most %d", *proxy, h.Qubits(), hamiltonian.MaxExactQubits)
		}
		state, proxyName := px.state, px.name
		var rows []budgetRow
		for _, name := range names {
			if name == "fixed" {
				continue
			}
			row, err := budgetFor(*ham, h, name, *seed, *reference, *eps, *delta, state, px.proxy)
			if err != nil {
				return err
			}
			rows = append(rows, row)
		}
		if e.json {
			return e.writeJSON(struct {
				Epsilon float64     `json:"target"`
				Delta   float64     `json:"delta"`
				Proxy   string      `json:"proxy"`
				Rows    []budgetRow `json:"strategies"`
			}{*eps, *delta, proxyName, rows})
		}
		fmt.Fprintf(e.stdout, "shots for |error| ≤ %g with probability ≥ %g%% on %s (proxy: %s)\n", *eps, 100*(1-*delta), *ham, proxyName)
		width := len("strategy")
		for _, r := range rows {
			width = max(width, len(r.Strategy))
		}
		tw := tabwriter.NewWriter(e.stdout, 0, 0, 2, ' ', tabwriter.AlignRight)
		fmt.Fprintf(tw, "%-*s\treference\tsettings\tcopies\tcertified\tproxy\tanytime\tseconds\t\n", width, "strategy")
		for _, r := range rows {
			if !r.Reachable {
				fmt.Fprintf(tw, "%-*s\t%d\t%d\t-\t-\t-\t-\t%.2f\t\n", width, r.Strategy, r.Reference, r.Settings, r.Seconds)
				continue
			}
			fmt.Fprintf(tw, "%-*s\t%d\t%d\t%d\t%d\t%d\t%d\t%.2f\t\n", width, r.Strategy, r.Reference, r.Settings, r.Copies,
				r.Shots, r.Proxy, r.Anytime, r.Seconds)
		}
		tw.Flush()
		for _, r := range rows {
			if r.Note != "" {
				fmt.Fprintf(e.stdout, "%s: %s\n", r.Strategy, r.Note)
			}
		}
		return nil
	}
}

// budgetFor plans the reference plan of one strategy and counts its copies.
func budgetFor(ham string, h *hamiltonian.Hamiltonian, name string, seed uint64, reference int, eps, delta float64, state []complex128, px allocate.Proxy) (budgetRow, error) {
	start := time.Now()
	row := budgetRow{Strategy: name}
	a, err := allocate.ByName(name, seed)
	if err != nil {
		return row, bad(err)
	}
	setProxy(a, px)
	if _, ok := a.(allocate.Observer); ok {
		row.Note = "adaptive: no plan fixed before the data"
		return row, nil
	}
	// Copies never measure a term the reference plan leaves out, so the
	// automatic reference doubles until every term is measured (or stops
	// at 2^18 shots, and the bias of the rest is reported).
	n, fixed := reference, reference > 0
	if !fixed {
		n = max(1000, 2*h.Len())
	}
	var p *allocate.Plan
	for {
		if p, err = allocate.Run(h, n, a, nil); err != nil {
			return row, runError(ham, err)
		}
		if fixed || !slices.Contains(p.Cover, 0) || n >= 1<<18 {
			break
		}
		n *= 2
	}
	b, err := guarantee.BudgetOf(h, p, eps, delta, state)
	if err != nil {
		return row, fmt.Errorf("%s: %w", name, err)
	}
	row.Reference, row.Settings, row.Bias, row.Reachable = b.Reference, b.Settings, b.Bias, b.Reachable
	row.Copies, row.Shots, row.Proxy, row.Anytime = b.Copies, b.Shots, b.ProxyShots, b.AnytimeShots
	if !b.Reachable {
		row.Note = fmt.Sprintf("terms its reference plan never measures add a bias of %.3g ≥ ε; try a larger -reference", b.Bias)
	} else if b.Bias > 0 {
		row.Note = fmt.Sprintf("terms its reference plan never measures add a bias of %.3g, counted in ε", b.Bias)
	}
	row.Seconds = time.Since(start).Seconds()
	return row, nil
}

// runError marks the driver's refusals of the Hamiltonian itself as input
// errors.
func runError(ham string, err error) error {
	if errors.Is(err, allocate.ErrEmpty) || errors.Is(err, allocate.ErrTooManyQubits) {
		return badf("%s: %w", ham, err)
	}
	return err
}

func budgetHelp() string {
	return `
Each strategy plans once at a reference budget; copies of that plan (every
shot count multiplied by the same whole number) are counted, without
re-planning. Columns:
  copies     the fewest copies whose certified bound (shotplan certify) is ≤ ε
  certified  copies × reference shots: a guarantee for every state
  proxy      shots at which the approximate error bar of shotplan estimate is
             expected to reach ε if the state were the proxy (not a guarantee)
  anytime    shots the anytime route (shotplan rounds) is expected to need:
             2σ²ln(2/δ)/ε² for the single-shot variance σ² under the proxy;
             the price of holding at every round comes on top
With -proxy worst the expected figures use the largest variance over all
states and are close to the certified one. Any other -proxy also gives
sorted, sorted-gc and color-gc their group shares (as plan -proxy): the
reference plan is still fixed before any shot, so its certified count
holds for every state.

JSON keys, per strategy: reference_shots, settings, bias (of terms the
reference plan never measures), reachable (bias < ε), copies,
certified_shots, proxy_shots, anytime_shots, seconds, note.
`
}
