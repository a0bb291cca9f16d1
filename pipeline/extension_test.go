package pipeline_test

import (
	"bytes"
	"context"
	"encoding/csv"
	"math"
	"math/rand/v2"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/model"
	"spinpop/model/spin"
	"spinpop/pipeline"
	"spinpop/scenarios"
	"spinpop/sfh"
)

// constantLaw is a toy spin-down law: every star rotates with one period.
type constantLaw struct{ periodD float64 }

func (constantLaw) Name() string { return "toy-constant" }
func (l constantLaw) Period(spin.Star, *rand.Rand) (float64, bool) {
	return l.periodD, true
}

// registerToyLaw adds the toy law from this test file alone: nothing else
// in the project is touched to make it usable from a scenario.
func registerToyLaw(t *testing.T) {
	if _, ok := spin.Lookup("toy-constant"); ok {
		return
	}
	require.NoError(t, spin.Register(spin.LawSpec{
		Name: "toy-constant", Label: "one period for all",
		Tables: []spin.OptionTable{{Name: "toy", Doc: "the toy law's period", Keys: []spin.Key{
			{Name: "period_d", Doc: "the period of every star", Default: 10.0, Min: 0, MinOpen: true, Max: math.Inf(1)},
		}}},
		New: func(o spin.Options, _ spin.Env) (spin.Law, error) {
			return constantLaw{o.Float("toy", "period_d")}, nil
		},
		Caveats: func(float64) []string { return []string{"a toy law"} },
	}))
}

const toyScenario = `name = "toy"
[run]
seed = 3
stars_generated = 150_000
[history.smooth]
kind = "constant"
[survey.field]
kind = "cone"
l_deg = 58.0
b_deg = 21.0
radius_deg = 11.0
distance_max_pc = 1500.0
[spin]
law = "toy-constant"
[spin.toy]
period_d = 7.5
`

func TestToyLawRunsFromAScenario(t *testing.T) {
	registerToyLaw(t)
	res, err := scenarios.LoadBytes("toy.toml", []byte(toyScenario), nil)
	require.NoError(t, err)
	assert.Contains(t, string(res.Canonical()), "[spin.toy]\nperiod_d = 7.5\n", "the canonical form carries the law's options")

	sim, err := pipeline.Simulate(context.Background(), res, pipeline.SimulateOptions{KeepCatalog: true})
	require.NoError(t, err)
	cat := sim.Catalog
	require.Greater(t, cat.N, 500)
	for i := 0; i < cat.N; i++ {
		require.Equal(t, 7.5, cat.PeriodD[i], "every catalog star has the toy law's period")
		// Measured: 3 % scatter, or a half or double alias (the survey's
		// defaults).
		r := cat.MeasPeriodD[i] / 7.5
		require.True(t, math.Abs(r-1) < 0.2 || math.Abs(r-0.5) < 0.1 || math.Abs(r-2) < 0.4, "measured %g", cat.MeasPeriodD[i])
	}
	assert.Contains(t, sim.Manifest.Warnings, "a toy law", "the law's caveats reach the run's warnings")
	assert.Contains(t, pipeline.LawVariants()[len(pipeline.LawVariants())-1].Label, "one period for all", "the laws comparison shows it")

	// Its keys are checked like any other: range and spelling, with the line.
	_, err = scenarios.LoadBytes("toy.toml", []byte(strings.Replace(toyScenario, "period_d = 7.5", "period_d = -1.0", 1)), nil)
	require.Error(t, err)
	assert.Contains(t, err.Error(), "toy.toml:16")
	assert.Contains(t, err.Error(), "spin.toy.period_d = -1 must be > 0")
	_, err = scenarios.LoadBytes("toy.toml", []byte(strings.Replace(toyScenario, "period_d = 7.5", "periode_d = 7.5", 1)), nil)
	require.Error(t, err)
	assert.Contains(t, err.Error(), `did you mean "period_d"?`)
}

func TestToyColumnReachesTheCatalog(t *testing.T) {
	if !containsColumn("toy_period_ratio") {
		require.NoError(t, model.RegisterColumn(model.Column{Name: "toy_period_ratio", Doc: "measured over true period",
			Derived: func(c *model.Chunk, i int) float64 { return c.MeasPeriodD[i] / c.PeriodD[i] }}))
	}
	res, err := scenarios.LoadExample("base")
	require.NoError(t, err)
	res.Scenario.Run.StarsGenerated = 100_000
	var buf bytes.Buffer
	cw := pipeline.NewCatalogWriter(&buf)
	_, err = pipeline.Simulate(context.Background(), res, pipeline.SimulateOptions{Visit: cw.Add})
	require.NoError(t, err)
	require.NoError(t, cw.Flush())
	rows, err := csv.NewReader(&buf).ReadAll()
	require.NoError(t, err)
	require.Greater(t, len(rows), 100)
	header := rows[0]
	require.Equal(t, "toy_period_ratio", header[len(header)-1], "a registered column follows the built-in ones")
	col := func(name string) int {
		for i, h := range header {
			if h == name {
				return i
			}
		}
		t.Fatalf("no column %s", name)
		return -1
	}
	ratio, meas, truth := col("toy_period_ratio"), col("period_measured_d"), col("period_true_d")
	for _, r := range rows[1:] {
		x, _ := strconv.ParseFloat(r[ratio], 64)
		m, _ := strconv.ParseFloat(r[meas], 64)
		p, _ := strconv.ParseFloat(r[truth], 64)
		require.InDelta(t, m/p, x, 1e-4*x, "row %v", r)
	}
}

func containsColumn(name string) bool {
	for _, c := range model.CatalogColumns() {
		if c.Name == name {
			return true
		}
	}
	return false
}

// A toy kind of history part, registered from this file alone: star
// formation at a flat rate between two ages (built on sfh's Piecewise).
func TestToyHistoryKindRunsFromAScenario(t *testing.T) {
	if _, ok := sfh.LookupKind("window"); !ok {
		require.NoError(t, sfh.RegisterKind(sfh.KindSpec{
			Name: "window", Label: "flat between two ages", Role: sfh.Smooth,
			Keys: []sfh.KindKey{
				{Name: "from_gyr", Doc: "youngest age", Required: true, Min: 0, MaxIsAge: true},
				{Name: "to_gyr", Doc: "oldest age", Required: true, Min: 0, MaxIsAge: true},
				{Name: "weight", Default: 1, Min: 0, Max: math.Inf(1), Free: true},
			},
			New: func(v sfh.Values) (sfh.Component, float64) {
				return sfh.Piecewise{EdgesGyr: []float64{v.Float("from_gyr"), v.Float("to_gyr")}, Rates: []float64{1}}, v.Float("weight")
			},
		}))
	}
	text := strings.Replace(toyScenario, "[history.smooth]\nkind = \"constant\"\n", "[history.w]\nkind = \"window\"\nfrom_gyr = 1.0\nto_gyr = 3.0\n", 1)
	text = strings.Replace(text, "law = \"toy-constant\"\n[spin.toy]\nperiod_d = 7.5\n", "law = \"barnes2007\"\n", 1)
	res, err := scenarios.LoadBytes("window.toml", []byte(text), nil)
	require.NoError(t, err)
	assert.Contains(t, string(res.Canonical()), "[history.w]\nfrom_gyr = 1.0\nkind = \"window\"\nto_gyr = 3.0\nweight = 1.0\n")
	sim, err := pipeline.Simulate(context.Background(), res, pipeline.SimulateOptions{KeepCatalog: true})
	require.NoError(t, err)
	require.Greater(t, sim.Catalog.N, 100)
	for i := 0; i < sim.Catalog.N; i++ {
		require.True(t, sim.Catalog.AgeGyr[i] >= 1 && sim.Catalog.AgeGyr[i] <= 3, "age %g outside the window", sim.Catalog.AgeGyr[i])
	}
	_, err = scenarios.LoadBytes("window.toml", []byte(strings.Replace(text, "to_gyr = 3.0", "to_gyr = 30.0", 1)), nil)
	require.Error(t, err)
	assert.Contains(t, err.Error(), "history.w.to_gyr = 30 is out of range; it must be in [0, 10]")
}
