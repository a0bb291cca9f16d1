package disk

import (
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// dustByQuadrature integrates the layer's extinction per pc along the
// sight line with Simpson's rule on n panels, split at the midplane
// crossing so that each piece is smooth.
func dustByQuadrature(dl DustLayer, sun Sun, sinB, d float64, n int) float64 {
	f := func(s float64) float64 {
		return dl.MidplaneAvPerKpc / 1000 * math.Exp(-math.Abs(sun.ZPc+s*sinB)/dl.ScaleHeightPc)
	}
	if s0 := -sun.ZPc / sinB; s0 > 0 && s0 < d {
		return simpson(f, 0, s0, n) + simpson(f, s0, d, n)
	}
	return simpson(f, 0, d, n)
}

func TestDustClosedFormAgainstQuadrature(t *testing.T) {
	dl := DefaultDustLayer()
	require.NoError(t, dl.Validate())
	for _, sun := range []Sun{DefaultSun(), {RKpc: 8, ZPc: -15}, {RKpc: 8, ZPc: 0}} {
		for _, b := range []float64{-90, -30, -2, -0.01, -1e-9, 0, 1e-9, 0.3, 5, 45, 90} {
			for _, d := range []float64{1, 50, 400, 2500, 8000} {
				num := dustByQuadrature(dl, sun, math.Sin(b*degToRad), d, 20000)
				got := dl.AV(123, b, d, sun)
				assert.InDelta(t, num, got, 1e-9*(1+num), "sun %v b %v d %v", sun, b, d)
			}
		}
	}
}

func TestDustLimits(t *testing.T) {
	dl := DustLayer{ScaleHeightPc: 100, MidplaneAvPerKpc: 1}
	sun := Sun{RKpc: 8, ZPc: 0}
	// In the plane: a0 d. Toward the pole to infinity: a0 H. Common practice,
	// no source (the integrals of an exponential).
	assert.InDelta(t, 2.0, dl.AV(0, 0, 2000, sun), 1e-12)
	assert.InDelta(t, 0.1, dl.AV(0, 90, 1e6, sun), 1e-12)
	assert.InDelta(t, 0.1, dl.AV(0, -90, 1e6, sun), 1e-12)
	// From 20.8 pc above the plane, looking down through it.
	up := DefaultSun()
	assert.Greater(t, dl.AV(0, -90, 1e6, up), dl.AV(0, 90, 1e6, up))
	assert.Equal(t, 0.0, NoDust{}.AV(10, 10, 1000, up))
	assert.ErrorContains(t, DustLayer{ScaleHeightPc: 0, MidplaneAvPerKpc: 1}.Validate(), "ScaleHeightPc")
	assert.ErrorContains(t, DustLayer{ScaleHeightPc: 100, MidplaneAvPerKpc: -1}.Validate(), "MidplaneAvPerKpc")
	var _ Extinction = dl
	var _ Extinction = NoDust{}
}

// TestSunDustFromHeight checks the height form against the (l, b, d) form
// on random sight lines, including ones that cross the midplane and ones
// nearly along it.
func TestSunDustFromHeight(t *testing.T) {
	dl := DefaultDustLayer()
	for _, sun := range []Sun{DefaultSun(), {RKpc: 8, ZPc: -15}, {RKpc: 8, ZPc: 0}} {
		sd := dl.FromSun(sun)
		for i := range 2000 {
			b := -90 + 180*float64(i)/1999
			if i%7 == 0 {
				b = 1e-7 * float64(i%13-6)
			}
			d := 1 + float64(i%97)*31
			sinB := math.Sin(b * degToRad)
			num := dustByQuadrature(dl, sun, sinB, d, 2000)
			got := sd.AV(d, sun.ZPc+d*sinB)
			require.InDelta(t, num, got, 1e-9*(1+num), "sun %v b %v d %v", sun, b, d)
		}
	}
}

func BenchmarkSunDustAV(b *testing.B) {
	sd := DefaultDustLayer().FromSun(DefaultSun())
	z, sum := -500.0, 0.0
	for b.Loop() {
		sum += sd.AV(700, z)
		z += 0.1
		if z > 500 {
			z = -500
		}
	}
	_ = sum
}

func BenchmarkDustAV(b *testing.B) {
	dl := DefaultDustLayer()
	sun := DefaultSun()
	bb, sum := -80.0, 0.0
	for b.Loop() {
		sum += dl.AV(30, bb, 700, sun)
		bb += 0.01
		if bb > 80 {
			bb = -80
		}
	}
	_ = sum
}

// TestMeanExpDecay checks the series and the exp branch of meanExpDecay
// against −expm1(−x)/x, which has no cancellation (Go's math package).
func TestMeanExpDecay(t *testing.T) {
	assert.Equal(t, 1.0, meanExpDecay(0))
	for i := -3000; i <= 3000; i++ {
		x := float64(i) * 1e-3
		if i == 0 {
			continue
		}
		want := -math.Expm1(-x) / x
		require.InEpsilon(t, want, meanExpDecay(x), 3e-15, "x = %v", x)
	}
}
