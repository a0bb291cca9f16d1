package compare

import (
	"context"
	"errors"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// With flat priors and a near-Gaussian likelihood the posterior's 16–84 %
// range matches the profile-likelihood 68 % interval.
// Source: for a Gaussian likelihood and flat prior the marginal posterior
// and the profile likelihood coincide (e.g. Cowan 1998, Statistical Data
// Analysis, §9); tolerance 35 % of the width for sampling noise and
// non-Gaussianity. The chain must be long enough (≥ 50 τ) and the
// acceptance fraction healthy (0.15–0.85: the stretch move accepts more in two dimensions than the 0.2–0.5 usually quoted; common practice).
func TestSamplePosterior(t *testing.T) {
	like, burst := asimovBurstFit(t, 0.08, 3000)
	post, err := SamplePosterior(context.Background(), like, burst, PosteriorOptions{Walkers: 16, Steps: 2500, Seed: 3})
	require.NoError(t, err)
	fit, err := Fit(like, burst, FitOptions{})
	require.NoError(t, err)
	iv, err := ProfileAuto(like, burst, "burst.age_gyr", fit)
	require.NoError(t, err)
	t.Logf("age: posterior %.4f [%.4f, %.4f], profile %.4f [%.4f, %.4f]; τ = %.1f; acceptance %.2f",
		post.Median[0], post.Q16[0], post.Q84[0], iv.Best, iv.Lo68, iv.Hi68, post.AutocorrTime, post.AcceptanceFraction[0])
	assert.Equal(t, []bool{true, true}, post.Converged)
	for _, a := range post.AcceptanceFraction {
		assert.True(t, a > 0.15 && a < 0.85, "acceptance %.2f", a)
	}
	width := iv.Hi68 - iv.Lo68
	assert.InDelta(t, iv.Best, post.Median[0], 0.35*width)
	assert.InDelta(t, width, post.Q84[0]-post.Q16[0], 0.35*width)
	assert.InDelta(t, 0.6, post.MAP[0], 0.5*width)

	// The star-formation rate band peaks at the burst.
	grid := []float64{0.3, 0.6, 2}
	med, lo, hi, err := post.SFHBand(burst, grid)
	require.NoError(t, err)
	assert.Greater(t, med[1], 5*med[0])
	assert.Greater(t, med[1], 5*med[2])
	for i := range grid {
		assert.LessOrEqual(t, lo[i], med[i])
		assert.GreaterOrEqual(t, hi[i], med[i])
	}

	ctx, cancel := context.WithCancel(context.Background())
	_, err = SamplePosterior(ctx, like, burst, PosteriorOptions{Steps: 100, Progress: func(done, _ int) {
		if done == 5 {
			cancel()
		}
	}})
	assert.True(t, errors.Is(err, context.Canceled))
}
