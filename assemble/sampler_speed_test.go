package assemble

import (
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"spinpop/scenarios"
)

func resolveBase(t *testing.T, sets ...string) *scenarios.Scenario {
	t.Helper()
	base, err := scenarios.ReadBase("example:base")
	require.NoError(t, err)
	var ovs []scenarios.Override
	for _, s := range sets {
		o, err := scenarios.ParseOverride(s)
		require.NoError(t, err)
		ovs = append(ovs, o)
	}
	res, err := base.Resolve(ovs...)
	require.NoError(t, err)
	return &res.Scenario
}

// A disk so cold that the field (a cone looking away from the midplane,
// which starts 20.8 pc above it, at the Sun) holds almost none of it made
// the position sampler keep about 3 proposals in a million: 64 stars/s,
// nine hours for the default run.
// Build refuses it with the reason; the default disk keeps most proposals.
// The share kept is the sampler's exact ratio of integrals
// (disk.Sampler.ProposalEfficiency), not a timing.
func TestBuildRefusesACrawlingSampler(t *testing.T) {
	// A field looking away from the plane (the base field looks down,
	// through the midplane, at b = −34°).
	_, err := Build(resolveBase(t, "disk.sigma_10gyr_kms=1.0", "disk.sheet_sigma_kms=1.0", "survey.field.b_deg=34.0"))
	require.Error(t, err)
	assert.Contains(t, err.Error(), "disk.sigma_10gyr_kms = 1 and disk.sheet_sigma_kms = 1 make a disk so thin")
	assert.Contains(t, err.Error(), "would keep 1 proposal in")

	b, err := Build(resolveBase(t))
	require.NoError(t, err)
	for k := range b.Population.BinProb {
		assert.Greater(t, b.Sampler.ProposalEfficiency(k), 0.5, "age bin %d of the base example", k)
	}
}
