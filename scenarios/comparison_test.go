package scenarios

import (
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func TestDefaultFreeMaterialised(t *testing.T) {
	// A part named "burst" (compare.burst_part's default) gets the default
	// free list, written into the resolved scenario.
	r := loadMinimal(t, "[history.burst]\nkind = \"burst\"\nage_gyr = 0.6\nwidth_gyr = 0.05\nmass_fraction = 0.2\n")
	want := []FreeParam{
		{Path: "history.burst.age_gyr", Min: 0.1, Max: 3, Prior: "uniform"},
		{Path: "history.burst.width_gyr", Min: 0.02, Max: 0.5, Prior: "uniform"},
		{Path: "history.burst.mass_fraction", Min: 0, Max: 0.6, Prior: "uniform"},
	}
	assert.Equal(t, want, r.Scenario.Compare.Free)
	assert.Equal(t, want, DefaultFree("burst", 10))
	canon := string(r.Canonical())
	assert.Contains(t, canon, "[[compare.free]]\nmax = 3.0\nmin = 0.1\npath = \"history.burst.age_gyr\"\nprior = \"uniform\"\n")

	// The burst part chosen by compare.burst_part; a young history caps
	// the age range.
	r = loadMinimal(t, "[history]\nmax_age_gyr = 2.0\n[history.young]\nkind = \"burst\"\nage_gyr = 0.6\nwidth_gyr = 0.05\nmass_fraction = 0.2\n[compare]\nburst_part = \"young\"\n")
	require.Len(t, r.Scenario.Compare.Free, 3)
	assert.Equal(t, FreeParam{Path: "history.young.age_gyr", Min: 0.1, Max: 2, Prior: "uniform"}, r.Scenario.Compare.Free[0])

	// No such part, or a history too young for the range: nothing free.
	assert.Nil(t, loadMinimal(t, "[history.young]\nkind = \"burst\"\nage_gyr = 0.6\nwidth_gyr = 0.05\nmass_fraction = 0.2\n").Scenario.Compare.Free)
	assert.Nil(t, loadMinimal(t, "[history]\nmax_age_gyr = 0.1\n").Scenario.Compare.Free)
}

func TestExplicitFreeList(t *testing.T) {
	burst := "[history.burst]\nkind = \"burst\"\nage_gyr = 0.6\nwidth_gyr = 0.05\nmass_fraction = 0.2\n"
	r := loadMinimal(t, burst+"[[compare.free]]\npath = \"history.burst.width_gyr\"\nmin = 0.01\nmax = 1.0\nprior = \"log-uniform\"\n[[compare.free]]\npath = \"history.smooth.weight\"\nmin = 0.0\nmax = 5.0\n")
	assert.Equal(t, []FreeParam{
		{Path: "history.burst.width_gyr", Min: 0.01, Max: 1, Prior: "log-uniform"},
		{Path: "history.smooth.weight", Min: 0, Max: 5, Prior: "uniform"}, // prior defaults to uniform
	}, r.Scenario.Compare.Free, "a list given replaces the default list")

	// "free = []" frees nothing, and the canonical form keeps it so: it
	// must not read back as "not given" and take the default list.
	none := loadMinimal(t, burst+"[compare]\nfree = []\n")
	assert.Nil(t, none.Scenario.Compare.Free)
	canon := none.Canonical()
	assert.Contains(t, string(canon), "\nfree = []\n")
	back, err := LoadBytes("back.toml", canon, nil)
	require.NoError(t, err)
	assert.Equal(t, none.Scenario, back.Scenario)
	assert.Equal(t, none.Hash(), back.Hash())
	assert.NotEqual(t, loadMinimal(t, burst).Hash(), none.Hash(), "no free parameters is another scenario than the default ones")

	// A history without a burst also resolves to free = [] in canonical
	// form, and reads back the same.
	smooth := loadMinimal(t, "")
	back, err = LoadBytes("back.toml", smooth.Canonical(), nil)
	require.NoError(t, err)
	assert.Equal(t, smooth.Hash(), back.Hash())
}

func TestFreeListInheritedAndReplaced(t *testing.T) {
	dir := t.TempDir()
	writeFiles(t, dir, map[string]string{
		"parent.toml": parentText + "[[compare.free]]\npath = \"history.decline.timescale_gyr\"\nmin = 2.0\nmax = 20.0\n",
		"same.toml":   "extends = \"parent.toml\"\n",
		"other.toml":  "extends = \"parent.toml\"\n[[compare.free]]\npath = \"history.floor.weight\"\nmin = 0.0\nmax = 3.0\n",
		// Removing the part a parent frees leaves a dangling path.
		"dangling.toml": "extends = \"parent.toml\"\n[history.decline]\nkind = \"none\"\n",
	})
	r, err := Load(filepath.Join(dir, "same.toml"))
	require.NoError(t, err)
	assert.Equal(t, []FreeParam{{Path: "history.decline.timescale_gyr", Min: 2, Max: 20, Prior: "uniform"}}, r.Scenario.Compare.Free)
	r, err = Load(filepath.Join(dir, "other.toml"))
	require.NoError(t, err)
	assert.Equal(t, []FreeParam{{Path: "history.floor.weight", Min: 0, Max: 3, Prior: "uniform"}}, r.Scenario.Compare.Free, "arrays of tables replace")
	_, err = Load(filepath.Join(dir, "dangling.toml"))
	require.Error(t, err)
	line := strings.Count(parentText, "\n") + 2
	assert.Contains(t, err.Error(), filepath.Join(dir, "parent.toml")+":"+strconv.Itoa(line)+`: compare.free[0].path = "history.decline.timescale_gyr" does not name a parameter a fit can move`)
	assert.Contains(t, err.Error(), "the valid paths are: history.floor.weight")
}

func TestBurstPartRules(t *testing.T) {
	// The default name may match no part (a smooth scenario), and a part
	// named like it must be a burst.
	loadMinimal(t, "")
	_, err := LoadBytes("x.toml", []byte(minimal+"[history.burst]\nkind = \"dip\"\nage_gyr = 2.0\nwidth_gyr = 0.3\ndepth = 0.5\n"), nil)
	require.Error(t, err)
	assert.Contains(t, err.Error(), `compare.burst_part = "burst" names a part of kind "dip"`)
	assert.Contains(t, err.Error(), "(built-in default; set it explicitly)")
}

func TestComparePeriodDefaultsStayValid(t *testing.T) {
	// Cuts wholly below 0.5 d: the defaults fall back to the cuts' range
	// rather than make the scenario invalid.
	s := loadMinimal(t, "[cuts]\nperiod_min_d = 0.1\nperiod_max_d = 0.4\n").Scenario
	assert.Equal(t, 0.1, s.Compare.PeriodMinD)
	assert.Equal(t, 0.4, s.Compare.PeriodMaxD)
}

func TestPartHashDataAndCompare(t *testing.T) {
	base := loadMinimal(t, withData)
	otherFile := loadMinimal(t, strings.Replace(withData, "cat.csv", "cat2.csv", 1))
	otherBins := loadMinimal(t, withData+"[compare]\ncolor_bins = 12\n")

	hash := func(r *Resolved, secs ...string) string {
		h, err := r.PartHash(secs...)
		require.NoError(t, err)
		return h
	}
	assert.NotEqual(t, base.Hash(), otherFile.Hash(), "the data file is part of the scenario")
	assert.NotEqual(t, hash(base, "data"), hash(otherFile, "data"))
	assert.Equal(t, hash(base, "compare"), hash(otherFile, "compare"))
	assert.Equal(t, hash(base, "data.columns"), hash(otherFile, "data.columns"))
	assert.Equal(t, hash(base, "data.columns.app_mag_v"), hash(otherFile, "data.columns.app_mag_v"))
	assert.NotEqual(t, hash(base, "data.file"), hash(otherFile, "data.file"))

	assert.NotEqual(t, hash(base, "compare"), hash(otherBins, "compare"))
	assert.Equal(t, hash(base, "compare.free", "compare.log_period_bins"), hash(otherBins, "compare.free", "compare.log_period_bins"))
	assert.Equal(t, hash(base, "data"), hash(otherBins, "data"))

	// Free lists: the default one and the same list written out agree.
	burst := "[history.burst]\nkind = \"burst\"\nage_gyr = 0.6\nwidth_gyr = 0.05\nmass_fraction = 0.2\n"
	def := loadMinimal(t, burst)
	var b strings.Builder
	for _, f := range DefaultFree("burst", 10) {
		b.WriteString("[[compare.free]]\npath = " + quoteString(f.Path) + "\nmin = " + tomlFloat(f.Min) + "\nmax = " + tomlFloat(f.Max) + "\n")
	}
	written := loadMinimal(t, burst+b.String())
	assert.Equal(t, hash(def, "compare.free"), hash(written, "compare.free"))
	assert.Equal(t, def.Hash(), written.Hash())

	_, err := base.PartHash("compare.nope")
	require.Error(t, err)
}
