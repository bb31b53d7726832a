package main

import (
	"bufio"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"strings"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/pauli"
)

// strategyNotes describes the built-in strategies in -h; a name that
// allocate.Names lists and this map lacks is still listed.
var strategyNotes = map[string]string{
	"greedy":     "greedy one-norm descent (ShadowGrouping, arXiv:2301.03385)",
	"derand":     "derandomized classical shadows (arXiv:2103.07510)",
	"random":     "uniformly random bases, classical shadows (arXiv:2002.08953)",
	"biased":     "locally biased random bases (arXiv:2006.15788)",
	"sorted":     "sorted insertion, shots ∝ group one-norm (arXiv:1908.06942)",
	"importance": "single-term importance sampling (closed-form baseline)",
	"fixed":      "your own settings from -settings, cycled",
	"sorted-gc":  "sorted insertion by general commutation, entangled settings (arXiv:1908.06942)",
	"color-gc":   "largest-degree-first colouring by general commutation, entangled settings",
	"greedy-gc":  "greedy one-norm descent grown as commuting families, entangled settings",
	"overlap":    "overlapped grouping with iterative coefficient splitting (arXiv:2105.13091, arXiv:2201.01471); the plan carries the split",
	"overlap-gc": "overlap on generally commuting groups, entangled settings; the plan carries the split",
}

func strategyHelp() string {
	var b strings.Builder
	b.WriteString("\nstrategies (-strategy):\n")
	for _, n := range allocate.Names() {
		fmt.Fprintf(&b, "  %-10s %s\n", n, strategyNotes[n])
	}
	return b.String()
}

func planFlags(fs *flag.FlagSet, e *env) func() error {
	ham := fs.String("ham", "", "Hamiltonian file (required)")
	strategy := fs.String("strategy", "greedy", "allocation `strategy`, any case: "+strings.Join(allocate.Names(), ", "))
	shots := fs.Int("shots", 1000, "number of shots to plan")
	seed := fs.Uint64("seed", 1, "seed of the random strategies (recorded in the plan file)")
	settings := fs.String("settings", "", "file of settings, one per line such as XXYZ, for -strategy fixed")
	out := fs.String("o", "", "output plan file (required; - for standard output): a name ending in .json gets the first layout, one entry per run of shots in measurement order; any other name (such as plan.jsonl) the compact one, one line per distinct setting")
	shotLimit := fs.Int("shot-limit", 0, fmt.Sprintf("refuse more shots than this with a strategy that chooses a setting for every shot (0: %d for a compact plan, %d for a .json one)", defaultCompactShotLimit, defaultShotLimit))
	shotCost := fs.Float64("shot-cost", 1, "with -cost-budget: the cost (time) of one shot")
	circuitCost := fs.Float64("circuit-cost", 0, "with -cost-budget: the cost (time) of each distinct setting, such as compiling and loading its circuit")
	costBudget := fs.Float64("cost-budget", 0, "fit the plan to this cost: keep the settings and total shots that minimise the certified bound at -delta, with shots × -shot-cost + settings × -circuit-cost at most this (0: off)")
	delta := fs.Float64("delta", 0.05, "with -cost-budget: the failure probability of the certified bound it minimises; with -observables: of all the certificates together")
	observables := fs.String("observables", "", "with an FCIDUMP -ham: plan for the energy and these observables (N, Sz, S2, comma-separated) together, each certified to its -targets; -shots is then the largest budget tried")
	targets := fs.String("targets", "", "with -observables: the accuracy of each observable, the energy's first, comma-separated (such as 0.0016,0.05,0.05,0.1)")
	proxy := fs.String("proxy", "worst", "for "+proxyStrategies+": give group g shots ∝ the standard deviation of its terms' sum in this state instead of ∝ their one-norm; "+proxyUsage)
	sf := addSectorFlags(fs)
	bySeed := fs.Bool("by-seed", false, "with -strategy random, biased or importance: write a seed plan, the strategy's distribution and -seed from which every shot is regenerated when read, a few lines whatever -shots (-o not ending in .json)")
	return func() error {
		if err := e.positional(0, ""); err != nil {
			return err
		}
		if err := need("o", *out); err != nil {
			return err
		}
		if err := notInput(*out, *ham, *settings); err != nil {
			return err
		}
		if err := e.output(*out); err != nil {
			return err
		}
		a, err := allocate.ByName(*strategy, *seed)
		if err != nil {
			return bad(err)
		}
		if *shots < 1 {
			return badf("-shots %d: want at least 1", *shots)
		}
		if p := strings.TrimSpace(*proxy); p != "worst" && p != "" && !setProxy(a, nil) {
			return badf("-proxy %s: strategy %s does not weigh groups; -proxy is for %s", *proxy, *strategy, proxyStrategies)
		}
		h, px, err := readHamProxy(*ham, *proxy, sf)
		if err != nil {
			return err
		}
		setProxy(a, px.proxy)
		if f, ok := a.(*allocate.Fixed); ok {
			if f.Settings, err = readSettings(*settings, h.Qubits()); err != nil {
				return err
			}
		} else if *settings != "" {
			return badf("-settings is for -strategy fixed, not %s", *strategy)
		}
		if *bySeed {
			switch {
			case *costBudget != 0 || *observables != "" || *targets != "":
				return badf("-by-seed cannot be combined with -cost-budget, -observables or -targets")
			case isJSON(*out):
				return badf("-o %s: -by-seed writes a seed plan, one JSON object a line; choose a name not ending in .json (such as plan.jsonl)", *out)
			}
			return e.planBySeed(h, *ham, a, *shots, *out)
		}
		limit := *shotLimit
		if limit <= 0 {
			limit = defaultCompactShotLimit
			if isJSON(*out) {
				limit = defaultShotLimit
			}
		}
		if err := checkShotLimit(*strategy, a, *shots, limit, h.Qubits()); err != nil {
			return err
		}
		if *observables != "" {
			if *costBudget != 0 {
				return badf("-observables cannot be combined with -cost-budget")
			}
			return e.planForObservables(h, *ham, *observables, *targets, a, *delta, *shots, *out, *seed)
		}
		if *targets != "" {
			return badf("-targets is for -observables")
		}
		report, done := e.planProgress("planning " + *strategy)
		// The compact layout merges every repeat anyway: merge while planning.
		p, err := allocate.Run(h, *shots, a, &allocate.Options{Progress: report, Compact: !isJSON(*out)})
		done()
		if errors.Is(err, allocate.ErrEmpty) || errors.Is(err, allocate.ErrTooManyQubits) {
			return badf("%s: %w", *ham, err)
		}
		if err != nil {
			return err
		}
		if *costBudget != 0 {
			if err := checkDelta(*delta); err != nil {
				return err
			}
			p, _, err = allocate.FitCost(h, p, allocate.CostModel{ShotCost: *shotCost, CircuitCost: *circuitCost, Budget: *costBudget}, *delta)
			if err != nil {
				return bad(err)
			}
		}
		write := allocate.WriteCompactPlan
		if isJSON(*out) {
			write = allocate.WritePlan
		}
		if err := e.writeOutput(*out, func(w io.Writer) error { return write(w, p, *seed) }); err != nil {
			return err
		}
		distinct, _ := p.Distinct()
		uncovered := 0
		for _, c := range p.Cover {
			if c == 0 {
				uncovered++
			}
		}
		res := struct {
			Output    string  `json:"output"`
			Strategy  string  `json:"strategy"`
			Seed      uint64  `json:"seed"`
			Qubits    int     `json:"qubits"`
			Terms     int     `json:"terms"`
			Shots     int     `json:"shots"`
			Settings  int     `json:"settings"`
			Uncovered int     `json:"uncovered"`
			Proxy     string  `json:"proxy"`
			Seconds   float64 `json:"seconds"`
		}{*out, p.Stats.Strategy, *seed, p.Qubits, len(p.Cover), p.TotalShots(), len(distinct), uncovered, px.name, p.Stats.Elapsed.Seconds()}
		if e.json {
			return e.writeJSON(res)
		}
		fmt.Fprintf(e.stdout, "wrote %s: %s strategy, %d shots on %s", outName(*out), res.Strategy, res.Shots, plural(res.Settings, "distinct setting"))
		if uncovered > 0 {
			fmt.Fprintf(e.stdout, "; %s never measured", plural(uncovered, "term"))
		}
		fmt.Fprintln(e.stdout)
		if px.proxy != nil {
			fmt.Fprintf(e.stdout, "group shares from the proxy: %s\n", px.name)
		}
		return nil
	}
}

// readSettings reads a file of settings, one per line; blank lines and
// text after '#' are ignored.
func readSettings(path string, qubits int) ([]pauli.Setting, error) {
	if path == "" {
		return nil, badf("-strategy fixed needs -settings FILE (one setting per line)")
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, bad(err)
	}
	defer f.Close()
	var out []pauli.Setting
	sc := bufio.NewScanner(f)
	for line := 1; sc.Scan(); line++ {
		text, _, _ := strings.Cut(sc.Text(), "#")
		text = strings.TrimSpace(text)
		if text == "" {
			continue
		}
		s, err := pauli.ParseSetting(text)
		if err != nil {
			return nil, badf("%s: line %d: %w", path, line, err)
		}
		if s.Qubits() != qubits {
			return nil, badf("%s: line %d: setting %s has %d qubits, the Hamiltonian %d", path, line, text, s.Qubits(), qubits)
		}
		out = append(out, s)
	}
	if err := sc.Err(); err != nil {
		return nil, badf("%s: %w", path, err)
	}
	if len(out) == 0 {
		return nil, badf("%s: no settings", path)
	}
	return out, nil
}
