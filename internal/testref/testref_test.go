package testref

import (
	"testing"

	"github.com/stretchr/testify/assert"
)

// Known separations: a quarter circle along the equator, pole to equator,
// and one arcsecond (common geometry, no source needed).
func TestAngSepDeg(t *testing.T) {
	assert.InDelta(t, 90, AngSepDeg(0, 0, 90, 0), 1e-12)
	assert.InDelta(t, 90, AngSepDeg(123, 90, 10, 0), 1e-12)
	assert.InDelta(t, 1.0/3600, AngSepDeg(10, 20, 10, 20+1.0/3600), 1e-15)
}
