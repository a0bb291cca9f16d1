package scenarios

import (
	"io/fs"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func TestExamplesList(t *testing.T) {
	assert.Equal(t, []string{"base", "burst", "fit", "smooth", "stall"}, Examples())
}

func TestExamplesLoad(t *testing.T) {
	base, err := LoadExample("base")
	require.NoError(t, err)
	b := base.Scenario
	assert.Equal(t, []string{"base.toml"}, base.Files)
	assert.Equal(t, int64(2_000_000), b.Run.StarsGenerated)
	assert.Equal(t, "barnes2007", b.Spin.Law)
	assert.Equal(t, map[string]Part{
		"floor":   {Kind: "constant", Values: map[string]float64{"weight": 0.6}, Arrays: map[string][]float64{}},
		"decline": {Kind: "exponential", Values: map[string]float64{"timescale_gyr": 8, "weight": 0.4}, Arrays: map[string][]float64{}},
	}, b.History.Parts)
	assert.Equal(t, Field{Kind: "cone", LDeg: 197, BDeg: -34, RadiusDeg: 8, DistanceMaxPc: 1500}, b.Survey.Field)

	smooth, err := LoadExample("smooth.toml")
	require.NoError(t, err)
	assert.Equal(t, []string{"base.toml", "smooth.toml"}, smooth.Files)
	assert.Equal(t, "smooth", smooth.Scenario.Name)
	assert.Equal(t, b.History, smooth.Scenario.History)

	burst, err := LoadExample("burst")
	require.NoError(t, err)
	parts := burst.Scenario.History.Parts
	require.Len(t, parts, 3)
	assert.Equal(t, Part{Kind: "burst", Values: map[string]float64{"age_gyr": 0.6, "width_gyr": 0.05, "mass_fraction": 0.2}, Arrays: map[string][]float64{}}, parts["burst"])
	assert.Equal(t, b.History.Parts["floor"], parts["floor"])

	stall, err := LoadExample("stall")
	require.NoError(t, err)
	sp := stall.Scenario.Spin
	assert.Equal(t, "torque", sp.Law)
	assert.True(t, sp.Options.Bool("stall", "enabled"))
	assert.Equal(t, b.Spin.Turnover, sp.Turnover, "inherited from base")
	assert.Equal(t, b.History, stall.Scenario.History, "smooth history")
}

// TestBaseSetsEverySection checks that base.toml, the example a user learns
// from, shows every section of the format but the two about observed data,
// which fit.toml shows.
func TestBaseSetsEverySection(t *testing.T) {
	text, err := ExampleText("base")
	require.NoError(t, err)
	l, err := parseLayer("base.toml", text)
	require.NoError(t, err)
	dataSections := []string{"compare", "data"}
	for _, sec := range fieldsOf(reflectTypeScenario()).names {
		if slices.Contains(dataSections, sec) {
			assert.NotContains(t, l.data, sec, "base.toml simulates only; %s belongs in fit.toml", sec)
			continue
		}
		assert.Contains(t, l.data, sec, "base.toml lacks %s", sec)
	}
	text, err = ExampleText("fit")
	require.NoError(t, err)
	l, err = parseLayer("fit.toml", text)
	require.NoError(t, err)
	for _, sec := range dataSections {
		assert.Contains(t, l.data, sec, "fit.toml lacks %s", sec)
	}
	// fit.toml spells out every [data] and [compare] key but the checksum
	// (no data file yet) and the free list, which it sets itself.
	for sec, typ := range map[string]reflect.Type{"data": reflect.TypeFor[Data](), "compare": reflect.TypeFor[Compare](), "data.columns": reflect.TypeFor[DataColumns]()} {
		var node any = l.data
		for _, k := range strings.Split(sec, ".") {
			node = node.(map[string]any)[k]
		}
		for _, k := range fieldsOf(typ).names {
			if sec == "data" && k == "sha256" || sec == "data.columns" {
				continue // the columns name only what the catalog has
			}
			assert.Contains(t, node, k, "fit.toml lacks %s.%s", sec, k)
		}
	}
}

func TestFitExample(t *testing.T) {
	fit, err := LoadExample("fit")
	require.NoError(t, err)
	burst, err := LoadExample("burst")
	require.NoError(t, err)
	assert.Equal(t, []string{"base.toml", "burst.toml", "fit.toml"}, fit.Files)
	assert.Equal(t, burst.Scenario.History.Parts, fit.Scenario.History.Parts, "the model is burst.toml's")
	assert.Equal(t, burst.Scenario.History.MaxAgeGyr, fit.Scenario.History.MaxAgeGyr)

	d := fit.Scenario.Data
	assert.Equal(t, "example:data/larkspur-rotation.csv", d.File, "the demo catalog, named so that a copy of fit.toml finds it anywhere")
	assert.Equal(t, DataColumns{PeriodD: "prot_d", BV: "bv_mag", AppMagV: "vmag", ParallaxMas: "plx_mas", RADeg: "ra_deg", DecDeg: "dec_deg"}, d.Columns)
	assert.Equal(t, "data/larkspur-rotation.csv", fit.DataPath)
	assert.Equal(t, ExamplesFS(), fit.DataFS, "an example's data resolve within the embedded examples")
	assert.Empty(t, burst.DataPath, "no data named, none resolved")
	assert.Nil(t, burst.DataFS)

	// The [compare] values written out in fit.toml are the defaults but for
	// the robust comparison it asks for (per-color normalisation, the
	// young mask, the blue columns left out): burst, which sets none, resolves to the same, free list
	// aside.
	fc, bc := fit.Scenario.Compare, burst.Scenario.Compare
	require.GreaterOrEqual(t, len(fc.Free), 10)
	assert.Equal(t, DefaultFree("burst", 10), bc.Free, "burst.toml gets the default free list")
	assert.Equal(t, bc.Free, fc.Free[:3], "fit.toml spells the default list out")
	assert.Equal(t, FreeParam{Path: "history.decline.timescale_gyr", Min: 2, Max: 20, Prior: "log-uniform"}, fc.Free[3])
	// The smooth family holds a constant rate (the decline's weight down
	// to 0): a history family that cannot be flat makes a burst fitted on
	// top move older (README, the independent check).
	assert.Equal(t, FreeParam{Path: "history.decline.weight", Min: 0, Max: 2, Prior: "uniform"}, fc.Free[4])
	nuisance := 0
	for _, f := range fc.Free[5:] {
		if IsNuisancePath(&fit.Scenario, f.Path) {
			nuisance++
		}
	}
	assert.GreaterOrEqual(t, nuisance, 6, "fit.toml frees at least six nuisance parameters")
	assert.Equal(t, "per-color", fc.Normalisation)
	assert.Equal(t, 0.1, fc.MaskAgeGyr)
	fc.Free, bc.Free = nil, nil
	require.Len(t, fc.Alternatives, 2, "fit.toml names the stall and burst-and-stall explanations")
	fc.Alternatives = nil
	assert.Equal(t, 200, fc.Bootstrap)
	assert.True(t, fc.MaskBlueOfLaw, "fit.toml leaves out the colors reddening fills with stars bluer than the law")
	fc.Normalisation, fc.MaskAgeGyr, fc.Bootstrap, fc.MaskBlueOfLaw = bc.Normalisation, bc.MaskAgeGyr, bc.Bootstrap, bc.MaskBlueOfLaw
	assert.Equal(t, bc, fc)

	// The catalog itself is generated later; until then opening it fails
	// cleanly, naming the file, and loading did not need it.
	f, err := fit.OpenData()
	if err == nil {
		require.NoError(t, f.Close())
	} else {
		assert.ErrorIs(t, err, fs.ErrNotExist)
		assert.Contains(t, err.Error(), `fit.toml:17: data.file = "example:data/larkspur-rotation.csv": cannot open data/larkspur-rotation.csv`)
	}
}

func TestExampleErrors(t *testing.T) {
	_, err := LoadExample("nope")
	require.Error(t, err)
	assert.Contains(t, err.Error(), "no such example; the examples are base, burst, fit, smooth, stall")
	_, err = ExampleText("nope")
	require.Error(t, err)
}

// TestExamplesOnDiskMatchEmbedded loads the files from disk too: the same
// result proves extends works alike through the OS and the embedded FS.
func TestExamplesOnDiskMatchEmbedded(t *testing.T) {
	for _, name := range Examples() {
		disk, err := Load(filepath.Join("examples", name+".toml"))
		require.NoError(t, err)
		emb, err := LoadExample(name)
		require.NoError(t, err)
		assert.Equal(t, emb.Hash(), disk.Hash(), name)
		// fit.toml names its catalog as example:data/…, the embedded
		// file, wherever the scenario is read from.
		assert.Equal(t, emb.DataPath, disk.DataPath)
		assert.Equal(t, emb.DataFS, disk.DataFS)
		want, err := os.ReadFile(filepath.Join("examples", name+".toml"))
		require.NoError(t, err)
		got, err := ExampleText(name)
		require.NoError(t, err)
		assert.Equal(t, want, got)
	}
}

func reflectTypeScenario() reflect.Type { return reflect.TypeFor[Scenario]() }
