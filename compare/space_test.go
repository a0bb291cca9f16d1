package compare

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func TestSpaceIndexing(t *testing.T) {
	sp, err := NewSpace(0.5, 1.5, 4, 1, 100, 2, []float64{0, 100, 300})
	require.NoError(t, err)
	assert.Equal(t, 16, sp.NumBins())
	assert.Equal(t, 8, sp.NumColorPeriod())
	// Color 0.8 → bin 1; P = 20 d (log 1.3) → bin 1; |z| = 150 → bin 1.
	i := sp.Index(0.8, 20, -150)
	assert.Equal(t, (1*2+1)*2+1, i)
	c, p, z := sp.Split(i)
	assert.Equal(t, [3]int{1, 1, 1}, [3]int{c, p, z})
	assert.Equal(t, 1*2+1, sp.Index2D(0.8, 20))
	// Outer edges are inside (last bin closed); beyond them, or NaN, is −1.
	assert.Equal(t, (3*2+1)*2+1, sp.Index(1.5, 100, 300))
	assert.Equal(t, 0, sp.Index(0.5, 1, 0))
	for _, bad := range [][3]float64{{0.49, 10, 0}, {0.8, 0.99, 0}, {0.8, 101, 0}, {0.8, 10, 301}, {math.NaN(), 10, 0}, {0.8, -5, 0}} {
		assert.Equal(t, -1, sp.Index(bad[0], bad[1], bad[2]), "%v", bad)
	}
	counts := make([]float64, 16)
	counts[i] = 2
	counts[i-1] = 3
	m := sp.Marginal2D(counts)
	assert.Equal(t, 5.0, m[3])
	assert.InDelta(t, math.Sqrt(10), sp.PeriodCenterD(0), 1e-12)

	noZ, err := NewSpace(0.5, 1.5, 4, 1, 100, 2, nil)
	require.NoError(t, err)
	assert.Equal(t, 1, noZ.NumHeight())
	assert.Equal(t, noZ.Index2D(0.8, 20), noZ.Index(0.8, 20, 5000))

	for _, tc := range []struct {
		bvMin, bvMax float64
		nc           int
		pMin, pMax   float64
		np           int
		h            []float64
		msg          string
	}{
		{1, 0.5, 4, 1, 100, 2, nil, "color range"},
		{0.5, 1, 0, 1, 100, 2, nil, "color bins"},
		{0.5, 1, 4, 0, 100, 2, nil, "period range"},
		{0.5, 1, 4, 1, 100, 0, nil, "log-period bins"},
		{0.5, 1, 4, 1, 100, 2, []float64{0, 100, 50}, "strictly increasing"},
	} {
		_, err := NewSpace(tc.bvMin, tc.bvMax, tc.nc, tc.pMin, tc.pMax, tc.np, tc.h)
		assert.ErrorContains(t, err, tc.msg)
	}
}
