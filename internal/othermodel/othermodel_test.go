package othermodel

import (
	"bytes"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"github.com/BurntSushi/toml"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// ksStatistic is the one-sample Kolmogorov–Smirnov distance of sample from cdf.
func ksStatistic(sample []float64, cdf func(float64) float64) float64 {
	s := slices.Clone(sample)
	slices.Sort(s)
	n := float64(len(s))
	d := 0.0
	for i, x := range s {
		f := cdf(x)
		d = math.Max(d, math.Max(float64(i+1)/n-f, f-float64(i)/n))
	}
	return d
}

// Source: Kolmogorov's limiting distribution: P(√n D > 1.628) = 0.01
// (e.g. Massey 1951, JASA 46, 68, the asymptotic row of his table).
const ksCritical1pc = 1.628

// independentCDF integrates the rate as the History documents it (smooth
// ramp 1 + s τ/T sharing 1 − f of the mass, a box holding f) by the
// trapezoid rule, independently of History.CDF.
func independentCDF(h History) func(float64) float64 {
	const n = 20000
	T := h.MaxAgeGyr
	rate := func(tau float64) float64 { return 1 + h.RampSlope*tau/T }
	cum := make([]float64, n+1)
	for i := 1; i <= n; i++ {
		a, b := T*float64(i-1)/n, T*float64(i)/n
		cum[i] = cum[i-1] + (rate(a)+rate(b))/2*(b-a)
	}
	return func(age float64) float64 {
		x := math.Min(math.Max(age/T*n, 0), n)
		i := min(int(x), n-1)
		smooth := (cum[i] + (cum[i+1]-cum[i])*(x-float64(i))) / cum[n]
		if h.Burst == nil {
			return smooth
		}
		b := h.Burst
		box := math.Min(math.Max((age-b.StartGyr)/(b.EndGyr-b.StartGyr), 0), 1)
		return (1-b.Fraction)*smooth + b.Fraction*box
	}
}

func TestHistorySamplerMatchesItsCDF(t *testing.T) {
	ramp := SmoothHistory()
	ramp.RampSlope = 1.5
	falling := SmoothHistory()
	falling.RampSlope = -1
	for name, h := range map[string]History{
		"constant": SmoothHistory(), "ramp": ramp, "falling": falling,
		"box": BoxBurst(0.9, 0.1, 0.15), "young box": BoxBurst(0.05, 0.1, 0.3),
	} {
		want := independentCDF(h)
		for _, age := range []float64{0, 0.3, 0.85, 0.95, 2, 7, 11} {
			assert.InDelta(t, want(age), h.CDF(age), 1e-6, "%s: CDF(%g)", name, age)
		}
		r := rand.New(rand.NewPCG(11, 12))
		sample := make([]float64, 20000)
		for i := range sample {
			sample[i] = h.SampleAgeGyr(r)
		}
		d := ksStatistic(sample, want)
		assert.Less(t, math.Sqrt(float64(len(sample)))*d, ksCritical1pc, "%s: KS D = %.4f", name, d)
	}
	// The burst holds its fraction of all mass.
	h := BoxBurst(0.9, 0.1, 0.15)
	assert.InDelta(t, 0.15+0.85*0.1/11, h.CDF(0.95)-h.CDF(0.85), 1e-12)
}

func TestGalacticToICRS(t *testing.T) {
	// Source: ESA (1997), SP-1200, vol. 1, §1.5.3: the north Galactic pole is
	// at α = 192.85948°, δ = +27.12825° (the defining values).
	ra, dec := GalacticToICRS(0, 90)
	assert.InDelta(t, 192.85948, ra, 1e-7)
	assert.InDelta(t, 27.12825, dec, 1e-7)
	// Source: same section: the Galactic centre direction (l = b = 0) is at
	// α = 266.40500°, δ = −28.93617° (from memory; 1e-4° tolerance).
	ra, dec = GalacticToICRS(0, 0)
	assert.InDelta(t, 266.40500, ra, 1e-4)
	assert.InDelta(t, -28.93617, dec, 1e-4)
	// The ascending node of the Galactic plane lies on the equator at
	// α = α_pole + 90° (geometry of the definition).
	ra, dec = GalacticToICRS(galNodeLDeg, 0)
	assert.InDelta(t, 282.85948, ra, 1e-7)
	assert.InDelta(t, 0, dec, 1e-7)
	for _, p := range [][2]float64{{58, 21}, {200, -40}, {359, 1}} {
		l, b := ICRSToGalactic(GalacticToICRS(p[0], p[1]))
		assert.InDelta(t, p[0], l, 1e-9)
		assert.InDelta(t, p[1], b, 1e-9)
	}
}

func TestConeIsUniformInSolidAngle(t *testing.T) {
	k := newCone(58, 21, 11)
	r := rand.New(rand.NewPCG(3, 4))
	seps := make([]float64, 20000)
	for i := range seps {
		l, b := angles(k.draw(r))
		seps[i] = AngularSeparationDeg(58, 21, l, b)
		require.LessOrEqual(t, seps[i], 11+1e-9)
	}
	// Geometry: the solid angle within θ of the axis is 2π(1 − cos θ).
	cdf := func(s float64) float64 { return (1 - math.Cos(s*deg)) / (1 - math.Cos(11*deg)) }
	d := ksStatistic(seps, cdf)
	assert.Less(t, math.Sqrt(float64(len(seps)))*d, ksCritical1pc)
}

// smallConfig keeps the catalog tests fast.
func smallConfig(n int) Config {
	c := DefaultConfig()
	c.Stars = n
	return c
}

func TestCatalogRespectsEveryCut(t *testing.T) {
	cfg := smallConfig(3000)
	cfg.History = BoxBurst(0.9, 0.1, 0.15)
	stars, tally, err := Generate(cfg, 5)
	require.NoError(t, err)
	require.Len(t, stars, 3000)
	assert.Equal(t, 3000, tally.Catalog)
	sv := cfg.Survey
	for i, s := range stars {
		l, b := ICRSToGalactic(s.RADeg, s.DecDeg)
		ok := s.VMag >= sv.VMinMag && s.VMag <= sv.VMaxMag &&
			s.BV >= sv.BVMinMag && s.BV <= sv.BVMaxMag &&
			s.PeriodD >= sv.PeriodMinD && s.PeriodD <= sv.PeriodMaxD &&
			s.DistPc > 0 && s.DistPc <= sv.DistMaxPc && s.ParallaxMas > 0 &&
			AngularSeparationDeg(sv.LDeg, sv.BDeg, l, b) <= sv.RadiusDeg+1e-5 &&
			s.AgeGyr >= 0 && s.AgeGyr <= MSLifetimeGyr(s.MassMsun) && s.AgeGyr <= cfg.History.MaxAgeGyr &&
			s.MassMsun >= cfg.MassMinMsun && s.MassMsun <= cfg.MassMaxMsun
		require.True(t, ok, "star %d breaks a cut: %+v", i, s)
		// Height above the plane as the catalog reader derives it.
		assert.InDelta(t, s.ZPc, cfg.SunHeightPc+s.DistPc*math.Sin(b*deg), 1e-3)
	}
	// A box of 15 % of the mass at 0.9 Gyr shows among the catalog's true
	// ages: far more stars in 0.85–0.95 Gyr than in the neighbouring 0.1 Gyr.
	in, beside := 0, 0
	for _, s := range stars {
		switch {
		case s.AgeGyr >= 0.85 && s.AgeGyr < 0.95:
			in++
		case s.AgeGyr >= 1.0 && s.AgeGyr < 1.1:
			beside++
		}
	}
	assert.Greater(t, in, 5*beside)
}

func TestIntrinsicPeriodScatter(t *testing.T) {
	cfg := smallConfig(3000)
	stars, _, err := Generate(cfg, 9)
	require.NoError(t, err)
	var dev []float64
	for _, s := range stars {
		law, ok := cfg.Gyro.PeriodD(DwarfOfMass(s.MassMsun).BV, s.AgeGyr*1000)
		require.True(t, ok)
		dev = append(dev, math.Log10(s.TruePeriodD/law))
	}
	mean, sd := meanSD(dev)
	// The catalog keeps the lognormal scatter about the law; detection
	// favours the fast side a little, so the mean dips below zero.
	assert.Greater(t, mean, -0.04)
	assert.Less(t, mean, 0.005)
	assert.InDelta(t, cfg.PeriodScatterDex, sd, 0.012)
}

func meanSD(x []float64) (mean, sd float64) {
	for _, v := range x {
		mean += v
	}
	mean /= float64(len(x))
	for _, v := range x {
		sd += (v - mean) * (v - mean)
	}
	return mean, math.Sqrt(sd / float64(len(x)-1))
}

func TestSameSeedSameBytes(t *testing.T) {
	dir := t.TempDir()
	cfg := smallConfig(1500)
	cfg.History = BoxBurst(0.6, 0.1, 0.15)
	write := func(name string, seed uint64) []byte {
		p := filepath.Join(dir, name)
		_, err := WriteCatalog(p, cfg, seed)
		require.NoError(t, err)
		b, err := os.ReadFile(p)
		require.NoError(t, err)
		return b
	}
	a, b, c := write("a.csv", 42), write("b.csv", 42), write("c.csv", 43)
	assert.Equal(t, a, b)
	assert.NotEqual(t, a, c)
	assert.Equal(t, 1500+4, bytes.Count(a, []byte("\n")), "3 comment lines, a header, 1500 rows")
	// An existing file is never overwritten.
	_, err := WriteCatalog(filepath.Join(dir, "a.csv"), cfg, 1)
	assert.ErrorContains(t, err, "exists")
	entries, _ := os.ReadDir(dir)
	assert.Len(t, entries, 3, "no temporary files left behind")
}

func TestBadConfigNamesTheField(t *testing.T) {
	for field, mutate := range map[string]func(*Config){
		"Stars":         func(c *Config) { c.Stars = 0 },
		"RampSlope":     func(c *Config) { c.History.RampSlope = -2 },
		"burst box":     func(c *Config) { c.History = BoxBurst(0.02, 0.1, 0.1) },
		"Fraction":      func(c *Config) { c.History = BoxBurst(1, 0.1, 1.2) },
		"HalfAliasProb": func(c *Config) { c.HalfAliasProb = 1 },
		"LifetimeGyr":   func(c *Config) { c.Relations = &Relations{Name: "half", Dwarf: builtInDwarf} },
	} {
		cfg := DefaultConfig()
		mutate(&cfg)
		_, _, err := Generate(cfg, 1)
		assert.ErrorContains(t, err, field)
	}
}

// builtInDwarf is DwarfOfMass in the form Relations.Dwarf takes.
func builtInDwarf(m float64) (bv, absMagV float64, ok bool) {
	d := DwarfOfMass(m)
	return d.BV, d.AbsMagV, true
}

// A Relations hook replaces the relations and nothing else: handed the
// built-in ones it draws the very same stars; handed a table whose stars
// all live 0.5 Gyr and sit 1 mag fainter, no star is older than that, and
// each lies 1 mag fainter than the built-in relation puts a star of its
// mass (within the catalog's 0.01 mag errors, its dust the same).
func TestRelationsHook(t *testing.T) {
	cfg := smallConfig(800)
	want, _, err := Generate(cfg, 9)
	require.NoError(t, err)
	cfg.Relations = &Relations{Name: "built-in again", Dwarf: builtInDwarf, LifetimeGyr: MSLifetimeGyr}
	got, _, err := Generate(cfg, 9)
	require.NoError(t, err)
	assert.Equal(t, want, got)

	cfg.Relations = &Relations{Name: "short-lived, fainter",
		Dwarf: func(m float64) (float64, float64, bool) {
			bv, mv, _ := builtInDwarf(m)
			return bv, mv + 1, true
		},
		LifetimeGyr: func(float64) float64 { return 0.5 },
	}
	stars, tally, err := Generate(cfg, 9)
	require.NoError(t, err)
	assert.Greater(t, tally.Evolved, 0)
	for _, s := range stars {
		require.LessOrEqual(t, s.AgeGyr, 0.5)
		av := cfg.AVPerKpc * s.DistPc / 1000
		mv := s.VMag - 5*math.Log10(s.DistPc/10) - av
		require.InDelta(t, DwarfOfMass(s.MassMsun).AbsMagV+1, mv, 0.06, "star of %.3f M☉", s.MassMsun)
	}
}

// The vertical hook handed the exponential layers' own acceptance draws the
// same stars (it takes no random numbers); handed a thin layer of one
// scale height at every age, it keeps old stars as close to the plane as
// young ones (in the default layers they lie several times farther).
func TestVerticalHook(t *testing.T) {
	cfg := smallConfig(800)
	want, _, err := Generate(cfg, 9)
	require.NoError(t, err)
	own := func(ageGyr, zPc float64) float64 {
		h := cfg.ScaleHeight0Pc * math.Pow(1+ageGyr/cfg.ScaleHeightTau1Gyr, cfg.ScaleHeightBeta)
		return cfg.ScaleHeight0Pc / h * math.Exp(-math.Abs(zPc)/h)
	}
	cfg.Vertical = &Vertical{Name: "the layers again", Accept: own}
	got, _, err := Generate(cfg, 9)
	require.NoError(t, err)
	assert.Equal(t, want, got)

	meanAbsZ := func(stars []Star, lo, hi float64) float64 {
		sum, n := 0.0, 0
		for _, s := range stars {
			if s.AgeGyr >= lo && s.AgeGyr < hi {
				sum += math.Abs(s.ZPc)
				n++
			}
		}
		require.Greater(t, n, 20, "stars aged %g–%g Gyr", lo, hi)
		return sum / float64(n)
	}
	// The layers' heights at 0.5 and 8 Gyr are 70·1.5^0.7 = 93 pc and
	// 70·9^0.7 = 327 pc: old stars reach 3.5 times higher.
	assert.Greater(t, meanAbsZ(want, 6, 11), 1.5*meanAbsZ(want, 0, 1))
	cfg.Vertical = &Vertical{Name: "one thin layer", Accept: func(_, zPc float64) float64 { return math.Exp(-math.Abs(zPc) / 70) }}
	thin, _, err := Generate(cfg, 9)
	require.NoError(t, err)
	young, old := meanAbsZ(thin, 0, 1), meanAbsZ(thin, 6, 11)
	assert.InDelta(t, 1, old/young, 0.25, "mean |z| %.0f pc old, %.0f pc young", old, young)

	cfg.Vertical = &Vertical{Name: "no function"}
	_, _, err = Generate(cfg, 9)
	assert.ErrorContains(t, err, "needs Accept")
}

// The defaults must follow the example scenario the comparison extends, and
// the catalog must carry every column its [data.columns] maps. The files
// are read as TOML, not through spinpop's packages, which this one must not
// import.
func TestDefaultsFollowTheExampleScenario(t *testing.T) {
	var base struct {
		Survey struct {
			BrightLimitMag float64 `toml:"bright_limit_mag"`
			FaintLimitMag  float64 `toml:"faint_limit_mag"`
			CadenceD       float64 `toml:"cadence_d"`
			BaselineD      float64 `toml:"baseline_d"`
			MinCycles      float64 `toml:"min_cycles"`
			Field          struct {
				LDeg          float64 `toml:"l_deg"`
				BDeg          float64 `toml:"b_deg"`
				RadiusDeg     float64 `toml:"radius_deg"`
				DistanceMaxPc float64 `toml:"distance_max_pc"`
			} `toml:"field"`
		} `toml:"survey"`
		Disk struct {
			SunHeightPc float64 `toml:"sun_height_pc"`
		} `toml:"disk"`
		Cuts struct {
			BVMin      float64  `toml:"b_v_min"`
			BVMax      float64  `toml:"b_v_max"`
			PeriodMinD *float64 `toml:"period_min_d"`
			PeriodMaxD *float64 `toml:"period_max_d"`
		} `toml:"cuts"`
	}
	_, err := toml.DecodeFile("../../scenarios/examples/base.toml", &base)
	require.NoError(t, err)
	sv, f := base.Survey, base.Survey.Field
	want := Survey{
		LDeg: f.LDeg, BDeg: f.BDeg, RadiusDeg: f.RadiusDeg, DistMaxPc: f.DistanceMaxPc,
		VMinMag: sv.BrightLimitMag, VMaxMag: sv.FaintLimitMag,
		BVMinMag: base.Cuts.BVMin, BVMaxMag: base.Cuts.BVMax,
		// The scenario's documented defaults: 2 × cadence, baseline / min_cycles.
		PeriodMinD: 2 * sv.CadenceD, PeriodMaxD: sv.BaselineD / sv.MinCycles,
	}
	if p := base.Cuts.PeriodMinD; p != nil {
		want.PeriodMinD = *p
	}
	if p := base.Cuts.PeriodMaxD; p != nil {
		want.PeriodMaxD = *p
	}
	got := ExampleSurvey()
	assert.InDelta(t, want.PeriodMaxD, got.PeriodMaxD, 1e-9)
	assert.InDelta(t, want.PeriodMinD, got.PeriodMinD, 1e-12)
	want.PeriodMinD, want.PeriodMaxD = got.PeriodMinD, got.PeriodMaxD
	assert.Equal(t, want, got)
	assert.Equal(t, base.Disk.SunHeightPc, DefaultConfig().SunHeightPc)

	var fit struct {
		Data struct {
			Columns map[string]string `toml:"columns"`
		} `toml:"data"`
	}
	_, err = toml.DecodeFile("../../scenarios/examples/fit.toml", &fit)
	require.NoError(t, err)
	require.NotEmpty(t, fit.Data.Columns)
	header := strings.Split(CatalogHeader, ",")
	for key, col := range fit.Data.Columns {
		assert.Contains(t, header, col, "fit.toml maps %s to a column the catalog lacks", key)
	}
}
