package scenarios

import (
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// The scenario format takes what sfh takes: a rising exponential history
// (negative e-folding time) loads, and bins parts free one rate per bin,
// as sfh.History.Params exposes them.
func TestHistoryRulesAreSfhs(t *testing.T) {
	const field = "[survey.field]\nkind = \"sphere\"\ndistance_max_pc = 100.0\n"
	r, err := LoadBytes("x.toml", []byte("[history.rise]\nkind = \"exponential\"\ntimescale_gyr = -3.0\n"+field), nil)
	require.NoError(t, err)
	h, err := BuildHistory(&r.Scenario.History)
	require.NoError(t, err)
	assert.Greater(t, h.Rate(0.1), h.Rate(9.9), "a negative timescale rises toward the present")

	_, err = LoadBytes("x.toml", []byte("[history.rise]\nkind = \"exponential\"\ntimescale_gyr = 0.0\n"+field), nil)
	require.Error(t, err)
	assert.Contains(t, err.Error(), "x.toml:3: history.rise.timescale_gyr = 0 must not be 0")

	bins := "[history.b]\nkind = \"bins\"\nedges_gyr = [0.0, 1.0, 3.0]\nrates = [2.0, 1.0]\n" + field
	_, err = LoadBytes("x.toml", []byte(bins+"[[compare.free]]\npath = \"history.b.rate_1\"\nmin = 0.0\nmax = 5.0\n"), nil)
	require.NoError(t, err)
	_, err = LoadBytes("x.toml", []byte(bins+"[[compare.free]]\npath = \"history.b.rate_2\"\nmin = 0.0\nmax = 5.0\n"), nil)
	require.Error(t, err)
	assert.True(t, strings.Contains(err.Error(), "history.b.rate_0, history.b.rate_1, history.b.weight"), err.Error())
}
