package sweep

import (
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// burstRow is a finished point of a burst-test sweep.
func burstRow(i int, law string, age, ageLo, ageHi, frac, fracLo, fracHi, p float64, adequacy string) Result {
	return Result{Index: i, Hash: strings.Repeat(string(rune('a'+i)), 64), Status: StatusDone, Work: []string{StepTestBurst},
		Values: []any{law}, Headline: Headline{
			BurstAgeGyr: F(age), BurstAgeLoGyr: F(ageLo), BurstAgeHiGyr: F(ageHi),
			BurstFraction: F(frac), BurstFractionLo: F(fracLo), BurstFractionHi: F(fracHi),
			PValue: F(p), SignificanceSigma: F(2), Adequacy: adequacy, Verdict: "moderate",
			Extra: map[string]float64{ExtraReplicates: 99},
		}}
}

// The envelope of per-choice intervals (the method SystematicsMethod
// names) is [min of the lower ends, max of the upper ends]; the values
// below are worked by hand. Choices that failed or whose model does not
// describe the catalog are kept apart and said first.
func TestSystematicsEnvelope(t *testing.T) {
	tab := &Table{Name: "laws", Work: []string{StepTestBurst}, Axes: []string{"spin.law"}, Rows: []Result{
		burstRow(0, "a", 0.75, 0.70, 0.80, 0.15, 0.12, 0.18, 0.01, "adequate"),
		burstRow(1, "b", 0.85, 0.78, 0.95, 0.11, 0.10, 0.13, 0.01, "adequate"),
		burstRow(2, "c", 1.20, 1.10, 1.30, 0.30, 0.25, 0.35, 0.01, "inadequate"),
		{Index: 3, Hash: strings.Repeat("d", 64), Status: StatusFailed, Values: []any{"d"}, Error: "boom"},
	}}
	s := NewSystematics(tab)
	require.NotNil(t, s)
	require.NotNil(t, s.AgeGyr)
	assert.Equal(t, Envelope{Choices: 3, Lo: 0.70, Hi: 1.30, BestMin: 0.75, BestMax: 1.20}, *s.AgeGyr)
	assert.Equal(t, Envelope{Choices: 3, Lo: 0.10, Hi: 0.35, BestMin: 0.11, BestMax: 0.30}, *s.Fraction)
	assert.Equal(t, Envelope{Choices: 2, Lo: 0.70, Hi: 0.95, BestMin: 0.75, BestMax: 0.85}, *s.AgeGyrAdequate)
	assert.Equal(t, Envelope{Choices: 2, Lo: 0.10, Hi: 0.18, BestMin: 0.11, BestMax: 0.15}, *s.FractionAdequate)
	assert.Len(t, s.Choices, 4)
	assert.False(t, s.Choices[3].Usable)
	assert.Equal(t, "spin.law = c", s.Choices[2].Label)

	require.Len(t, s.Warnings, 3, "%q", s.Warnings)
	assert.Contains(t, s.Warnings[0], "1 of 4 choices have no burst age")
	assert.Contains(t, s.Warnings[1], "does not describe the catalog (spin.law = c)")
	// p = 0.01 = 1/(99+1): no replicate reached the observed ratio.
	assert.Contains(t, s.Warnings[2], "under 3 choice(s) no bootstrap replicate reached")

	md := s.Markdown()
	assert.Less(t, strings.Index(md, "**Warning:**"), strings.Index(md, "| choice |"), "warnings come before the table")
	assert.Contains(t, md, "| **combined, adequate choices** (2) | | [0.7, 0.95] (best values 0.75–0.85) | [0.1, 0.18] (best values 0.11–0.15) |")
	assert.Contains(t, md, "envelope of the per-choice 68 % profile-likelihood intervals")

	out := t.TempDir()
	names, err := WriteSystematics(out, s)
	require.NoError(t, err)
	assert.Equal(t, []string{"systematics.csv", "systematics.json", "systematics.md"}, names)
	c, err := os.ReadFile(filepath.Join(out, "systematics.csv"))
	require.NoError(t, err)
	assert.Contains(t, string(c), ",,combined (all choices),,,,,0.7,1.3,,0.1,0.35,,,,\n")
	j, err := os.ReadFile(filepath.Join(out, "systematics.json"))
	require.NoError(t, err)
	assert.Contains(t, string(j), `"burst_age_gyr_adequate": {`)
}

// A sweep without the burst test has no systematics table; one whose model
// fits under no choice says so.
func TestSystematicsNeedsBurstTest(t *testing.T) {
	assert.Nil(t, NewSystematics(&Table{Work: []string{StepSimulate}}))
	s := NewSystematics(&Table{Work: []string{StepTestBurst}, Axes: []string{"spin.law"}, Rows: []Result{
		burstRow(0, "a", 0.75, 0.70, 0.80, 0.15, 0.12, 0.18, 0.5, "inadequate"),
		burstRow(1, "b", 0.85, 0.78, 0.95, 0.11, 0.10, 0.13, 0.5, "inadequate"),
	}})
	assert.Nil(t, s.AgeGyrAdequate)
	require.Len(t, s.Warnings, 1)
	assert.Contains(t, s.Warnings[0], "under no choice does the burst model describe the catalog")
}

func TestBuiltInSweepExamplesLoad(t *testing.T) {
	names := Examples()
	require.Contains(t, names, "systematics")
	for _, n := range names {
		s, err := Load("example:" + n)
		require.NoError(t, err, n)
		_, err = s.Plan(0)
		require.NoError(t, err, n)
	}
	_, err := Load("example:nosuch")
	assert.ErrorContains(t, err, "no built-in sweep file nosuch; there are example:systematics")
}

// The comparison of alternatives needs alternatives to compare and enough
// replicates; both are the sweep file's errors, at its work line.
func TestAlternativesStepChecked(t *testing.T) {
	_, err := Load(writeSweep(t, "name = \"a\"\nscenario = \"example:fit\"\nwork = [\"test-alternatives\"]\n[set]\ncompare.alternatives = []\n"))
	require.Error(t, err)
	assert.Contains(t, err.Error(), "sweep.toml:3")
	assert.Contains(t, err.Error(), "names none")
	_, err = Load(writeSweep(t, "name = \"a\"\nscenario = \"example:fit\"\nwork = [\"test-alternatives\"]\n[set]\ncompare.bootstrap = 10\n"))
	require.Error(t, err)
	assert.Contains(t, err.Error(), "needs compare.bootstrap ≥ 20")
	_, err = Load(writeSweep(t, "name = \"a\"\nscenario = \"example:fit\"\nwork = [\"test-alternatives\", \"test-burst\"]\n"))
	require.NoError(t, err)
}
