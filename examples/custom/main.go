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

func run(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("custom", flag.ContinueOnError)
	fs.SetOutput(io.Discard) // parse errors are reported in one line below
	shots := fs.Int("shots", 1000, "shots per plan")
	seed := fs.Uint64("seed", 1, "seed of the random strategies and of the simulation")
	delta := fs.Float64("delta", 0.05, "failure probability δ of the certified bound")
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			fmt.Fprintln(stdout, "usage: custom [-shots N] [-seed S] [-delta D]")
			fs.SetOutput(stdout)
			fs.PrintDefaults()
			return 0
		}
		fmt.Fprintf(stderr, "custom: %v (see custom -h)\n", err)
		return 2
	}
	if fs.NArg() > 0 || *shots < 1 || !(*delta > 0 && *delta < 1) {
		fmt.Fprintln(stderr, "custom: want only -shots ≥ 1, -seed and -delta in (0, 1)")
		return 2
	}
	if err := compare(stdout, *shots, *seed, *delta); err != nil {
		fmt.Fprintf(stderr, "custom: %v\n", err)
		return 1
	}
	return 0
}

func compare(w io.Writer, shots int, seed uint64, delta float64) error {
	h := scenario.Ladder()
	sim, ground, err := estimate.GroundStateSimulator(h, seed, nil)
	if err != nil {
		return err
	}
	fmt.Fprintf(w, "%s\nexact ground energy %.5f; %d shots per plan; bounds at δ = %g\n\n", scenario.Name, ground.Energy, shots, delta)

	greedy, err := allocate.ByName("greedy", seed)
	if err != nil {
		return err
	}
	importance, err := allocate.ByName("importance", seed)
	if err != nil {
		return err
	}
	strategies := []allocate.Allocator{&anchored{Seed: seed}, greedy, importance}

	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprint(tw, "strategy\tsettings\tcertified bound ±\testimate\tactual error\terror bar (approx.)\t\n")
	for _, a := range strategies {
		// The same three calls for every strategy, built-in or not.
		plan, err := allocate.Run(h, shots, a, nil)
		if err != nil {
			return err
		}
		cert, err := guarantee.CertifyPlan(h, plan, delta, nil)
		if err != nil {
			return err
		}
		rec := estimate.NewRecords(h.Qubits())
		if err := sim.Run(plan.Settings, plan.Shots, rec); err != nil {
			return err
		}
		res, err := estimate.Grouped(h, rec, &estimate.Options{Confidence: 1 - delta})
		if err != nil {
			return err
		}
		fmt.Fprintf(tw, "%s\t%d\t%.4f\t%.4f\t%.4f\t%.4f\t\n", plan.Stats.Strategy, cert.Settings, cert.Bound,
			res.Energy, math.Abs(res.Energy-ground.Energy), res.ApproxInterval[1]-res.Energy)
	}
	tw.Flush()
	fmt.Fprintln(w, "\ncertified bound ±: holds with probability ≥ 1 − δ for every state; error bar: normal approximation from the data.")
	fmt.Fprintln(w, "At the same number of shots, the plan with the lower certified bound has the better guarantee.")
	return nil
}
