package scenarios

import (
	"os"
	"path/filepath"
	"reflect"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func TestExamplesList(t *testing.T) {
	assert.Equal(t, []string{"base", "burst", "smooth", "stall"}, Examples())
}

func TestExamplesLoad(t *testing.T) {
	base, err := LoadExample("base")
	require.NoError(t, err)
	b := base.Scenario
	assert.Equal(t, []string{"base.toml"}, base.Files)
	assert.Equal(t, int64(2_000_000), b.Run.StarsGenerated)
	assert.Equal(t, "barnes2007", b.Spin.Law)
	assert.Equal(t, map[string]Part{
		"floor":   {Kind: "constant", Weight: 0.6},
		"decline": {Kind: "exponential", TimescaleGyr: 8, Weight: 0.4},
	}, b.History.Parts)
	assert.Equal(t, Field{Kind: "cone", LDeg: 58, BDeg: 21, RadiusDeg: 11, DistanceMaxPc: 1500}, b.Survey.Field)

	smooth, err := LoadExample("smooth.toml")
	require.NoError(t, err)
	assert.Equal(t, []string{"base.toml", "smooth.toml"}, smooth.Files)
	assert.Equal(t, "smooth", smooth.Scenario.Name)
	assert.Equal(t, b.History, smooth.Scenario.History)

	burst, err := LoadExample("burst")
	require.NoError(t, err)
	parts := burst.Scenario.History.Parts
	require.Len(t, parts, 3)
	assert.Equal(t, Part{Kind: "burst", AgeGyr: 0.6, WidthGyr: 0.05, MassFraction: 0.2}, parts["burst"])
	assert.Equal(t, b.History.Parts["floor"], parts["floor"])

	stall, err := LoadExample("stall")
	require.NoError(t, err)
	sp := stall.Scenario.Spin
	assert.Equal(t, "torque", sp.Law)
	assert.True(t, sp.Stall.Enabled)
	assert.Equal(t, b.Spin.Turnover, sp.Turnover, "inherited from base")
	assert.Equal(t, b.History, stall.Scenario.History, "smooth history")
}

// TestBaseSetsEverySection checks that base.toml, the example a user learns
// from, shows every section of the format.
func TestBaseSetsEverySection(t *testing.T) {
	text, err := ExampleText("base")
	require.NoError(t, err)
	l, err := parseLayer("base.toml", text)
	require.NoError(t, err)
	for _, sec := range fieldsOf(reflectTypeScenario()).names {
		assert.Contains(t, l.data, sec, "base.toml lacks %s", sec)
	}
}

func TestExampleErrors(t *testing.T) {
	_, err := LoadExample("nope")
	require.Error(t, err)
	assert.Contains(t, err.Error(), "no such example; the examples are base, burst, smooth, stall")
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
		want, err := os.ReadFile(filepath.Join("examples", name+".toml"))
		require.NoError(t, err)
		got, err := ExampleText(name)
		require.NoError(t, err)
		assert.Equal(t, want, got)
	}
}

func reflectTypeScenario() reflect.Type { return reflect.TypeFor[Scenario]() }
