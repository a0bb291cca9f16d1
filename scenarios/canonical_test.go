package scenarios

import (
	"fmt"
	"regexp"
	"sort"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/model/spots"
)

func TestCanonicalRoundTrip(t *testing.T) {
	for _, name := range Examples() {
		t.Run(name, func(t *testing.T) {
			r, err := LoadExample(name)
			require.NoError(t, err)
			canon := r.Canonical()
			assert.NotContains(t, string(canon), "extends")
			assert.NotContains(t, string(canon), "#", "no comments")

			back, err := LoadBytes("elsewhere.toml", canon, nil)
			require.NoError(t, err, string(canon))
			assert.Equal(t, string(canon), string(back.Canonical()))
			assert.Equal(t, r.Hash(), back.Hash())
			assert.Equal(t, r.Scenario, back.Scenario)
		})
	}
}

func TestCanonicalIsSorted(t *testing.T) {
	r, err := LoadExample("burst")
	require.NoError(t, err)
	var headers []string
	var keys []string
	flush := func() {
		assert.True(t, sort.StringsAreSorted(keys), "keys %v", keys)
		keys = nil
	}
	for _, line := range strings.Split(string(r.Canonical()), "\n") {
		switch {
		case line == "":
		case strings.HasPrefix(line, "["):
			flush()
			headers = append(headers, strings.Trim(line, "[]"))
		default:
			keys = append(keys, line[:strings.Index(line, " = ")])
		}
	}
	flush()
	assert.True(t, sort.StringsAreSorted(headers), "headers %v", headers)
	assert.Contains(t, headers, "history.burst")
}

func TestCanonicalFloatFormat(t *testing.T) {
	r := loadMinimal(t, "[disk]\nsun_height_pc = -0.0\nsun_radius_kpc = 8e0\nheating_tau1_gyr = 1e-7\n")
	canon := string(r.Canonical())
	assert.Contains(t, canon, "sun_height_pc = 0.0\n", "-0 written as 0.0")
	assert.Contains(t, canon, "sun_radius_kpc = 8.0\n", "whole floats keep a decimal point")
	assert.Contains(t, canon, "heating_tau1_gyr = 1e-07\n", "Go's shortest 'g' format")
	assert.Contains(t, canon, "stars_generated = 2000000\n", "integers stay integers")
	assert.Regexp(t, regexp.MustCompile(`(?m)^period_max_d = 333\.3333333333333$`), canon, "shortest round-trip digits")
}

func TestHashIgnoresLayout(t *testing.T) {
	a := `name = "h"
[run]
seed = 5
stars_generated = 2_000_000
[history]
max_age_gyr = 10
[history.smooth]
kind = "constant"
[survey.field]
kind = "cone"
l_deg = 58
b_deg = 21.0
radius_deg = 11.0
distance_max_pc = 1500.0
[disk]
sun_height_pc = 0.0
`
	b := `# the same scenario, written differently
[survey]
field = { distance_max_pc = 1.5e3, radius_deg = 11.0, b_deg = 21.0, l_deg = 58.0, kind = "cone" }

[disk]
sun_height_pc = -0.0   # negative zero is zero

[history.smooth]
kind = "constant"
weight = 1.0            # the default, written out

[run]
stars_generated = 2e6
seed = 5

[history]
max_age_gyr = 1e1

[imf]
form = "kroupa2001"     # the default, written out
`
	ra, err := LoadBytes("h.toml", []byte(a), nil)
	require.NoError(t, err)
	rb, err := LoadBytes("h.toml", []byte(b), nil)
	require.NoError(t, err)
	assert.Equal(t, ra.Hash(), rb.Hash())
	assert.Regexp(t, `^[0-9a-f]{64}$`, ra.Hash())

	// Any change of value changes the hash.
	for _, change := range []struct{ old, new string }{
		{"seed = 5", "seed = 6"},
		{"l_deg = 58", "l_deg = 58.000000001"},
		{"[history.smooth]\nkind = \"constant\"", "[history.smooth]\nkind = \"constant\"\nweight = 2.0"},
		{`name = "h"`, `name = "h2"`},
	} {
		c := strings.Replace(a, change.old, change.new, 1)
		require.NotEqual(t, a, c)
		rc, err := LoadBytes("h.toml", []byte(c), nil)
		require.NoError(t, err)
		assert.NotEqual(t, ra.Hash(), rc.Hash(), "after %q → %q", change.old, change.new)
	}
}

func TestHashStable(t *testing.T) {
	r1, err := LoadExample("burst")
	require.NoError(t, err)
	r2, err := LoadExample("burst")
	require.NoError(t, err)
	assert.Equal(t, r1.Hash(), r2.Hash())
	assert.Equal(t, r1.Hash(), r1.Hash(), "repeated calls agree (no map order leaks in)")
}

func TestPartHash(t *testing.T) {
	burst, err := LoadExample("burst")
	require.NoError(t, err)
	smooth, err := LoadExample("smooth")
	require.NoError(t, err)
	stall, err := LoadExample("stall")
	require.NoError(t, err)

	// Burst and smooth differ only in name, description and history.
	starsSide := []string{"disk", "dust", "imf", "run", "spin", "stars", "survey", "cuts"}
	hb, err := burst.PartHash(starsSide...)
	require.NoError(t, err)
	hs, err := smooth.PartHash(starsSide...)
	require.NoError(t, err)
	assert.Equal(t, hb, hs)
	assert.NotEqual(t, burst.Hash(), smooth.Hash())

	hb, err = burst.PartHash("history")
	require.NoError(t, err)
	hs, err = smooth.PartHash("history")
	require.NoError(t, err)
	assert.NotEqual(t, hb, hs)

	// Stall differs from smooth in spin only.
	h1, err := stall.PartHash("spin")
	require.NoError(t, err)
	h2, err := smooth.PartHash("spin")
	require.NoError(t, err)
	assert.NotEqual(t, h1, h2)
	h1, err = stall.PartHash("spin.spots", "history")
	require.NoError(t, err)
	h2, err = smooth.PartHash("history", "spin.spots", "history")
	require.NoError(t, err)
	assert.Equal(t, h1, h2, "order and repetition of sections do not matter")

	// The section name is hashed with its content.
	h1, err = smooth.PartHash("spin.stall.enabled")
	require.NoError(t, err)
	h2, err = smooth.PartHash("spin.weakened_braking.enabled")
	require.NoError(t, err)
	assert.NotEqual(t, h1, h2, "equal values under different keys")

	_, err = smooth.PartHash("history.burst")
	require.Error(t, err)
	assert.Contains(t, err.Error(), `no section "history.burst"`)
	_, err = smooth.PartHash("dsik")
	require.Error(t, err)
	assert.Contains(t, err.Error(), "top-level sections are")
	_, err = smooth.PartHash()
	require.Error(t, err)
}

func TestHashFollowsScenarioEdits(t *testing.T) {
	r, err := LoadExample("base")
	require.NoError(t, err)
	h := r.Hash()
	r.Scenario.Run.Seed++
	assert.NotEqual(t, h, r.Hash(), "Canonical renders the current Scenario")
}

func TestQuoteStringRoundTrips(t *testing.T) {
	desc := "tab\there \"quoted\" back\\slash\nnew line \u0001 ctl \u007f del, ünï©ødé"
	r2, err := LoadBytes("q.toml", []byte("description = "+quoteString(desc)+"\n"+minimal), nil)
	require.NoError(t, err)
	assert.Equal(t, desc, r2.Scenario.Description)
	back, err := LoadBytes("q.toml", r2.Canonical(), nil)
	require.NoError(t, err)
	assert.Equal(t, desc, back.Scenario.Description)
}

func TestCanonicalConesAndBins(t *testing.T) {
	text := `[history.recent]
kind = "bins"
edges_gyr = [0.0, 1.0, 3.0]
rates = [2.0, 1.0]
[history.dip]
kind = "dip"
age_gyr = 2.0
width_gyr = 0.3
depth = 0.5
[survey.field]
kind = "cones"
[[survey.field.cones]]
l_deg = 10.0
b_deg = -5.0
radius_deg = 3.0
distance_max_pc = 800.0
[[survey.field.cones]]
l_deg = 200.0
b_deg = 40.0
radius_deg = 6.0
distance_min_pc = 50.0
distance_max_pc = 900.0
`
	r, err := LoadBytes("c.toml", []byte(text), nil)
	require.NoError(t, err)
	assert.Equal(t, []Cone{
		{LDeg: 10, BDeg: -5, RadiusDeg: 3, DistanceMaxPc: 800},
		{LDeg: 200, BDeg: 40, RadiusDeg: 6, DistanceMinPc: 50, DistanceMaxPc: 900},
	}, r.Scenario.Survey.Field.Cones)
	assert.Equal(t, Part{Kind: "bins", Values: map[string]float64{"weight": 1}, Arrays: map[string][]float64{"edges_gyr": {0, 1, 3}, "rates": {2, 1}}}, r.Scenario.History.Parts["recent"])
	canon := string(r.Canonical())
	assert.Contains(t, canon, "[survey.field]\nkind = \"cones\"\n\n[[survey.field.cones]]\n")
	assert.NotContains(t, canon, "l_deg = 0.0", "the field's own cone keys do not apply to kind cones")
	back, err := LoadBytes("c2.toml", r.Canonical(), nil)
	require.NoError(t, err)
	assert.Equal(t, r.Hash(), back.Hash())

	// A cone missing keys is blamed on its own [[...]] header.
	bad := strings.Replace(text, "l_deg = 200.0\n", "", 1)
	_, err = LoadBytes("c.toml", []byte(bad), nil)
	require.Error(t, err)
	assert.Contains(t, err.Error(), "c.toml:17: survey.field.cones[1].l_deg is missing; each cone needs b_deg, distance_max_pc, l_deg, radius_deg")
}

// The monotone search loss: the efficiency at a node is the product of the
// shares kept up to it, times the node-by-node table's value; the table
// left at 1 is not part of a scenario's identity; each share is a linear
// nuisance path whose gradient is the nodes' difference quotient (exact:
// each node is linear in each share), also where another share is 0.
func TestSearchFalloff(t *testing.T) {
	plain := loadMinimal(t, "")
	atDefaults := loadMinimal(t, "[survey.search_falloff]\nkept_3d = 1.0\nkept_96d = 1.0\n")
	assert.Equal(t, plain.Hash(), atDefaults.Hash())
	assert.NotContains(t, string(plain.Canonical()), "search_falloff")
	assert.Nil(t, plain.Scenario.Survey.SearchBands(), "no loss: no bands")

	lossy := loadMinimal(t, "[survey.search_falloff]\nkept_12d = 0.5\nkept_48d = 0.4\n[survey.search_by_rossby]\nefficiency_96d = 0.5\n")
	assert.NotEqual(t, plain.Hash(), lossy.Hash())
	back, err := LoadBytes("back.toml", lossy.Canonical(), nil)
	require.NoError(t, err)
	assert.Equal(t, lossy.Hash(), back.Hash())
	// By hand: 1, 1, 0.5, 0.5, 0.5·0.4, 0.5·0.4·0.5 (the table's 96 d node).
	assert.InDeltaSlice(t, []float64{1, 1, 0.5, 0.5, 0.2, 0.1}, back.Scenario.Survey.SearchBands(), 1e-15)

	_, err = LoadBytes("bad.toml", []byte(minimal+"\n[survey.search_falloff]\nkept_6d = 1.5\n"), nil)
	require.Error(t, err)
	assert.Contains(t, err.Error(), "survey.search_falloff.kept_6d")

	for _, zeroAt := range []string{"", "kept_6d"} {
		s := lossy.Scenario
		if zeroAt != "" {
			require.True(t, SetAt(&s, "survey.search_falloff."+zeroAt, 0))
		}
		for _, k := range searchFalloffKeys {
			path := "survey.search_falloff." + k
			assert.True(t, IsNuisancePath(&s, path), k)
			assert.True(t, IsLinearPath(path), k)
			g, ok := SearchGradient(&s, path)
			require.True(t, ok, k)
			v, _ := ValueAt(&s, path)
			s2 := s
			require.True(t, SetAt(&s2, path, v+0.25))
			lo, hi := s.Survey.SearchBands(), s2.Survey.SearchBands()
			for n := range g {
				assert.InDelta(t, (hi[n]-lo[n])/0.25, g[n], 1e-12, "%s, node %d, zero at %q", k, n, zeroAt)
			}
		}
	}
	assert.False(t, IsLinearPath("survey.search_falloff.kept_7d"), "no such node")
}

// The free-form search loss is part of a scenario's identity only when it
// loses something: written out at its defaults (every node 1) the
// scenario hashes as one without the table, as every scenario did before
// the table existed; one node below 1 is another run. Its node paths are
// nuisance parameters a fit may free.
func TestSearchByRossbyIdentity(t *testing.T) {
	plain := loadMinimal(t, "")
	atDefaults := loadMinimal(t, "[survey.search_by_rossby]\nefficiency_3d = 1.0\nefficiency_96d = 1.0\n")
	assert.Equal(t, plain.Hash(), atDefaults.Hash())
	assert.NotContains(t, string(plain.Canonical()), "search_by_rossby")
	lossy := loadMinimal(t, "[survey.search_by_rossby]\nefficiency_48d = 0.5\n")
	assert.NotEqual(t, plain.Hash(), lossy.Hash())
	back, err := LoadBytes("back.toml", lossy.Canonical(), nil)
	require.NoError(t, err)
	assert.Equal(t, lossy.Hash(), back.Hash())
	assert.Equal(t, []float64{1, 1, 1, 1, 0.5, 1}, back.Scenario.Survey.SearchByRossby.Values())
	assert.False(t, IsLinearPath("survey.search_half_period_d"), "the logistic is not linear in its half period")
	assert.False(t, IsLinearPath("survey.search_by_rossby.efficiency_7d"), "no such node")
	// The binary share is linear (the weights' form) but sets no node.
	assert.True(t, IsLinearPath("stars.binary_fraction_scale"))
	assert.False(t, IsSearchNodePath("stars.binary_fraction_scale"))
	_, ok := SearchGradient(&lossy.Scenario, "stars.binary_fraction_scale")
	assert.False(t, ok)
	for i, k := range searchByRossbyKeys {
		assert.True(t, IsNuisancePath(&lossy.Scenario, "survey.search_by_rossby."+k), k)
		assert.True(t, IsLinearPath("survey.search_by_rossby."+k), k)
		g, ok := SearchGradient(&lossy.Scenario, "survey.search_by_rossby."+k)
		assert.True(t, ok, k)
		want := make([]float64, len(spots.RossbyNodesD))
		want[i] = 1
		assert.Equal(t, want, g, "%s sets its own node alone", k)
		assert.Equal(t, k, fmt.Sprintf("efficiency_%gd", spots.RossbyNodesD[i]), "the key names its node's scaled period")
		v, ok := ValueAt(&lossy.Scenario, "survey.search_by_rossby."+k)
		assert.True(t, ok, k)
		assert.Equal(t, map[bool]float64{true: 0.5, false: 1}[k == "efficiency_48d"], v, k)
	}
}
