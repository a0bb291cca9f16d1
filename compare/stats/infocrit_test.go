package stats

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
)

func TestInformationCriteria(t *testing.T) {
	// Source: definitions, Akaike (1974) AIC = 2k − 2 ln L; Schwarz (1978)
	// BIC = k ln n − 2 ln L; Hurvich & Tsai (1989) AICc.
	assert.InDelta(t, 2*3+2*100.0, AIC(-100, 3), 1e-12)
	assert.InDelta(t, 3*math.Log(1000)+200, BIC(-100, 3, 1000), 1e-12)
	assert.InDelta(t, AIC(-100, 3)+2*3*4/6.0, AICc(-100, 3, 10), 1e-12)
	assert.True(t, math.IsInf(AICc(-100, 3, 4), 1))
	// A parameter that raises ln L by less than 1 loses under AIC.
	assert.Greater(t, AIC(-99.5, 4), AIC(-100, 3))
}
