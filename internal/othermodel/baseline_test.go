//go:build othermodel_baseline

// The baseline: spinpop's burst test on catalogs it did not make. Not part
// of `go test ./...`; run it with
//
//	go test -tags othermodel_baseline -run TestBaseline -v -timeout 3h ./internal/othermodel
//
// Environment (all optional): OTHERMODEL_OUT (folder for catalogs, scenarios
// and results; default a new temporary folder, kept), OTHERMODEL_REPLICATES
// (bootstrap replicates, default 200), OTHERMODEL_TEMPLATES (template cache,
// default /tmp/tplcache), SPINPOP_BIN (a built CLI; default: built from this
// module). It prints one line per catalog and writes baseline.tsv.
package othermodel

import (
	"encoding/json"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
)

type baselineCase struct {
	name string
	seed uint64
	hist History
	// burst truth (0 for smooth)
	ageGyr float64
}

func baselineCases() []baselineCase {
	var cs []baselineCase
	for i := range 5 {
		cs = append(cs, baselineCase{name: fmt.Sprintf("smooth-%d", i+1), seed: uint64(101 + i), hist: SmoothHistory()})
	}
	for i, age := range []float64{0.6, 0.9, 1.2} {
		cs = append(cs, baselineCase{name: fmt.Sprintf("burst-%.1f", age), seed: uint64(201 + i), hist: BoxBurst(age, 0.1, 0.15), ageGyr: age})
	}
	return cs
}

func envOr(key, def string) string {
	if v := os.Getenv(key); v != "" {
		return v
	}
	return def
}

// burstJSON is the part of spinpop's test.json the baseline reads.
type burstJSON struct {
	Verdict     string  `json:"verdict"`
	Strength    string  `json:"strength"`
	DeltaLogL   float64 `json:"delta_log_l"`
	PValue      float64 `json:"p_value"`
	AgeInterval struct {
		Best, Lo95, Hi95 float64
	} `json:"age_interval"`
	Burst struct {
		Params map[string]float64 `json:"params"`
	} `json:"burst"`
	Data struct {
		Rows     int            `json:"rows"`
		Compared int            `json:"stars_compared"`
		CutAway  map[string]int `json:"cut_away"`
	} `json:"data"`
}

type compareJSON struct {
	PearsonChi2 float64 `json:"pearson_chi2"`
	Bins        int     `json:"bins_with_model"`
}

func TestBaseline(t *testing.T) {
	root, err := filepath.Abs("../..")
	if err != nil {
		t.Fatal(err)
	}
	out := os.Getenv("OTHERMODEL_OUT")
	if out == "" {
		if out, err = os.MkdirTemp("", "othermodel-baseline-"); err != nil {
			t.Fatal(err)
		}
	}
	if err := os.MkdirAll(out, 0o755); err != nil {
		t.Fatal(err)
	}
	reps := envOr("OTHERMODEL_REPLICATES", "200")
	tpl := envOr("OTHERMODEL_TEMPLATES", "/tmp/tplcache")
	bin := os.Getenv("SPINPOP_BIN")
	if bin == "" {
		bin = filepath.Join(out, "spinpop")
		build := exec.Command("go", "build", "-o", bin, "./cmd/spinpop")
		build.Dir = root
		if b, err := build.CombinedOutput(); err != nil {
			t.Fatalf("building the CLI: %v\n%s", err, b)
		}
	}
	fitToml := filepath.Join(root, "scenarios", "examples", "fit.toml")
	run := func(args ...string) {
		cmd := exec.Command(bin, args...)
		b, err := cmd.CombinedOutput()
		if err != nil {
			t.Fatalf("spinpop %s: %v\n%s", strings.Join(args, " "), err, b)
		}
	}

	var table strings.Builder
	table.WriteString("case\ttruth_age_gyr\tstrength\tage_gyr\tlo95\thi95\twidth_gyr\tfraction\tdelta_lnL\tboot_p\tchi2_per_bin\tms_cut\tcompared\tverdict\n")
	for _, c := range baselineCases() {
		dir := filepath.Join(out, c.name)
		if err := os.MkdirAll(dir, 0o755); err != nil {
			t.Fatal(err)
		}
		cat := filepath.Join(dir, "catalog.csv")
		if _, err := os.Stat(cat); err != nil {
			cfg := DefaultConfig()
			cfg.History = c.hist
			if _, err := WriteCatalog(cat, cfg, c.seed); err != nil {
				t.Fatal(err)
			}
		}
		scen := filepath.Join(dir, "scenario.toml")
		text := fmt.Sprintf("extends = %q\nname = %q\n\n[data]\nfile = %q\nsha256 = \"\"\n", fitToml, "othermodel-"+c.name, cat)
		if err := os.WriteFile(scen, []byte(text), 0o644); err != nil {
			t.Fatal(err)
		}
		run("test-burst", scen, "--out", filepath.Join(dir, "test-burst"), "--replicates", reps, "--templates", tpl, "--force")
		run("compare", scen, "--fit", "--out", filepath.Join(dir, "compare"), "--templates", tpl, "--force")

		var tb burstJSON
		var cp compareJSON
		readJSON(t, filepath.Join(dir, "test-burst", "test.json"), &tb)
		readJSON(t, filepath.Join(dir, "compare", "compare.json"), &cp)
		line := []string{c.name, g(c.ageGyr), tb.Strength, g(tb.AgeInterval.Best), g(tb.AgeInterval.Lo95), g(tb.AgeInterval.Hi95),
			g(tb.Burst.Params["history.burst.width_gyr"]), g(tb.Burst.Params["history.burst.mass_fraction"]),
			strconv.FormatFloat(tb.DeltaLogL, 'f', 1, 64), g(tb.PValue), g(cp.PearsonChi2 / float64(cp.Bins)),
			strconv.Itoa(tb.Data.CutAway["main_sequence"]), strconv.Itoa(tb.Data.Compared), tb.Verdict}
		table.WriteString(strings.Join(line, "\t") + "\n")
		t.Log(strings.Join(line[:13], "\t"))
	}
	if err := os.WriteFile(filepath.Join(out, "baseline.tsv"), []byte(table.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	t.Logf("results in %s\n%s", out, table.String())
}

func g(v float64) string { return strconv.FormatFloat(v, 'g', 4, 64) }

func readJSON(t *testing.T, path string, v any) {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(b, v); err != nil {
		t.Fatalf("%s: %v", path, err)
	}
}
