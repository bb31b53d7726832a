package main

import (
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"text/tabwriter"

	"github.com/shotplan/shotplan/allocate"
	"github.com/shotplan/shotplan/estimate"
	"github.com/shotplan/shotplan/guarantee"
	"github.com/shotplan/shotplan/internal/scenario"
)

func main() {
	os.Exit(run(os.Args[1:], os.Stdout, os.Stderr))
}

// config is what the flags set.
type config struct {
	shots    int
	seed     uint64
	delta    float64
	strategy string
	top      int
}

func run(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("quickstart", flag.ContinueOnError)
	fs.SetOutput(io.Discard) // parse errors are reported in one line below
	var c config
	fs.IntVar(&c.shots, "shots", 1000, "number of shots to plan and simulate")
	fs.Uint64Var(&c.seed, "seed", 1, "seed of the simulated shots (and of random strategies)")
	fs.Float64Var(&c.delta, "delta", 0.05, "failure probability δ of the certified bound")
	fs.StringVar(&c.strategy, "strategy", "greedy", "allocation strategy, one of "+fmt.Sprint(allocate.Names()))
	fs.IntVar(&c.top, "top", 5, "number of terms listed as dominating the bound")
	fs.Usage = func() {
		fmt.Fprintln(fs.Output(), "usage: quickstart [flags]\n\nPlans, certifies, simulates and estimates the energy of the built-in scenario.")
		fs.PrintDefaults()
	}
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			fs.SetOutput(stdout)
			fs.Usage()
			return 0
		}
		fmt.Fprintf(stderr, "quickstart: %v (see quickstart -h)\n", err)
		return 2
	}
	if err := c.check(fs); err != nil {
		fmt.Fprintf(stderr, "quickstart: %v\n", err)
		return 2
	}
	if err := quickstart(stdout, c); err != nil {
		fmt.Fprintf(stderr, "quickstart: %v\n", err)
		return 1
	}
	return 0
}

// check rejects bad flag values before any work, as input errors.
func (c *config) check(fs *flag.FlagSet) error {
	switch {
	case fs.NArg() > 0:
		return fmt.Errorf("unexpected argument %q (it takes flags only)", fs.Arg(0))
	case c.shots < 1:
		return fmt.Errorf("-shots %d: want at least 1", c.shots)
	case !(c.delta > 0 && c.delta < 1):
		return fmt.Errorf("-delta %g: want a value in (0, 1)", c.delta)
	}
	a, err := allocate.ByName(c.strategy, c.seed)
	if err != nil {
		return err
	}
	if _, ok := a.(*allocate.Fixed); ok {
		return fmt.Errorf("-strategy fixed needs settings of your own; use the shotplan command's plan -settings")
	}
	return nil
}

func quickstart(w io.Writer, c config) error {
	h := scenario.Ladder()

	// 1. Plan the shots.
	a, err := allocate.ByName(c.strategy, c.seed)
	if err != nil {
		return err
	}
	plan, err := allocate.Run(h, c.shots, a, nil)
	if err != nil {
		return err
	}

	// 2. Certify the plan before any shot: this bound holds for every state.
	top := c.top // Options.Top counts zero as its default: ask for none with −1
	if top <= 0 {
		top = -1
	}
	cert, err := guarantee.CertifyPlan(h, plan, c.delta, &guarantee.Options{Top: top})
	if err != nil {
		return err
	}

	// 3. Simulate the shots on the exact ground state.
	sim, ground, err := estimate.GroundStateSimulator(h, c.seed, nil)
	if err != nil {
		return err
	}
	rec := estimate.NewRecords(h.Qubits())
	if err := sim.Run(plan.Settings, plan.Shots, rec); err != nil {
		return err
	}

	// 4. Estimate the energy from the shots.
	res, err := estimate.Grouped(h, rec, &estimate.Options{Confidence: 1 - c.delta})
	if err != nil {
		return err
	}

	report(w, c, plan, cert, res, ground.Energy)
	return nil
}

func report(w io.Writer, c config, plan *allocate.Plan, cert *guarantee.Certificate, res *estimate.Result, exact float64) {
	h := scenario.Ladder()
	fmt.Fprintf(w, "shotplan quick start: %s\n", scenario.Name)
	fmt.Fprintf(w, "Hamiltonian: %d qubits, %d Pauli terms, one-norm %.4g\n", h.Qubits(), h.Len(), h.OneNorm())
	fmt.Fprintf(w, "plan: %s strategy, %d shots on %d distinct settings\n\n", plan.Stats.Strategy, cert.Shots, cert.Settings)

	conf := 100 * (1 - c.delta)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintf(tw, "exact ground energy\t%.5f\tby exact diagonalisation: what the estimate aims at\n", exact)
	fmt.Fprintf(tw, "estimate\t%.5f\tgrouped estimator, shots simulated on the exact ground state (seed %d)\n", res.Energy, c.seed)
	fmt.Fprintf(tw, "certified bound\t±%.5f\tholds with probability ≥ %g%% for every state, before any shot (δ = %g)\n", cert.Bound, conf, c.delta)
	fmt.Fprintf(tw, "error bar from data\t±%.5f\tAPPROXIMATE (normal approximation, %g%%), not a guarantee\n", res.ApproxInterval[1]-res.Energy, conf)
	fmt.Fprintf(tw, "actual error\t%.5f\t|estimate − exact|\n", math.Abs(res.Energy-exact))
	tw.Flush()
	if cert.Uncovered > 0 {
		fmt.Fprintf(w, "(%d terms are never measured; their bias bound %.4g is part of the certified bound)\n", cert.Uncovered, cert.Bias)
	}

	if len(cert.Top) == 0 {
		return
	}
	fmt.Fprintf(w, "\nterms that dominate the certified bound (their shares add up to ±%.5f over all %d terms):\n", cert.Bound, len(cert.Share))
	tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintf(tw, "share\tcoefficient\tshots covering it\t  term (qubit 0 first)\n")
	for _, t := range cert.Top {
		fmt.Fprintf(tw, "%.4f\t%.3g\t%d\t  %s\n", t.Share, t.Coeff, t.Cover, t.Pauli)
	}
	tw.Flush()
}
