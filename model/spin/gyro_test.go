package spin

import (
	"math"
	"math/rand/v2"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

var (
	_ Law = GyroLaw{}
	_ Law = (*TorqueLaw)(nil)
)

func TestGyroSolarTwin(t *testing.T) {
	sun := Star{BV: 0.65, AgeGyr: 4.57}

	// Source: Barnes (2007), ApJ 669, 1167 (coefficients); the expected
	// 26.6 d is the project's issue, checked by hand:
	// 0.7725 × 0.25^0.601 × 4570^0.5189 = 0.7725 × 0.4347 × 79.27 = 26.62 d.
	p, ok := Barnes2007().Period(sun, nil)
	require.True(t, ok)
	assert.InDelta(t, 26.6, p, 0.2)

	// Source: Mamajek & Hillenbrand (2008), ApJ 687, 1264 (coefficients);
	// 26.2 d from the project's issue, checked by hand:
	// 0.407 × 0.155^0.325 × 4570^0.566 = 0.407 × 0.5456 × 117.9 = 26.18 d.
	p, ok = MamajekHillenbrand2008().Period(sun, nil)
	require.True(t, ok)
	assert.InDelta(t, 26.2, p, 0.2)

	// From memory of Angus et al. (2015), MNRAS 450, 1787: the calibration
	// includes the Sun, so a solar twin lands near its 25–27 d period;
	// by hand 0.40 × 0.2^0.31 × 4570^0.55 = 25.0 d. Tolerance reflects
	// that the coefficients are recalled.
	p, ok = Angus2015().Period(sun, nil)
	require.True(t, ok)
	assert.InDelta(t, 25.5, p, 1.5)
}

func TestBarnesYoungKDwarfs(t *testing.T) {
	// Common practice, no source: a ~600 Myr population of K dwarfs
	// (B−V 0.9–1.2) lies at roughly 10–20 d under Barnes (2007).
	law := Barnes2007()
	for bv := 0.9; bv <= 1.2+1e-9; bv += 0.05 {
		p, ok := law.PeriodAt(bv, 0.6)
		require.True(t, ok, "B−V %.2f", bv)
		assert.GreaterOrEqual(t, p, 10.0, "B−V %.2f", bv)
		assert.LessOrEqual(t, p, 20.0, "B−V %.2f", bv)
	}
}

func TestGyroMonotoneAndSkumanichLike(t *testing.T) {
	for _, law := range []GyroLaw{Barnes2007(), MamajekHillenbrand2008(), Angus2015()} {
		prev := 0.0
		for bv := law.MinBV; bv <= law.MaxBV; bv += 0.05 {
			p, ok := law.PeriodAt(bv, 1)
			require.True(t, ok)
			assert.Greater(t, p, prev, "%s: redder stars rotate slower", law.Name())
			prev = p
		}
		p1, _ := law.PeriodAt(0.8, 1)
		p4, _ := law.PeriodAt(0.8, 4)
		// The age exponent n is the log-log slope by construction.
		assert.InDelta(t, law.N, math.Log(p4/p1)/math.Log(4), 1e-12, law.Name())
	}
}

func TestGyroOutsideCalibration(t *testing.T) {
	cases := []Star{
		{BV: 0.3, AgeGyr: 1},    // bluer than every calibration
		{BV: 1.9, AgeGyr: 1},    // redder than every calibration
		{BV: 0.8, AgeGyr: 0.02}, // younger than the youngest calibrating cluster
		{BV: 0.8, AgeGyr: 20},   // older than the Universe
		{BV: math.NaN(), AgeGyr: 1},
		{BV: 0.8, AgeGyr: math.NaN()},
	}
	for _, law := range []GyroLaw{Barnes2007(), MamajekHillenbrand2008(), Angus2015()} {
		for _, s := range cases {
			p, ok := law.Period(s, nil)
			assert.False(t, ok, "%s %+v", law.Name(), s)
			assert.True(t, math.IsNaN(p), "%s %+v", law.Name(), s)
		}
		require.NoError(t, law.Validate())
	}
	// Mamajek & Hillenbrand's c = 0.495 makes B−V 0.47 invalid there but
	// fine for Barnes (c = 0.4).
	_, ok := MamajekHillenbrand2008().PeriodAt(0.47, 1)
	assert.False(t, ok)
	_, ok = Barnes2007().PeriodAt(0.47, 1)
	assert.True(t, ok)
}

func TestGyroValidate(t *testing.T) {
	bad := Barnes2007()
	bad.MinBV = 0.3 // below c = 0.4: the power of a negative number
	assert.ErrorContains(t, bad.Validate(), "MinBV")
	bad = Barnes2007()
	bad.N = 0
	assert.Error(t, bad.Validate())
	bad = Barnes2007()
	bad.MaxAgeGyr = 0.05
	assert.ErrorContains(t, bad.Validate(), "MaxAgeGyr")
}

func TestByName(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 2))
	for _, name := range Names() {
		law, err := ByName(name)
		require.NoError(t, err, name)
		assert.Equal(t, name, law.Name())
		p, ok := law.Period(Star{MassMsun: 1, BV: 0.65, TeffK: 5772, AgeGyr: 4.57}, r)
		require.True(t, ok, name)
		assert.InDelta(t, 26, p, 1.5, name)
	}
	_, err := ByName("skumanich")
	require.Error(t, err)
	assert.Contains(t, err.Error(), "barnes2007", "the error lists the valid names")
}
