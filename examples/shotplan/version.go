package main

import (
	"flag"
	"fmt"
	"runtime"
	"runtime/debug"

	"github.com/shotplan/shotplan/allocate"
)

func versionFlags(fs *flag.FlagSet, e *env) func() error {
	return func() error {
		if err := e.positional(0, ""); err != nil {
			return err
		}
		res := struct {
			Module       string `json:"module"`
			Version      string `json:"version"`
			Revision     string `json:"revision,omitempty"`
			Modified     bool   `json:"modified,omitempty"`
			Go           string `json:"go"`
			PlanFormat   string `json:"plan_format"`
			PlanVersion  int    `json:"plan_version"`
			CompactPlan  int    `json:"compact_plan_version"`
			SeedPlan     int    `json:"seed_plan_version"`
			StateFormat  string `json:"rounds_state_format"`
			StateVersion int    `json:"rounds_state_version"`
		}{Module: "github.com/shotplan/shotplan", Version: "unknown", Go: runtime.Version(),
			PlanFormat: allocate.PlanFormat, PlanVersion: allocate.PlanVersion, CompactPlan: allocate.CompactPlanVersion,
			SeedPlan: allocate.SeedPlanVersion, StateFormat: roundsFormat, StateVersion: roundsVersion}
		if bi, ok := debug.ReadBuildInfo(); ok {
			if bi.Main.Path != "" {
				res.Module = bi.Main.Path
			}
			if bi.Main.Version != "" {
				res.Version = bi.Main.Version
			}
			for _, s := range bi.Settings {
				switch s.Key {
				case "vcs.revision":
					res.Revision = s.Value
				case "vcs.modified":
					res.Modified = s.Value == "true"
				}
			}
		}
		if e.json {
			return e.writeJSON(res)
		}
		fmt.Fprintf(e.stdout, "%s %s", res.Module, res.Version)
		if res.Revision != "" {
			fmt.Fprintf(e.stdout, " (revision %s", res.Revision)
			if res.Modified {
				fmt.Fprint(e.stdout, ", modified")
			}
			fmt.Fprint(e.stdout, ")")
		}
		fmt.Fprintf(e.stdout, ", %s\nplan files: %q version %d (compact layout, the default), %d (full JSON, for names ending in .json) and %d (seed plans, plan -by-seed)\nrounds state files: %q version %d\n",
			res.Go, res.PlanFormat, res.CompactPlan, res.PlanVersion, res.SeedPlan, res.StateFormat, res.StateVersion)
		return nil
	}
}
