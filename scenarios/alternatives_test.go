package scenarios

import (
	"os"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// A nuisance parameter's starting values stay with it in an alternative
// that drops a history part.
func TestAlternativesKeepStartingValues(t *testing.T) {
	fit, err := Resolve("example:fit")
	require.NoError(t, err)
	free := make([]any, 0, len(fit.Scenario.Compare.Free))
	found := false
	for _, f := range fit.Scenario.Compare.Free {
		if f.Path == "spin.period_scatter_dex" {
			f.Starts, found = []float64{0, 0.1}, true
		}
		free = append(free, freeItem(f))
	}
	require.True(t, found, "example:fit frees spin.period_scatter_dex")
	o, err := NewOverride("free", "compare.free", free)
	require.NoError(t, err)
	withStarts, err := Resolve("example:fit", o)
	require.NoError(t, err)
	alt, err := AlternativeOverrides(&withStarts.Scenario, 0)
	require.NoError(t, err)
	stall, err := Resolve("example:fit", append([]Override{o}, alt...)...)
	require.NoError(t, err)
	for _, f := range stall.Scenario.Compare.Free {
		if f.Path == "spin.period_scatter_dex" {
			assert.Equal(t, []float64{0, 0.1}, f.Starts)
			return
		}
	}
	t.Fatal("the stall alternative lost spin.period_scatter_dex")
}

// Each alternative of example:fit resolves as a scenario of its own that
// equals the one a user would write by hand: the same settings given as
// --set, the dropped part removed with its free parameters.
func TestAlternativesResolveAsScenarios(t *testing.T) {
	fit, err := Resolve("example:fit")
	require.NoError(t, err)
	require.Len(t, fit.Scenario.Compare.Alternatives, 2)

	alt, err := AlternativeOverrides(&fit.Scenario, 0)
	require.NoError(t, err)
	stall, err := Resolve("example:fit", alt...)
	require.NoError(t, err)
	s := stall.Scenario
	assert.Equal(t, "stall", s.Name)
	assert.Equal(t, "barnes2007", s.Spin.Law, "the stall pauses the burst's own law")
	assert.True(t, s.Spin.Options.Bool("stall", "enabled"))
	assert.NotContains(t, s.History.Parts, "burst", "the dropped part is gone")
	assert.Contains(t, s.History.Parts, "decline", "the other parts stay")
	assert.Nil(t, s.Compare.Alternatives, "an alternative holds none of its own")
	assert.Len(t, s.Compare.Free, len(fit.Scenario.Compare.Free)-3, "the burst's three free parameters go with it")
	for _, f := range s.Compare.Free {
		assert.NotContains(t, f.Path, "history.burst.")
	}

	// The same scenario written by hand, as --set settings.
	var hand []Override
	for _, a := range []string{"name=stall", "compare.alternatives=[]", "history.burst={kind=\"none\"}",
		"spin.stall.enabled=true"} {
		o, err := ParseOverride(a)
		require.NoError(t, err)
		hand = append(hand, o)
	}
	free := make([]any, 0, len(s.Compare.Free))
	for _, f := range s.Compare.Free {
		free = append(free, freeItem(f))
	}
	o, err := NewOverride("free", "compare.free", free)
	require.NoError(t, err)
	byHand, err := Resolve("example:fit", append(hand, o)...)
	require.NoError(t, err)
	assert.Equal(t, byHand.Hash(), stall.Hash(), "the alternative is the scenario a user would write")

	alt, err = AlternativeOverrides(&fit.Scenario, 1)
	require.NoError(t, err)
	both, err := Resolve("example:fit", alt...)
	require.NoError(t, err)
	assert.Contains(t, both.Scenario.History.Parts, "burst")
	assert.True(t, both.Scenario.Spin.Options.Bool("stall", "enabled"))
	assert.Equal(t, fit.Scenario.Compare.Free, both.Scenario.Compare.Free, "nothing dropped: the same free list")

	// Alternatives are part of the identity of a scenario that has them,
	// and leave the hash of one that has none as it was.
	assert.NotEqual(t, fit.Hash(), both.Hash())
	back, err := LoadBytes("canonical.toml", fit.Canonical(), nil)
	require.NoError(t, err)
	assert.Equal(t, fit.Hash(), back.Hash(), "the canonical form keeps the alternatives")
	assert.NotContains(t, string(both.Canonical()), "alternatives", "a scenario without alternatives writes no key for them")

	_, err = AlternativeOverrides(&fit.Scenario, 2)
	assert.Error(t, err)
}

func TestAlternativesErrors(t *testing.T) {
	cases := []struct{ name, text, want string }{
		{"no name", `set = ["spin.law=torque"]`, "compare.alternatives[0].name is missing"},
		{"bad name", "name = \"a b\"\nset = [\"spin.law=torque\"]", "must be a short name"},
		{"changes nothing", `name = "same"`, "changes nothing"},
		{"bad setting", "name = \"x\"\nset = [\"spin.law\"]", "want key=value"},
		{"nested", "name = \"x\"\nset = [\"compare.alternatives=[]\"]", "cannot hold alternatives"},
		{"unknown part", "name = \"x\"\ndrop = [\"brust\"]", `"brust", which is not a part`},
		{"not strings", "name = \"x\"\nset = [1]", "must be an array of strings"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			dir := t.TempDir()
			path := filepath.Join(dir, "s.toml")
			text := "extends = \"example:burst\"\n\n[[compare.alternatives]]\n" + c.text + "\n"
			require.NoError(t, os.WriteFile(path, []byte(text), 0o644))
			_, err := Resolve(path)
			require.Error(t, err)
			assert.Contains(t, err.Error(), c.want)
			assert.Contains(t, err.Error(), "s.toml", "the error names the file")
		})
	}
	// Two alternatives of one name.
	dir := t.TempDir()
	path := filepath.Join(dir, "s.toml")
	text := "extends = \"example:burst\"\n\n[[compare.alternatives]]\nname = \"x\"\ndrop = [\"burst\"]\n\n[[compare.alternatives]]\nname = \"x\"\nset = [\"spin.law=torque\"]\n"
	require.NoError(t, os.WriteFile(path, []byte(text), 0o644))
	_, err := Resolve(path)
	require.Error(t, err)
	assert.Contains(t, err.Error(), "repeats compare.alternatives[0]")

	// A setting that makes an invalid scenario is reported when the
	// alternative is resolved, naming the alternative.
	text = "extends = \"example:burst\"\n\n[[compare.alternatives]]\nname = \"x\"\nset = [\"spin.law=tourqe\"]\n"
	require.NoError(t, os.WriteFile(path, []byte(text), 0o644))
	res, err := Resolve(path)
	require.NoError(t, err)
	alt, err := AlternativeOverrides(&res.Scenario, 0)
	require.NoError(t, err)
	_, err = Resolve(path, alt...)
	require.Error(t, err)
	assert.Contains(t, err.Error(), `compare.alternatives "x"`)
	assert.Contains(t, err.Error(), "torque", "the error suggests the nearest law")
}
