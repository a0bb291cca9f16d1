package pipeline

import (
	"os"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/assemble"
	"spinpop/compare"
	"spinpop/disk"
	"spinpop/scenarios"
)

// reachOf builds the scenario example:base with extra TOML appended and
// works out the law's color reach against a catalog of stars of these
// colors.
func reachOf(t *testing.T, extra string, colors ...float64) *LawColorReach {
	t.Helper()
	path := filepath.Join(t.TempDir(), "reach.toml")
	require.NoError(t, os.WriteFile(path, []byte("extends = \"example:base\"\nname = \"reach\"\n"+extra), 0o644))
	res, err := scenarios.Resolve(path)
	require.NoError(t, err)
	b, err := Build(&res.Scenario, path)
	require.NoError(t, err)
	obs := &compare.Observed{}
	for _, bv := range colors {
		obs.Stars = append(obs.Stars, compare.ObservedStar{BV: bv, ColumnBV: bv})
	}
	sp, err := assemble.Space(&res.Scenario)
	require.NoError(t, err)
	c := &Comparison{Resolved: res, Scenario: &res.Scenario, Built: b, Space: sp}
	r, err := c.lawColorReach()
	require.NoError(t, err)
	if r == nil {
		return nil
	}
	return r.withCatalog(obs, false, 0)
}

// The reach is the law's bluest calibrated color plus the field's largest
// reddening. Expected values: Barnes (2007)'s calibrated colors begin at
// B−V = 0.45 (spin.Barnes2007; the edge is from memory); E(B−V) = A_V / R_V with R_V = 3.1, the
// diffuse-ISM value (Cardelli, Clayton & Mathis 1989; common practice);
// in a dust layer 50 kpc thick, A_V = a·d to 0.7 % over the field's
// 1.5 kpc (a·d (1 − e^−x)/x, x = |z|/h ≤ 0.013).
func TestLawColorReach(t *testing.T) {
	const thick = "[dust]\nmodel = \"exponential\"\nscale_height_pc = 50000.0\nmidplane_av_per_kpc = 0.25\n"
	// example:base's field: a cone of radius 8° about b = −34° out to
	// 1500 pc, so its sight line nearest the plane is at b = −26°; in
	// uniform dust the latitude does not matter.
	ebv := 0.25 * 1.5 / 3.1

	r := reachOf(t, thick, 0.46, 0.50, 0.56, 0.60, 1.2)
	require.NotNil(t, r)
	assert.InDelta(t, ebv, r.MaxEBV, 0.007*ebv)
	assert.InDelta(t, 0.45+ebv, r.ReachBV, 0.001)
	assert.True(t, r.Exposed(), "cuts.b_v_min = 0.45 lies below the reach")
	assert.Equal(t, 3, r.StarsBelow, "the stars bluer than %.3f", r.ReachBV)
	assert.Contains(t, r.Warning(), "or cuts.b_v_min = 0.58")

	r = reachOf(t, thick+"[cuts]\nb_v_min = 0.58\n", 0.60)
	assert.False(t, r.Exposed(), "colors from 0.58 up lie beyond the reach")
	assert.Empty(t, r.Warning())

	// A zero-point offset of the catalog's colors moves the reach with it.
	r = reachOf(t, thick+"[survey]\ncolor_offset_mag = 0.05\n")
	assert.InDelta(t, 0.50+ebv, r.ReachBV, 0.001)

	// Without dust the reach is the law's own edge, and a cut there is safe.
	r = reachOf(t, "[dust]\nmodel = \"none\"\n", 0.46)
	assert.Equal(t, 0.0, r.MaxEBV)
	assert.Equal(t, 0.45, r.ReachBV)
	assert.False(t, r.Exposed())

	r = reachOf(t, "[dust]\nmodel = \"none\"\n[spin]\nlaw = \"mamajek2008\"\n", 0.46)
	// Their published c = 0.495, and spinpop keeps a law's colors 0.05 mag
	// clear of c, where the relation runs to zero period (model/spin).
	assert.InDelta(t, 0.545, r.ReachBV, 1e-12)
	assert.True(t, r.Exposed(), "Mamajek & Hillenbrand (2008) begin redder than the cut at 0.45")
	assert.Equal(t, 1, r.StarsBelow)

	// The color scale stretches catalog colors about B−V = 1 (README,
	// survey.color_scale): 0.7 puts the reddened edge x = 0.45 + E at
	// x + 0.3 (1 − x).
	r = reachOf(t, thick+"[survey]\ncolor_scale = 0.7\n")
	x := 0.45 + ebv
	assert.InDelta(t, x+0.3*(1-x), r.ReachBV, 0.002)

	// A thin layer reddens most along the sight lines nearest the plane:
	// b = −26° gives more dust than b = −42° at the same distance, and the
	// cone from −42° to −26° is bounded by its edge at −26°.
	thin := "[dust]\nmodel = \"exponential\"\nscale_height_pc = 110.0\nmidplane_av_per_kpc = 0.8\n"
	r = reachOf(t, thin)
	nearPlane := reachOf(t, thin+"[survey.field]\nb_deg = -26.0\nradius_deg = 0.01\n")
	farFromPlane := reachOf(t, thin+"[survey.field]\nb_deg = -42.0\nradius_deg = 0.01\n")
	assert.InDelta(t, nearPlane.MaxEBV, r.MaxEBV, 1e-4)
	assert.Greater(t, nearPlane.MaxEBV, farFromPlane.MaxEBV)

	// The whole sky: with the Sun in the midplane the dustiest sight line
	// runs in the plane, A_V = a·d exactly; with the Sun 20.8 pc above it
	// (example:base), a line slightly below the plane crosses the layer's
	// densest part obliquely and collects more than the one along b = 0,
	// which the reach must not miss.
	sky := thin + "[survey.field]\nkind = \"sphere\"\ndistance_max_pc = 1500.0\n"
	r = reachOf(t, sky+"[disk]\nsun_height_pc = 0.0\n")
	assert.InDelta(t, 0.8*1.5/3.1, r.MaxEBV, 1e-9)
	r = reachOf(t, sky)
	inPlane := reachOf(t, thin+"[survey.field]\nb_deg = 0.0\nradius_deg = 0.01\n")
	assert.Greater(t, r.MaxEBV, 1.05*inPlane.MaxEBV, "the dustiest line lies below the plane, not in it")

	// On a dereddened color axis (compare.color_axis) a star takes its
	// column by its color less the dust's E(B−V): the law's edge stays at
	// 0.45 whatever the dust, and no column is exposed to stars bluer
	// than the law.
	deredden := "[compare]\ncolor_axis = \"dereddened\"\n"
	r = reachOf(t, thick+deredden, 0.46)
	assert.InDelta(t, ebv, r.MaxEBV, 0.007*ebv)
	assert.InDelta(t, 0.45, r.ReachBV, 1e-12)
	assert.False(t, r.Exposed())
	// A zero point still moves it; a color scale of 0.7 puts the column
	// color of the edge star at lo + 0.3 (1 − lo) − 0.3 E, largest
	// unreddened: 0.615.
	r = reachOf(t, thick+deredden+"[survey]\ncolor_offset_mag = 0.05\n")
	assert.InDelta(t, 0.50, r.ReachBV, 1e-9)
	r = reachOf(t, thick+deredden+"[survey]\ncolor_scale = 0.7\n")
	assert.InDelta(t, 0.615, r.ReachBV, 1e-9)

	// The torque law integrates a spin-down for any star: no color edge.
	assert.Nil(t, reachOf(t, "[spin]\nlaw = \"torque\"\n"))
}

// maxAlong finds a maximum inside the span, not only at its ends.
func TestMaxAlongFindsAnInteriorPeak(t *testing.T) {
	peak := func(b float64) float64 { return -(b + 1.12) * (b + 1.12) }
	assert.InDelta(t, 0, maxAlong(disk.LatitudeSpan{LoDeg: -90, HiDeg: 90, MaxDistPc: 1}, peak), 0.03*0.03)
	assert.Equal(t, peak(-26), maxAlong(disk.LatitudeSpan{LoDeg: -42, HiDeg: -26, MaxDistPc: 1}, peak))
}

// With compare.mask_blue_of_law the columns that begin below the reach
// are left out whole; the note replaces the warning.
func TestLawColorReachMask(t *testing.T) {
	sp, err := compare.NewSpace(0.45, 0.7, 5, 1, 100, 2, nil) // columns from 0.45, 0.50, 0.55, 0.60, 0.65
	require.NoError(t, err)
	r := &LawColorReach{Law: "barnes2007", LawMinBV: 0.45, MaxEBV: 0.121, ReachBV: 0.571, CutMinBV: 0.45}
	want := []bool{true, true, true, true, true, true, false, false, false, false}
	assert.Equal(t, want, r.mask(sp), "0.45, 0.50 and 0.55 begin below 0.571; 0.60 and 0.65 do not")
	assert.InDelta(t, 0.60, r.ComparedFromBV, 1e-12, "the compared colors begin at the first column kept")

	obs := &compare.Observed{Stars: []compare.ObservedStar{{BV: 0.5, ColumnBV: 0.5}, {BV: 0.56, ColumnBV: 0.56}, {BV: 0.58, ColumnBV: 0.58}, {BV: 0.9, ColumnBV: 0.9}}}
	open := r.withCatalog(obs, false, 0)
	assert.Equal(t, 2, open.StarsBelow, "stars bluer than the reach")
	assert.NotEmpty(t, open.Warning())
	assert.Empty(t, open.Note())
	masked := r.withCatalog(obs, true, 3)
	assert.Equal(t, 3, masked.StarsBelow, "stars in the columns left out")
	assert.Empty(t, masked.Warning())
	assert.Contains(t, masked.Note(), "3 catalog stars lie in the color columns below B−V = 0.6, which reddening (up to E(B−V) = 0.121) can fill up to 0.571")
	assert.Equal(t, 0, r.StarsBelow, "withCatalog leaves the comparison's own reach alone")
}
