package scenarios

import (
	"errors"
	"os"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func mustOverrides(t *testing.T, args ...string) []Override {
	t.Helper()
	o, err := ParseOverrides(args)
	require.NoError(t, err)
	return o
}

// firstError is the one *Error a failed load reports first.
func firstError(t *testing.T, err error) *Error {
	t.Helper()
	require.Error(t, err)
	var e *Error
	require.True(t, errors.As(err, &e), "want a scenarios.Error, got %T: %v", err, err)
	return e
}

// An override is the same as writing the key in a file: same scenario,
// same canonical form, same hash.
func TestOverrideEqualsFile(t *testing.T) {
	dir := t.TempDir()
	file := filepath.Join(dir, "variant.toml")
	require.NoError(t, os.WriteFile(file, []byte(`extends = "example:fit"
name = "fit"
[spin]
law = "torque"
[compare]
bootstrap = 200
[history.burst]
age_gyr = 0.8
[output]
gyrochrone_ages_gyr = [0.5, 1.5]
`), 0o644))
	fromFile, err := Load(file)
	require.NoError(t, err)

	res, err := Resolve("example:fit", mustOverrides(t,
		"spin.law=torque", // a bare word is a string
		"compare.bootstrap=200",
		"history.burst.age_gyr=0.8",
		"output.gyrochrone_ages_gyr=[0.5, 1.5]")...)
	require.NoError(t, err)
	assert.Equal(t, "torque", res.Scenario.Spin.Law)
	assert.Equal(t, 200, res.Scenario.Compare.Bootstrap)
	assert.Equal(t, 0.8, res.Scenario.History.Parts["burst"].Float("age_gyr"))
	assert.Equal(t, []float64{0.5, 1.5}, res.Scenario.Output.GyrochroneAgesGyr)
	assert.Equal(t, string(fromFile.Canonical()), string(res.Canonical()))
	assert.Equal(t, fromFile.Hash(), res.Hash())
	assert.Equal(t, []string{"--set spin.law=torque", "--set compare.bootstrap=200",
		"--set history.burst.age_gyr=0.8", "--set output.gyrochrone_ages_gyr=[0.5, 1.5]"}, res.Overrides)

	plain, err := LoadExample("fit")
	require.NoError(t, err)
	assert.NotEqual(t, plain.Hash(), res.Hash(), "an override changes the hash")

	// Quoted strings and a later override of the same key winning.
	res, err = Resolve("example:base", mustOverrides(t, `name="my run"`, "spin.law=torque", `spin.law="mamajek2008"`)...)
	require.NoError(t, err)
	assert.Equal(t, "my run", res.Scenario.Name)
	assert.Equal(t, "mamajek2008", res.Scenario.Spin.Law)
}

// A value out of range gets the file's own message, blamed on the --set
// argument instead of a file and line.
func TestOverrideOutOfRangeSameErrorAsFile(t *testing.T) {
	dir := t.TempDir()
	file := filepath.Join(dir, "bad.toml")
	require.NoError(t, os.WriteFile(file, []byte("extends = \"example:burst\"\n[history.burst]\nmass_fraction = 1.5\n"), 0o644))
	_, ferr := Load(file)
	fe := firstError(t, ferr)
	assert.Equal(t, file, fe.File)
	assert.Equal(t, 3, fe.Line)

	_, oerr := Resolve("example:burst", mustOverrides(t, "history.burst.mass_fraction=1.5")...)
	oe := firstError(t, oerr)
	assert.Equal(t, "--set history.burst.mass_fraction=1.5", oe.File)
	assert.Equal(t, 0, oe.Line)
	assert.Equal(t, fe.Key, oe.Key)
	assert.Equal(t, fe.Msg, oe.Msg)
	assert.Contains(t, oe.Error(), "--set history.burst.mass_fraction=1.5: ")

	// A string where a number belongs, and a name not in the list.
	_, err := Resolve("example:base", mustOverrides(t, "run.seed=12x")...)
	assert.Contains(t, firstError(t, err).Error(), "--set run.seed=12x: ")
	_, err = Resolve("example:base", mustOverrides(t, "spin.law=torq")...)
	e := firstError(t, err)
	assert.Equal(t, "spin.law", e.Key)
	assert.Contains(t, e.Error(), "--set spin.law=torq: ")
	assert.Contains(t, e.Msg, "torque", "the allowed names are listed")
}

// A key that does not exist: the nearest valid key is suggested.
func TestOverrideUnknownKeySuggests(t *testing.T) {
	_, err := Resolve("example:base", mustOverrides(t, "spin.lwa=torque")...)
	e := firstError(t, err)
	assert.Equal(t, "--set spin.lwa=torque", e.File)
	assert.Contains(t, e.Msg, `did you mean "law"?`)

	_, err = Resolve("example:fit", mustOverrides(t, "compare.bootstrp=200")...)
	assert.Contains(t, firstError(t, err).Msg, `did you mean "bootstrap"?`)
}

func TestParseOverrideErrors(t *testing.T) {
	for arg, want := range map[string]string{
		"spin.law":               "want key=value",
		"=3":                     "want key=value",
		"spin.law=":              "no value after '='",
		"compare.free[0].min=1":  "an array is set whole",
		"extends=example:stall":  "extends cannot be overridden",
		"output.x=[1, 2":         "is not a TOML value",
		`name="unterminated`:     "is not a TOML value",
		"history.burst.age=0.8x": "", // a bare word: parses, fails later as a string
	} {
		_, err := ParseOverride(arg)
		if want == "" {
			assert.NoError(t, err, arg)
			continue
		}
		e := firstError(t, err)
		assert.Equal(t, "--set "+arg, e.File, arg)
		assert.Contains(t, e.Msg, want, arg)
	}
	_, err := ParseOverrides([]string{"a", "b=1", "c"})
	var v ValidationErrors
	require.ErrorAs(t, err, &v)
	assert.Len(t, v, 2, "every bad argument is reported")
}

// kind = "none" removes a history part, as in a file; a whole part can be
// given as an inline table.
func TestOverrideHistoryParts(t *testing.T) {
	res, err := Resolve("example:burst", mustOverrides(t, "history.burst.kind=none")...)
	require.NoError(t, err)
	_, has := res.Scenario.History.Parts["burst"]
	assert.False(t, has)
	smooth, err := LoadExample("smooth")
	require.NoError(t, err)
	assert.Equal(t, smooth.Scenario.History, res.Scenario.History)

	res, err = Resolve("example:smooth", mustOverrides(t,
		`history.late={kind = "burst", age_gyr = 0.8, width_gyr = 0.05, mass_fraction = 0.1}`)...)
	require.NoError(t, err)
	assert.Equal(t, 0.8, res.Scenario.History.Parts["late"].Float("age_gyr"))
}

// A Base resolves many times without the overrides of one resolve leaking
// into another, and with no overrides gives what Load gives.
func TestBaseResolveIndependent(t *testing.T) {
	b, err := ReadBase("example:fit")
	require.NoError(t, err)
	a, err := b.Resolve(mustOverrides(t, "history.burst.age_gyr=0.3", "spin.law=torque")...)
	require.NoError(t, err)
	c, err := b.Resolve()
	require.NoError(t, err)
	plain, err := LoadExample("fit")
	require.NoError(t, err)
	assert.Equal(t, plain.Hash(), c.Hash())
	assert.Equal(t, 0.3, a.Scenario.History.Parts["burst"].Float("age_gyr"))
	assert.NotEqual(t, 0.3, c.Scenario.History.Parts["burst"].Float("age_gyr"))
}

// data.file given on the command line is relative to the working
// directory, not to the scenario file.
func TestOverrideDataFileRelativeToWorkingDirectory(t *testing.T) {
	res, err := Resolve(filepath.Join("examples", "fit.toml"), mustOverrides(t, "data.file=mine/catalog.csv")...)
	require.NoError(t, err)
	assert.Equal(t, filepath.Join("mine", "catalog.csv"), res.DataPath)
	assert.Nil(t, res.DataFS)
}

// "spinpop examples fit > my.toml" gives a file that loads, and finds its
// catalog, from any folder: it extends example:burst and names
// example:data/….
func TestCopiedExampleWorksAnywhere(t *testing.T) {
	for _, name := range Examples() {
		text, err := ExampleText(name)
		require.NoError(t, err)
		dir := t.TempDir()
		p := filepath.Join(dir, "my.toml")
		require.NoError(t, os.WriteFile(p, text, 0o644))
		copyRes, err := Load(p)
		require.NoError(t, err, name)
		emb, err := LoadExample(name)
		require.NoError(t, err)
		assert.Equal(t, emb.Hash(), copyRes.Hash(), name)
		if emb.DataPath != "" {
			f, err := copyRes.OpenData()
			require.NoError(t, err, name)
			require.NoError(t, f.Close())
		}
	}
	res, err := Load(filepath.Join("examples", "fit.toml"))
	require.NoError(t, err)
	assert.Equal(t, []string{"example:base.toml", "example:burst.toml", filepath.Join("examples", "fit.toml")}, res.Files,
		"layers read from the built-in examples say so")
}

func TestExtendsUnknownExample(t *testing.T) {
	dir := t.TempDir()
	p := filepath.Join(dir, "a.toml")
	require.NoError(t, os.WriteFile(p, []byte("# a variant\nextends = \"example:burts\"\n"), 0o644))
	_, err := Load(p)
	e := firstError(t, err)
	assert.Equal(t, p, e.File)
	assert.Equal(t, 2, e.Line)
	assert.Contains(t, e.Msg, "no such example; the examples are base, burst, fit, smooth, stall")
}
