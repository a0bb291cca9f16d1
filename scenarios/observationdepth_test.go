package scenarios

import (
	"testing"

	"github.com/stretchr/testify/assert"
)

// The depth of each kind of nuisance path: what a change of it makes a
// re-observation work out again (only the time of a fit depends on it).
func TestObservationDepth(t *testing.T) {
	for path, want := range map[string]int{
		// re-binned or re-weighted only
		"survey.color_offset_mag": 0, "survey.color_scale": 0, "stars.binary_fraction_scale": 0,
		"survey.half_alias_prob": 0, "disk.heating_beta": 0,
		"survey.search_by_rossby.efficiency_24d": 0, "survey.search_half_period_d": 0,
		// the period stays, its detection changes
		"spin.spots.ro_sat": 1, "survey.detection_snr": 1, "survey.noise_floor_ppm": 1,
		// the period changes
		"spin.period_scatter_dex": 2, "spin.barnes2007.n": 2, "spin.period_scale": 2, "stars.tidal_lock_fraction": 2,
	} {
		assert.Equal(t, want, ObservationDepth(path), path)
	}
	for path := range nuisanceKeys {
		assert.Contains(t, []int{0, 1, 2}, ObservationDepth(path), path)
	}
}
