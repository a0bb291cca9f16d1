package main

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// Every catalog row that is not compared is listed in rejected.csv, once,
// with its reason, and the counts compare prints and writes add up to the
// rows listed: checked on the demo catalog with a row of every unusable
// kind and two rows the catalog cuts remove appended, a height cut, the young-star mask and a comparison space
// narrower than the cuts, so that each kind of rejection occurs.
func TestRejectedCSVListsEveryRowLeftOut(t *testing.T) {
	sc := fitScenario(t, "mask_below_age_gyr = 0.1\nmask_blue_of_law = true\nperiod_max_d = 40.0\n[cuts]\nheight_max_pc = 500.0\n")
	cat := filepath.Join(filepath.Dir(sc), "catalog.csv")
	f, err := os.OpenFile(cat, os.O_APPEND|os.O_WRONLY, 0)
	require.NoError(t, err)
	bad := []string{
		"9000001,,0.8,12.0,2.0,280.0,30.0",       // missing value
		"9000002,12.0,blue,12.0,2.0,280.0,30.0",  // not a number
		"9000003,-4.0,0.8,12.0,2.0,280.0,30.0",   // period not positive
		"9000004,12.0,0.8,12.0,-1.0,280.0,30.0",  // parallax not positive
		"9000005,12.0,0.8,12.0,2.0,280.0,95.0",   // declination out of range
		"9000006,12.0,0.8,12.0",                  // wrong number of fields
		"9000007,12.0,0.8,12.0,2.0,280.0,30.0,1", // wrong number of fields
		"9000008,12.0,0.30,12.0,2.0,280.0,30.0",  // cut: bluer than cuts.b_v_min
		"9000009,900.0,0.8,14.4,2.0,280.0,30.0",  // cut: M_V 5.9 on the sequence, period beyond the window
	}
	_, err = f.WriteString(strings.Join(bad, "\n") + "\n")
	require.NoError(t, err)
	require.NoError(t, f.Close())

	out := filepath.Join(t.TempDir(), "c")
	code, stdout, errs := runCLI("compare", sc, "--out", out, "--templates", "none", "--replicates", "0")
	require.Equal(t, 0, code, errs)
	b, err := os.ReadFile(filepath.Join(out, "compare.json"))
	require.NoError(t, err)
	var rep struct {
		Data struct {
			Rows     int            `json:"rows"`
			Compared int            `json:"stars_compared"`
			NotComp  int            `json:"rows_not_compared"`
			Unusable map[string]int `json:"unusable_rows"`
			CutAway  map[string]int `json:"cut_away"`
			Dropped  int            `json:"stars_in_cells_no_template_reached"`
			Masked   int            `json:"stars_below_youngest_gyrochrone"`
			Blue     int            `json:"stars_bluer_than_law_reach"`
		} `json:"data"`
	}
	require.NoError(t, json.Unmarshal(b, &rep))
	d := rep.Data

	rf, err := os.Open(filepath.Join(out, "rejected.csv"))
	require.NoError(t, err)
	defer rf.Close()
	recs, err := csv.NewReader(rf).ReadAll()
	require.NoError(t, err)
	require.Equal(t, []string{"line", "reason", "column", "value", "raw"}, recs[0])
	listed := map[string]int{}
	lines := map[string]bool{}
	for _, r := range recs[1:] {
		listed[r[1]]++
		require.False(t, lines[r[0]], "line %s listed twice", r[0])
		lines[r[0]] = true
	}

	// Each kind occurred.
	for _, why := range []string{"missing value", "not a number", "period not positive", "parallax not positive", "latitude or declination out of range"} {
		assert.Equal(t, 1, d.Unusable[why], why)
	}
	assert.Equal(t, 2, d.Unusable["wrong number of fields"])
	for _, cut := range []string{"color", "main_sequence", "period_window", "height", "outside_space"} {
		assert.Positive(t, d.CutAway[cut], "cut %s", cut)
	}
	assert.Positive(t, d.Masked, "the young-star mask")
	assert.Positive(t, d.Blue, "the columns bluer than the law's reach (example:fit's mask_blue_of_law)")

	// The counts add up to the rows listed, reason by reason.
	want := map[string]int{}
	for k, n := range d.Unusable {
		want[k] += n
	}
	for k, n := range d.CutAway {
		if n > 0 {
			want["cut: "+k] += n
		}
	}
	if d.Masked > 0 {
		want["left out: below_young_gyrochrone"] = d.Masked
	}
	if d.Dropped > 0 {
		want["left out: cell_no_template_reached"] = d.Dropped
	}
	if d.Blue > 0 {
		want["left out: color_bluer_than_law_reach"] = d.Blue
	}
	assert.Equal(t, want, listed)
	assert.Equal(t, d.Rows-d.Compared, len(recs)-1)
	assert.Equal(t, d.Rows-d.Compared, d.NotComp)
	assert.Equal(t, 24000+len(bad), d.Rows, "the demo catalog's rows and the ones appended")
	assert.Contains(t, stdout, "left out (each listed in rejected.csv with its reason)")
	assert.Contains(t, stdout, fmt.Sprintf("%d catalog stars lie in the color columns below B−V", d.Blue))
	assert.NotContains(t, stdout, "warning: the compared colors begin at", "left out, the blue columns need no warning")
}
