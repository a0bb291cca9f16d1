package scenarios

import (
	"io/fs"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"testing/fstest"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// writeFiles writes name → text into dir, creating sub-directories.
func writeFiles(t *testing.T, dir string, files map[string]string) {
	t.Helper()
	for name, text := range files {
		p := filepath.Join(dir, filepath.FromSlash(name))
		require.NoError(t, os.MkdirAll(filepath.Dir(p), 0o755))
		require.NoError(t, os.WriteFile(p, []byte(text), 0o644))
	}
}

const parentText = `name = "parent"
[history.floor]
kind = "constant"
weight = 0.6
[history.decline]
kind = "exponential"
timescale_gyr = 8.0
weight = 0.4
[disk]
heating_beta = 0.35
sun_height_pc = 15.0
[output]
gyrochrone_ages_gyr = [0.5, 1.0, 2.0]
[survey.field]
kind = "cone"
l_deg = 58.0
b_deg = 21.0
radius_deg = 11.0
distance_max_pc = 1500.0
`

func TestExtendsMerge(t *testing.T) {
	dir := t.TempDir()
	writeFiles(t, dir, map[string]string{
		"parent.toml": parentText,
		"child.toml": `extends = "parent.toml"
name = "child"
[disk]
heating_beta = 0.5            # replaces the parent's value
[output]
gyrochrone_ages_gyr = [3.0]   # arrays replace, not append
[history.floor]
weight = 2.0                  # no kind: merges into the inherited part
[history.decline]
kind = "none"                 # removes the inherited part
[history.burst]
kind = "burst"
age_gyr = 0.6
width_gyr = 0.05
mass_fraction = 0.2
`,
	})
	r, err := Load(filepath.Join(dir, "child.toml"))
	require.NoError(t, err)
	s := r.Scenario
	assert.Equal(t, []string{filepath.Join(dir, "parent.toml"), filepath.Join(dir, "child.toml")}, r.Files)
	assert.Equal(t, "child", s.Name)
	assert.Equal(t, 0.5, s.Disk.HeatingBeta, "child value wins")
	assert.Equal(t, 15.0, s.Disk.SunHeightPc, "sibling key inherited")
	assert.Equal(t, 25.0, s.Disk.Sigma10GyrKms, "untouched key keeps its default")
	assert.Equal(t, []float64{3}, s.Output.GyrochroneAgesGyr)
	require.Len(t, s.History.Parts, 2)
	assert.Equal(t, Part{Kind: "constant", Values: map[string]float64{"weight": 2}, Arrays: map[string][]float64{}}, s.History.Parts["floor"])
	assert.NotContains(t, s.History.Parts, "decline")
	assert.Equal(t, Part{Kind: "burst", Values: map[string]float64{"age_gyr": 0.6, "width_gyr": 0.05, "mass_fraction": 0.2}, Arrays: map[string][]float64{}}, s.History.Parts["burst"])
	assert.Equal(t, 58.0, s.Survey.Field.LDeg)
}

func TestExtendsKindReplacesTable(t *testing.T) {
	dir := t.TempDir()
	writeFiles(t, dir, map[string]string{
		"parent.toml": parentText,
		"child.toml": `extends = "parent.toml"
[history.decline]
kind = "constant"      # was exponential: its timescale_gyr and weight must not linger
[survey.field]
kind = "sphere"        # the cone's l_deg, b_deg, radius_deg go with it
distance_max_pc = 300.0
`,
	})
	r, err := Load(filepath.Join(dir, "child.toml"))
	require.NoError(t, err)
	assert.Equal(t, Part{Kind: "constant", Values: map[string]float64{"weight": 1}, Arrays: map[string][]float64{}}, r.Scenario.History.Parts["decline"], "weight back to its default")
	assert.Equal(t, Field{Kind: "sphere", DistanceMaxPc: 300}, r.Scenario.Survey.Field)
}

func TestExtendsChainAndRelativePaths(t *testing.T) {
	dir := t.TempDir()
	writeFiles(t, dir, map[string]string{
		"common/parent.toml":    parentText,
		"common/mid.toml":       "extends = \"parent.toml\"\n[disk]\nsun_height_pc = 25.0\n",
		"runs/deep/leaf.toml":   "extends = \"../../common/mid.toml\"\n[run]\nseed = 7\n",
		"runs/deep/other.toml":  "extends = \"leaf.toml\"\n",
		"runs/deep/unused.toml": "this is not read",
	})
	r, err := Load(filepath.Join(dir, "runs", "deep", "other.toml"))
	require.NoError(t, err)
	require.Len(t, r.Files, 4)
	assert.Equal(t, filepath.Join(dir, "common", "parent.toml"), r.Files[0], "most basic first")
	assert.Equal(t, filepath.Join(dir, "runs", "deep", "other.toml"), r.Files[3], "loaded file last")
	assert.Equal(t, uint64(7), r.Scenario.Run.Seed)
	assert.Equal(t, 25.0, r.Scenario.Disk.SunHeightPc)
	assert.Equal(t, 0.35, r.Scenario.Disk.HeatingBeta)
	assert.Equal(t, "parent", r.Scenario.Name, "a name set by an ancestor is inherited")
}

func TestExtendsNameInherited(t *testing.T) {
	// The parent names itself "parent"; a child without a name inherits
	// it (the file-name default applies only when no file sets a name).
	dir := t.TempDir()
	writeFiles(t, dir, map[string]string{"parent.toml": parentText, "kid.toml": "extends = \"parent.toml\"\n"})
	r, err := Load(filepath.Join(dir, "kid.toml"))
	require.NoError(t, err)
	assert.Equal(t, "parent", r.Scenario.Name)
}

func TestExtendsMissingFile(t *testing.T) {
	dir := t.TempDir()
	writeFiles(t, dir, map[string]string{"a.toml": "# a\nname = \"a\"\nextends = \"nope.toml\"\n"})
	_, err := Load(filepath.Join(dir, "a.toml"))
	require.Error(t, err)
	msg := err.Error()
	assert.Contains(t, msg, filepath.Join(dir, "a.toml")+":3: ")
	assert.Contains(t, msg, `extends = "nope.toml": cannot read `+filepath.Join(dir, "nope.toml"))
	assert.ErrorIs(t, err, fs.ErrNotExist)
}

func TestExtendsCycle(t *testing.T) {
	dir := t.TempDir()
	writeFiles(t, dir, map[string]string{
		"a.toml":    "extends = \"b.toml\"\n",
		"b.toml":    "\n\nextends = \"c.toml\"\n",
		"c.toml":    "extends = \"a.toml\"\n",
		"self.toml": "extends = \"./self.toml\"\n",
	})
	a, b, c := filepath.Join(dir, "a.toml"), filepath.Join(dir, "b.toml"), filepath.Join(dir, "c.toml")
	_, err := Load(a)
	require.Error(t, err)
	assert.Contains(t, err.Error(), c+":1: extends cycle: "+a+" -> "+b+" -> "+c+" -> "+a)

	_, err = Load(filepath.Join(dir, "self.toml"))
	require.Error(t, err)
	assert.Contains(t, err.Error(), "extends cycle")
}

func TestErrorsBlameTheFileThatSetTheKey(t *testing.T) {
	dir := t.TempDir()
	writeFiles(t, dir, map[string]string{
		"base.toml": parentText + "[dsik]\nsun_height_pc = 1.0\n", // misspelt table
		"child.toml": `extends = "base.toml"
[imf]
mass_min_msun = 2.0   # above the inherited default maximum of 1.4
`,
	})
	_, err := Load(filepath.Join(dir, "child.toml"))
	require.Error(t, err)
	msg := err.Error()
	line := strings.Count(parentText, "\n") + 1
	assert.Contains(t, msg, filepath.Join(dir, "base.toml")+":"+strconv.Itoa(line)+`: unknown key "dsik" at the top level; did you mean "disk"?`)
	// The maximum is a built-in default; the error says so.
	assert.Contains(t, msg, "imf.mass_max_msun = 1.4 must be greater than imf.mass_min_msun = 2 (empty mass range) (built-in default; set it explicitly)")
}

func TestExtendsWithinFS(t *testing.T) {
	fsys := fstest.MapFS{
		"set/parent.toml": {Data: []byte(parentText)},
		"set/child.toml":  {Data: []byte("extends = \"parent.toml\"\n[run]\nseed = 3\n")},
		"set/escape.toml": {Data: []byte("extends = \"../../x.toml\"\n")},
	}
	r, err := LoadFS(fsys, "set/child.toml")
	require.NoError(t, err)
	assert.Equal(t, []string{"set/parent.toml", "set/child.toml"}, r.Files)
	assert.Equal(t, uint64(3), r.Scenario.Run.Seed)

	_, err = LoadFS(fsys, "set/escape.toml")
	require.Error(t, err)
	assert.Contains(t, err.Error(), "set/escape.toml:1: extends = \"../../x.toml\"")
	assert.Contains(t, err.Error(), "leaves the directory tree")

	data, err := fs.ReadFile(fsys, "set/child.toml")
	require.NoError(t, err)
	r2, err := LoadBytes("set/child.toml", data, fsys)
	require.NoError(t, err)
	assert.Equal(t, r.Hash(), r2.Hash())
}

func TestLoadRefusesHugeFile(t *testing.T) {
	dir := t.TempDir()
	big := strings.Repeat("# padding line\n", maxFileBytes/15+1)
	writeFiles(t, dir, map[string]string{"big.toml": big})
	_, err := Load(filepath.Join(dir, "big.toml"))
	require.Error(t, err)
	assert.Contains(t, err.Error(), "larger than "+strconv.Itoa(maxFileBytes)+" bytes")
}

func TestLoadMissingTopFile(t *testing.T) {
	p := filepath.Join(t.TempDir(), "absent.toml")
	_, err := Load(p)
	require.Error(t, err)
	assert.Contains(t, err.Error(), p+": cannot read scenario")
	assert.ErrorIs(t, err, fs.ErrNotExist)
}

// A rule between two keys blames the one the user changed: here the child
// raises the bright limit above the faint limit its parent sets, and the
// message must name the child's line, not the parent's (which was fine
// alone). With both keys in one file the maximum is blamed, as before; an
// override (--set) is blamed on its own label.
func TestPairRuleBlamesTheLaterLayer(t *testing.T) {
	dir := t.TempDir()
	writeFiles(t, dir, map[string]string{
		"parent.toml": minimal + "[survey]\nbright_limit_mag = 9.0\nfaint_limit_mag = 16.0\n",
		"child.toml":  "extends = \"parent.toml\"\n\n[survey]\nbright_limit_mag = 20.0\n",
	})
	_, err := Load(filepath.Join(dir, "child.toml"))
	require.Error(t, err)
	assert.Contains(t, err.Error(), filepath.Join(dir, "child.toml")+":4: survey.faint_limit_mag = 16 must be greater than survey.bright_limit_mag = 20")

	writeFiles(t, dir, map[string]string{"child.toml": "extends = \"parent.toml\"\n\n[survey]\nfaint_limit_mag = 5.0\n"})
	_, err = Load(filepath.Join(dir, "child.toml"))
	require.Error(t, err)
	assert.Contains(t, err.Error(), filepath.Join(dir, "child.toml")+":4: survey.faint_limit_mag = 5 must be greater")

	base, err := ReadBase(filepath.Join(dir, "parent.toml"))
	require.NoError(t, err)
	o, err := ParseOverride("survey.bright_limit_mag=20")
	require.NoError(t, err)
	_, err = base.Resolve(o)
	require.Error(t, err)
	assert.Contains(t, err.Error(), "--set survey.bright_limit_mag=20")
	assert.NotContains(t, err.Error(), "parent.toml:")
}
