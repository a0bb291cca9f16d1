package disk

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// An illustrative relation, not a fit: β inside the published thin-disk
// range ≈ 0.3–0.55 [memory].
var testAVR = AVR{Sigma10Kms: 25, Tau1Gyr: 0.2, Beta: 0.45}

func TestAVR(t *testing.T) {
	require.NoError(t, testAVR.Validate())
	assert.InDelta(t, 25, testAVR.SigmaKms(10), 1e-12)
	// A power law in (τ + τ1): the log-slope is β everywhere.
	s1, s2 := testAVR.SigmaKms(1), testAVR.SigmaKms(4)
	assert.InDelta(t, testAVR.Beta, math.Log(s2/s1)/math.Log(4.2/1.2), 1e-12)
	assert.Greater(t, testAVR.SigmaKms(0), 0.0)
	assert.Equal(t, 0.0, AVR{Sigma10Kms: 25, Tau1Gyr: 0, Beta: 0.5}.SigmaKms(0))
	// β = 0.5 with τ1 = 0 is random-walk heating: σ ∝ √τ.
	assert.InDelta(t, 12.5, AVR{Sigma10Kms: 25, Tau1Gyr: 0, Beta: 0.5}.SigmaKms(2.5), 1e-12)
}

func TestAVRValidate(t *testing.T) {
	for _, c := range []struct {
		a    AVR
		want string
	}{
		{AVR{-1, 0.2, 0.4}, "Sigma10Kms"},
		{AVR{25, -0.1, 0.4}, "Tau1Gyr"},
		{AVR{25, 0.2, 0}, "Beta"},
		{AVR{25, 0.2, 1.2}, "Beta"},
		{AVR{25, math.NaN(), 0.4}, "Tau1Gyr"},
	} {
		assert.ErrorContains(t, c.a.Validate(), c.want)
	}
	assert.NoError(t, AVR{25, 0, 1}.Validate())
}

func TestAVRBinMixture(t *testing.T) {
	m, err := testAVR.BinMixture(0, 1, 4)
	require.NoError(t, err)
	require.Len(t, m, 4)
	for i, c := range m {
		assert.InDelta(t, testAVR.SigmaKms(0.125+0.25*float64(i)), c.SigmaKms, 1e-12)
		assert.Equal(t, 1.0, c.Weight)
	}
	require.NoError(t, m.validate(0))
	_, err = testAVR.BinMixture(2, 1, 4)
	assert.ErrorContains(t, err, "age bin")
	_, err = testAVR.BinMixture(0, 1, 0)
	assert.ErrorContains(t, err, "sub-ages")
	assert.ErrorContains(t, Mixture{}.validate(3), "bin 3")
	assert.ErrorContains(t, Mixture{{SigmaKms: 10, Weight: 0}}.validate(0), "weights summing")
	assert.ErrorContains(t, Mixture{{SigmaKms: -10, Weight: 1}}.validate(0), "SigmaKms")
}
