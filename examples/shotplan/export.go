package main

import (
	"flag"
	"fmt"
	"path/filepath"

	"github.com/shotplan/shotplan/estimate"
)

func exportFlags(fs *flag.FlagSet, e *env) func() error {
	plan := fs.String("plan", "", "plan file (required)")
	out := fs.String("o", "", "new directory for the programs and "+estimate.ManifestName+" (required; must not exist or be empty)")
	return func() error {
		if err := e.positional(0, ""); err != nil {
			return err
		}
		if err := need("o", *out); err != nil {
			return err
		}
		f, err := loadPlan(*plan)
		if err != nil {
			return err
		}
		settings, shots := f.Plan.Distinct()
		if err := estimate.ExportQASM(*out, settings, shots); err != nil {
			return bad(err)
		}
		res := struct {
			Output   string `json:"output"`
			Manifest string `json:"manifest"`
			Programs int    `json:"programs"`
			Shots    int    `json:"shots"`
		}{*out, filepath.Join(*out, estimate.ManifestName), len(settings), f.Plan.TotalShots()}
		if e.json {
			return e.writeJSON(res)
		}
		fmt.Fprintf(e.stdout, "wrote %s of OpenQASM 3 and %s to %s (%d shots in all)\n", plural(res.Programs, "program"), estimate.ManifestName, *out, res.Shots)
		fmt.Fprintf(e.stdout, "records: one CSV row \"setting,outcome\" per shot; the setting may be the manifest index, the outcome qubit 0 first\n")
		return nil
	}
}
