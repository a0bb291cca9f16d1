package stats

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
)

func TestChernoffSFAgainstScipy(t *testing.T) {
	ref := loadReference(t)
	for _, c := range ref.Chi2SF {
		// Source: Chernoff (1954) ½χ²₀ + ½χ²₁ mixture; χ²₁ tail from scipy 1.10
		// scipy.stats.chi2.sf(t, 1), testdata/stats_reference.py
		relClose(t, 0.5*c.SF, ChernoffSF(c.T), 1e-12, 1e-300, "t=%g", c.T)
	}
	assert.Equal(t, 1.0, ChernoffSF(-1))
	assert.Equal(t, 0.5, ChernoffSF(0))
	assert.True(t, math.IsNaN(ChernoffSF(math.NaN())))
	// Source: the familiar 2.71 threshold gives 5 % one-sided (½ of χ²₁'s
	// 10 %); Chernoff (1954).
	assert.InDelta(t, 0.05, ChernoffSF(2.705543454095404), 1e-12)
}
