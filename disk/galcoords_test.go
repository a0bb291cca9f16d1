package disk

import (
	"bufio"
	"math"
	"math/rand/v2"
	"os"
	"strconv"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

type galRow struct{ l, b, d, xh, yh, zh, xg, yg, zg float64 }

// readGalcoords reads the astropy reference table and the Sun it was made
// with, from the parameters in its header.
func readGalcoords(t *testing.T) (Sun, []galRow) {
	t.Helper()
	f, err := os.Open("../testdata/galcoords_reference.csv")
	require.NoError(t, err)
	defer f.Close()
	var sun Sun
	var rows []galRow
	sc := bufio.NewScanner(f)
	header := true
	for sc.Scan() {
		line := sc.Text()
		if strings.HasPrefix(line, "#") {
			for _, kv := range strings.Fields(line[1:]) {
				k, v, ok := strings.Cut(kv, "=")
				if !ok {
					continue
				}
				switch k {
				case "galcen_distance_kpc":
					sun.RKpc, err = strconv.ParseFloat(v, 64)
					require.NoError(t, err)
				case "z_sun_pc":
					sun.ZPc, err = strconv.ParseFloat(v, 64)
					require.NoError(t, err)
				}
			}
			continue
		}
		if header {
			header = false
			continue
		}
		fs := strings.Split(line, ",")
		require.Len(t, fs, 9)
		var v [9]float64
		for i, s := range fs {
			v[i], err = strconv.ParseFloat(s, 64)
			require.NoError(t, err)
		}
		rows = append(rows, galRow{v[0], v[1], v[2], v[3], v[4], v[5], v[6], v[7], v[8]})
	}
	require.NoError(t, sc.Err())
	require.NotZero(t, sun.RKpc, "header lacks galcen_distance_kpc")
	require.GreaterOrEqual(t, len(rows), 20)
	return sun, rows
}

func TestGalactocentricAgainstAstropy(t *testing.T) {
	// Source: astropy 5.2 Galactocentric frame, testdata/galcoords_reference.py
	// (galcen_distance 8.122 kpc, z_sun 20.8 pc, centre at (l, b) = (0, 0)).
	// The CSV carries 10 decimals; both sides are exact rotations and
	// translations, so they agree to rounding: 1e−9 of the vector's length
	// plus 1e−9 pc for the printed digits.
	sun, rows := readGalcoords(t)
	assert.Equal(t, DefaultSun(), sun)
	for _, r := range rows {
		x, y, z := HelioCartesian(r.l, r.b, r.d)
		tol := 1e-9*r.d + 1e-9
		assert.InDelta(t, r.xh, x, tol, "helio x at %v", r)
		assert.InDelta(t, r.yh, y, tol, "helio y at %v", r)
		assert.InDelta(t, r.zh, z, tol, "helio z at %v", r)

		xg, yg, zg := sun.Galactocentric(r.l, r.b, r.d)
		tol = 1e-9*math.Sqrt(r.xg*r.xg+r.yg*r.yg+r.zg*r.zg) + 1e-9
		assert.InDelta(t, r.xg, xg, tol, "galactocentric x at %v", r)
		assert.InDelta(t, r.yg, yg, tol, "galactocentric y at %v", r)
		assert.InDelta(t, r.zg, zg, tol, "galactocentric z at %v", r)

		// Inverses.
		l, b, d := GalacticFromHelio(sun.HelioFromGalactocentric(r.xg, r.yg, r.zg))
		assert.InDelta(t, r.d, d, 1e-8)
		assert.InDelta(t, r.b, b, 1e-9)
		if math.Abs(r.b) < 89.999 {
			assert.InDelta(t, 0, angleDiffDeg(r.l, l), 1e-9, "l at %v", r)
		}
	}
}

func angleDiffDeg(a, b float64) float64 {
	return math.Remainder(a-b, 360)
}

func TestSunAtGalactocentric(t *testing.T) {
	// astropy's convention: the Sun at (−R0 cos θ, 0, z☉), sin θ = z☉/R0.
	// Source: astropy Galactocentric frame documentation.
	sun := DefaultSun()
	x, y, z := sun.Galactocentric(0, 0, 0)
	assert.InDelta(t, -math.Sqrt(8122*8122-20.8*20.8), x, 1e-9)
	assert.InDelta(t, 0, y, 1e-12)
	assert.InDelta(t, 20.8, z, 1e-9)
	// The Galactic centre itself maps to the origin.
	x, y, z = sun.Galactocentric(0, 0, 8122)
	assert.InDelta(t, 0, math.Hypot(x, math.Hypot(y, z)), 1e-9)
}

func TestGalacticRoundTrip(t *testing.T) {
	r := rand.New(rand.NewPCG(1, 2))
	for range 1000 {
		l := 360 * r.Float64()
		b := math.Asin(2*r.Float64()-1) * radToDeg
		d := 5000 * r.Float64()
		l2, b2, d2 := GalacticFromHelio(HelioCartesian(l, b, d))
		assert.InDelta(t, d, d2, 1e-9)
		assert.InDelta(t, b, b2, 1e-9)
		assert.InDelta(t, 0, angleDiffDeg(l, l2), 1e-9)
		assert.True(t, l2 >= 0 && l2 < 360)
	}
	l, b, d := GalacticFromHelio(0, 0, 0)
	assert.Equal(t, [3]float64{0, 0, 0}, [3]float64{l, b, d})
}

func TestZPcAgainstTiltedFrame(t *testing.T) {
	// ZPc ignores astropy's tilt θ = asin(z☉/R0); the difference is
	// z_h(cos θ − 1) − x_h sin θ, bounded by 2d sin(θ/2) ≈ d z☉/R0: 5.1 pc at
	// 2 kpc for the default Sun. Check the bound against the astropy table and
	// random directions, and that it is reached.
	sun, rows := readGalcoords(t)
	theta := math.Asin(sun.ZPc / (sun.RKpc * 1000))
	bound := func(d float64) float64 { return 2 * d * math.Sin(theta/2) }
	assert.InDelta(t, 5.12, bound(2000), 0.01)
	for _, r := range rows {
		assert.LessOrEqual(t, math.Abs(ZPc(sun, r.l, r.b, r.d)-r.zg), bound(r.d)+1e-6, "%v", r)
	}
	rng := rand.New(rand.NewPCG(3, 4))
	worst := 0.0
	for range 20000 {
		l := 360 * rng.Float64()
		b := math.Asin(2*rng.Float64()-1) * radToDeg
		d := 2000 * rng.Float64()
		_, _, zg := sun.Galactocentric(l, b, d)
		diff := math.Abs(ZPc(sun, l, b, d) - zg)
		assert.LessOrEqual(t, diff, bound(d)+1e-9)
		worst = math.Max(worst, diff/bound(2000))
	}
	// The bound is tight: toward the centre or anticentre it is nearly reached.
	_, _, zg := sun.Galactocentric(180, 0, 2000)
	assert.InEpsilon(t, bound(2000), math.Abs(ZPc(sun, 180, 0, 2000)-zg), 0.01)
	assert.Greater(t, worst, 0.9)
}

func TestRPc(t *testing.T) {
	sun := DefaultSun()
	assert.InDelta(t, 8122-1000, RPc(sun, 0, 0, 1000), 1e-9)
	assert.InDelta(t, 8122+1000, RPc(sun, 180, 0, 1000), 1e-9)
	assert.InDelta(t, math.Hypot(8122, 1000), RPc(sun, 90, 0, 1000), 1e-9)
	assert.InDelta(t, 8122, RPc(sun, 0, 90, 1000), 1e-9)
	// Agrees with the cylindrical radius of the tilted frame to the tilt's
	// order, z☉/R0 × |z| (~1 pc here).
	x, y, _ := sun.Galactocentric(40, 30, 2000)
	assert.InDelta(t, math.Hypot(x, y), RPc(sun, 40, 30, 2000), 2000*sun.ZPc/8122)
}

func TestSunValidate(t *testing.T) {
	require.NoError(t, DefaultSun().Validate())
	assert.ErrorContains(t, Sun{RKpc: 0, ZPc: 20}.Validate(), "RKpc")
	assert.ErrorContains(t, Sun{RKpc: 8, ZPc: math.NaN()}.Validate(), "ZPc")
	assert.ErrorContains(t, Sun{RKpc: 8, ZPc: 9000}.Validate(), "ZPc")
}
