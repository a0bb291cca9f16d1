package pipeline

import (
	"context"
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/scenarios"
)

// sequenceTruth is a catalog's truth for the sequence tests: example:fit's
// physics and history, its dwarfs moved in M_V by %s (TOML [stars] lines).
const sequenceTruth = `extends = "example:fit"
name = "sequence-truth"

[run]
seed = 424242

%s
`

// sequenceFit fits (measures) a catalog with example:fit as shipped.
const sequenceFit = `extends = "example:fit"
name = "sequence-fit"

[data]
file = %q
sha256 = ""
`

// measuredOn draws a 20,000-star catalog from example:fit with its
// sequence moved by stars (TOML lines, "" for none) and measures its
// shift with example:fit.
func measuredOn(t *testing.T, stars string) *SequenceShift {
	t.Helper()
	dir := t.TempDir()
	truth := filepath.Join(dir, "truth.toml")
	require.NoError(t, os.WriteFile(truth, []byte(fmt.Sprintf(sequenceTruth, stars)), 0o644))
	res, err := scenarios.Resolve(truth)
	require.NoError(t, err)
	cat := filepath.Join(dir, "catalog.csv")
	f, err := os.Create(cat)
	require.NoError(t, err)
	_, err = Mock(context.Background(), res, MockOptions{Source: truth, Stars: 20_000, ParallaxErrorMas: 0.02}, f)
	require.NoError(t, err)
	require.NoError(t, f.Close())
	fit := filepath.Join(dir, "fit.toml")
	require.NoError(t, os.WriteFile(fit, []byte(fmt.Sprintf(sequenceFit, cat)), 0o644))
	res, err = scenarios.Resolve(fit)
	require.NoError(t, err)
	sh, err := MeasureSequenceShift(context.Background(), res, fit, nil)
	require.NoError(t, err)
	return sh
}

// The measurement finds a shift put into the catalog's truth, and none
// where there is none: a test of the method on spinpop's own catalogs,
// where the model is right by construction (the cancellation of
// binaries, Malmquist bias and dust in the two medians is then exact but
// for counting noise).
func TestMeasureSequenceShift(t *testing.T) {
	if testing.Short() {
		t.Skip("draws two catalogs and four model samples (about 15 s)")
	}
	for _, c := range []struct {
		stars string
		at    func(bv float64) float64
	}{
		{"", func(float64) float64 { return 0 }},
		// Fainter at the blue end, brighter at the red: a shift of the
		// size the independent model's table differs from ours by.
		{"[stars]\nsequence_shift_b_v = [0.5, 1.3]\nsequence_shift_mag = [0.2, -0.1]", func(bv float64) float64 {
			return 0.2 - 0.3*min(max(bv-0.5, 0), 0.8)/0.8
		}},
	} {
		sh := measuredOn(t, c.stars)
		var errs []float64
		for _, col := range sh.Columns {
			if col.NotMeasured != "" || col.DataStars < 500 {
				continue
			}
			e := col.Shift - c.at(col.ColumnCenter)
			errs = append(errs, e)
			// A column's median of ≥ 500 stars spread ~0.25 mag is
			// known to ~0.015 mag; the model's 100,000 stars add little.
			assert.InDelta(t, 0, e, 0.06, "%q: column %.3f–%.3f (%d stars): shift %+.3f", c.stars, col.BVLo, col.BVHi, col.DataStars, col.Shift)
		}
		require.GreaterOrEqual(t, len(errs), 15, "%q: most columns measured", c.stars)
		slices.Sort(errs)
		assert.InDelta(t, 0, errs[len(errs)/2], 0.02, "%q: the columns' median error", c.stars)
		assert.Less(t, sh.MaxLastMove, 0.06, "%q: the second round moves little", c.stars)
		// The red end, where the table is too steep to read, is left out.
		last := sh.Columns[len(sh.Columns)-1]
		assert.Contains(t, last.NotMeasured, "drops")
	}
}

// compare.measure_sequence measures the shift on the scenario's catalog
// and runs the whole comparison on the table moved there: the templates'
// population, the catalog's band and the summary all see the same shift.
func TestComparisonMeasuresSequence(t *testing.T) {
	if testing.Short() {
		t.Skip("measures the demo catalog and builds templates (about 20 s)")
	}
	ov, err := scenarios.ParseOverrides([]string{"compare.measure_sequence=true", "compare.template_stars=2000000"})
	require.NoError(t, err)
	res, err := scenarios.Resolve("example:fit", ov...)
	require.NoError(t, err)
	c, err := SetupComparison(context.Background(), res, ComparisonOptions{Source: "example:fit", TemplateDir: "none"})
	require.NoError(t, err)
	require.NotNil(t, c.Sequence)
	assert.Equal(t, c.Sequence.BV, c.Scenario.Stars.SequenceShiftBV)
	assert.Equal(t, c.Sequence.Mag, c.Scenario.Stars.SequenceShiftMag)
	assert.Empty(t, res.Scenario.Stars.SequenceShiftBV, "the caller's scenario is left as given")
	table, err := scenarios.Resolve("example:fit")
	require.NoError(t, err)
	plain, err := Build(&table.Scenario, "example:fit")
	require.NoError(t, err)
	shift := c.Sequence.Mag[len(c.Sequence.Mag)/2]
	bv := c.Sequence.BV[len(c.Sequence.BV)/2]
	m0, _ := plain.Relations.AbsMagVAtBV(bv)
	m1, _ := c.Built.Relations.AbsMagVAtBV(bv)
	assert.InDelta(t, shift, m1-m0, 2e-3, "the comparison's table is moved by the measured shift at B−V %g", bv)
	sum := c.DataSummary()
	require.NotNil(t, sum.Sequence)
	assert.Contains(t, sum.Sequence.Line(), "compare.measure_sequence")
	assert.Equal(t, len(c.Sequence.BV), sum.Sequence.Columns)

	// A shift written and one measured cannot both hold.
	ov2, err := scenarios.ParseOverrides([]string{"compare.measure_sequence=true", "stars.sequence_shift_b_v=[0.6]", "stars.sequence_shift_mag=[0.1]"})
	require.NoError(t, err)
	_, err = scenarios.Resolve("example:fit", ov2...)
	require.Error(t, err)
	assert.Contains(t, err.Error(), "keep one of the two")
}

// The [stars] lines spinpop sequence prints, pasted into a scenario, give
// the table the shift the measurement used (its nodes are kept to the
// thousandth, as printed).
func TestSequenceShiftTOMLRoundTrip(t *testing.T) {
	sh := &SequenceShift{BV: []float64{0.475, 0.525, 1.425}, Mag: []float64{0.137, -0.052, 0}}
	dir := t.TempDir()
	path := filepath.Join(dir, "s.toml")
	require.NoError(t, os.WriteFile(path, []byte("extends = \"example:base\"\n\n"+sh.TOML()), 0o644))
	res, err := scenarios.Resolve(path)
	require.NoError(t, err)
	assert.Equal(t, sh.BV, res.Scenario.Stars.SequenceShiftBV)
	assert.Equal(t, sh.Mag, res.Scenario.Stars.SequenceShiftMag)
	assert.Equal(t, "[stars]\nsequence_shift_b_v = [0.475, 0.525, 1.425]\nsequence_shift_mag = [0.137, -0.052, 0.000]\n", sh.TOML())
}
