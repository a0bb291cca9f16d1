package main

import (
	"encoding/json"
	"fmt"
	"io"
	"strings"

	"spinpop/pipeline"
)

func runCheck(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("check", "check SCENARIO [--set key=value]... [--json]",
		"Validate a scenario file (following its extends chain), then print its resolved form,\nevery default filled in, and the SHA-256 hash that every output of a run records.", stdout)
	asJSON := fs.Bool("json", false, "print the hash, files and resolved scenario as JSON")
	pos, err := parseInterleaved(fs, args)
	if err != nil {
		return err
	}
	path, err := oneScenarioArg(pos, "check")
	if err != nil {
		return err
	}
	res, err := loadScenario(path, scenarioSets(fs))
	if err != nil {
		return err
	}
	if _, err := pipeline.Build(&res.Scenario, path); err != nil {
		return err
	}
	if *asJSON {
		enc := json.NewEncoder(stdout)
		enc.SetIndent("", "  ")
		return enc.Encode(map[string]any{"hash": res.Hash(), "files": res.Files, "overrides": res.Overrides, "resolved": string(res.Canonical())})
	}
	fmt.Fprintf(stdout, "# scenario OK: %s\n# files: %s\n", path, wordList(res.Files))
	if len(res.Overrides) > 0 {
		fmt.Fprintf(stdout, "# overrides: %s\n", strings.Join(res.Overrides, " "))
	}
	fmt.Fprintf(stdout, "# sha256: %s\n\n", res.Hash())
	_, err = stdout.Write(res.Canonical())
	return err
}
