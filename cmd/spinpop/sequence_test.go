package main

import (
	"encoding/json"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// spinpop sequence on the demo catalog: the JSON holds every column (the
// red ones not measured, with the reason), the [stars] keys' values, and
// no NaN (which JSON cannot hold); the text ends with the keys as TOML.
// The demo catalog is spinpop's own, drawn without a shift, so every
// measured column's shift is small (TestMeasureSequenceShift bounds the
// method's error at 0.06 mag per column).
func TestSequenceCommand(t *testing.T) {
	if testing.Short() {
		t.Skip("measures the demo catalog twice (about 10 s)")
	}
	code, out, errs := runCLI("sequence", "example:fit", "--json")
	require.Equal(t, 0, code, errs)
	assert.Contains(t, errs, "round 3 of 3", "progress on stderr")
	var got struct {
		Columns []struct {
			BVLo        float64  `json:"b_v_lo"`
			Shift       *float64 `json:"shift_mag"`
			NotMeasured string   `json:"not_measured"`
		} `json:"columns"`
		BV  []float64 `json:"sequence_shift_b_v"`
		Mag []float64 `json:"sequence_shift_mag"`
	}
	require.NoError(t, json.Unmarshal([]byte(out), &got))
	require.Len(t, got.Columns, 23, "example:fit's color_bins")
	assert.Len(t, got.Mag, len(got.BV))
	measured := 0
	for _, c := range got.Columns {
		if c.NotMeasured != "" {
			assert.Nil(t, c.Shift, "column at %g", c.BVLo)
			continue
		}
		measured++
		require.NotNil(t, c.Shift)
		assert.InDelta(t, 0, *c.Shift, 0.06, "column at %g", c.BVLo)
	}
	assert.Equal(t, len(got.BV), measured)
	assert.Contains(t, got.Columns[22].NotMeasured, "drops", "the M dwarfs' column is too steep to read")

	code, out, errs = runCLI("sequence", "example:fit")
	require.Equal(t, 0, code, errs)
	assert.True(t, strings.HasSuffix(strings.TrimSpace(out), "]"))
	assert.Contains(t, out, "[stars]\nsequence_shift_b_v = [0.475, ")

	code, _, errs = runCLI("sequence", "example:base")
	assert.Equal(t, 2, code)
	assert.Contains(t, errs, "data")
}
