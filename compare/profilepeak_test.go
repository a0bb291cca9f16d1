package compare

import (
	"context"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// A joint fit stopped after one expansion is not at the maximum; the
// profile of the burst age on its expansion rises above it, and the joint
// fit from that peak (exact templates) replaces it with a better answer,
// nearer the truth, keeping the old one among OtherMaxima. A
// fit the profile cannot improve on comes back unchanged. Common practice, no source: a maximum found by
// a search is checked by searching again from the best point another
// method found.
func TestConfirmProfilePeak(t *testing.T) {
	s := newJointSetup(t)
	nu := s.nuisance()
	m := s.burstModel(t)
	like, _, _ := s.asimovLikelihood(t, m, nu, []float64{0.82, 0.015})
	ctx := context.Background()

	short, err := FitJoint(ctx, like, m, nu, FitOptions{Starts: 3, MaxRounds: 1})
	require.NoError(t, err)
	got, err := confirmProfilePeak(ctx, like, m, nu, short, "burst.age_gyr", FitOptions{})
	require.NoError(t, err)
	t.Logf("one expansion: age %.4f, ln L %.3f → confirmed: age %.4f, ln L %.3f", short.Theta[0], short.LogL, got.Theta[0], got.LogL)
	assert.Greater(t, got.LogL, short.LogL+peakTol, "a better maximum was found")
	assert.Less(t, abs(got.Theta[0]-0.6), abs(short.Theta[0]-0.6), "nearer the true age")
	kept := false
	for _, o := range got.OtherMaxima {
		kept = kept || o.LogL == short.LogL
	}
	assert.True(t, kept, "the replaced fit is kept among OtherMaxima")
	assert.InDelta(t, got.LogLData(), like.LogL(got.Weights), 1e-6, "like is left on the answer's exact templates")

	// At the confirmed answer the profile rises no further: unchanged.
	again, err := confirmProfilePeak(ctx, like, m, nu, got, "burst.age_gyr", FitOptions{})
	require.NoError(t, err)
	assert.Equal(t, got.LogL, again.LogL)
	assert.Equal(t, got.Theta, again.Theta)
	assert.Equal(t, len(got.OtherMaxima), len(again.OtherMaxima))
}

func abs(x float64) float64 {
	if x < 0 {
		return -x
	}
	return x
}
