package disk

import (
	"testing"

	"github.com/stretchr/testify/assert"
)

// A cone about latitude b of radius r spans b − r to b + r, clipped at the
// poles (spherical geometry: the cap's latitude extremes lie on its
// meridian through the centre).
func TestLatitudeSpans(t *testing.T) {
	assert.Equal(t, []LatitudeSpan{{-42, -26, 1500}}, Cone{BDeg: -34, RadiusDeg: 8, DistMaxPc: 1500}.LatitudeSpans())
	assert.Equal(t, []LatitudeSpan{{75, 90, 300}}, Cone{BDeg: 85, RadiusDeg: 10, DistMaxPc: 300}.LatitudeSpans(), "a cone over the pole")
	assert.Equal(t, []LatitudeSpan{{-90, 90, 200}}, Sphere{RadiusPc: 200}.LatitudeSpans())
	assert.Equal(t, []LatitudeSpan{{55, 65, 300}, {-25, -15, 900}},
		ConeList{{BDeg: 60, RadiusDeg: 5, DistMaxPc: 300}, {BDeg: -20, RadiusDeg: 5, DistMaxPc: 900}}.LatitudeSpans(),
		"each cone keeps its own distance limit")
}
