package main

import (
	"encoding/json"
	"fmt"
	"io"
	"runtime"
	"strings"

	"spinpop/pipeline"
)

func runCheck(args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("check", "check SCENARIO [--set key=value]... [--json]",
		"Validate a scenario file (following its extends chain), then print its resolved form,\nevery default filled in, and the SHA-256 hash that every output of a run records.", stdout)
	asJSON := fs.Bool("json", false, "print the hash, files and resolved scenario as JSON")
	yes := fs.Bool("yes", false, "accept a run whose estimated memory or time is beyond this machine")
	threads := fs.Int("threads", runtime.GOMAXPROCS(0), "threads the estimate assumes")
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
	if *threads < 1 {
		return usageErrorf("--threads must be at least 1")
	}
	built, err := pipeline.Build(&res.Scenario, path)
	if err != nil {
		return err
	}
	// What simulate would cost here, measured on the scenario's own stars;
	// a scenario beyond this machine is refused unless --yes.
	s := &res.Scenario
	est := pipeline.EstimateRun(built, s.Run.StarsGenerated, s.Run.ChunkStars, *threads, false)
	if err := est.Refusal("run.stars_generated", yesFlag); err != nil && !*yes {
		return fmt.Errorf("%s: %w", path, err)
	}
	var tplSeconds float64
	if s.Data.File != "" {
		tplSeconds = est.Seconds / float64(est.Stars) * float64(s.Compare.TemplateStars)
		// The comparison commands' template run is judged alike.
		tpl := est
		tpl.Stars, tpl.Seconds = s.Compare.TemplateStars, tplSeconds
		if err := tpl.Refusal("compare.template_stars", yesFlag); err != nil && !*yes {
			return fmt.Errorf("%s: the template run of a comparison: %w", path, err)
		}
	}
	if *asJSON {
		enc := json.NewEncoder(stdout)
		enc.SetIndent("", "  ")
		out := map[string]any{"hash": res.Hash(), "files": res.Files, "overrides": res.Overrides, "resolved": string(res.Canonical()), "estimate": est}
		if tplSeconds > 0 {
			out["template_seconds"] = tplSeconds
		}
		return enc.Encode(out)
	}
	fmt.Fprintf(stdout, "# scenario OK: %s\n# files: %s\n", path, wordList(res.Files))
	if len(res.Overrides) > 0 {
		fmt.Fprintf(stdout, "# overrides: %s\n", strings.Join(res.Overrides, " "))
	}
	fmt.Fprintf(stdout, "# simulate: %s\n", est)
	if tplSeconds > 0 {
		fmt.Fprintf(stdout, "# templates of a comparison: %s stars ≈ %s on %d threads (same measurement)\n",
			pipeline.CountString(float64(s.Compare.TemplateStars)), pipeline.DurationString(tplSeconds), est.Threads)
	}
	fmt.Fprintf(stdout, "# sha256: %s\n\n", res.Hash())
	_, err = stdout.Write(res.Canonical())
	return err
}
