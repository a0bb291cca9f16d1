package spots

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func TestAmplitudeFallsWithRossby(t *testing.T) {
	a := DefaultAmplitudeModel()
	require.NoError(t, a.Validate())
	// Saturated: flat below RoSat.
	assert.Equal(t, a.AmpSatPpm, a.MedianPpm(0.01))
	assert.Equal(t, a.AmpSatPpm, a.MedianPpm(a.RoSat))
	prev := a.AmpSatPpm
	for ro := 0.2; ro < 4; ro += 0.1 {
		amp := a.MedianPpm(ro)
		assert.Less(t, amp, prev, "Ro %g", ro)
		prev = amp
	}
	// Power law: one decade in Ro is Slope decades in amplitude.
	assert.InDelta(t, a.Slope, math.Log10(a.MedianPpm(0.3)/a.MedianPpm(3)), 1e-12)
	// From memory of García et al. (2014), A&A 572, A34: the Sun's
	// rotational photometric variability is ~170 ppm, at Ro ≈ 2; a factor
	// of 3 either way reflects that.
	sun := a.MedianPpm(2)
	assert.Greater(t, sun, 170.0/3)
	assert.Less(t, sun, 170.0*3)
	assert.True(t, math.IsNaN(a.MedianPpm(0)))
	assert.True(t, math.IsNaN(a.MedianPpm(math.NaN())))
}

func TestAmplitudeScatter(t *testing.T) {
	a := DefaultAmplitudeModel()
	r := rand.New(rand.NewPCG(5, 6))
	const n = 40000
	logs := make([]float64, n)
	var sum, sum2 float64
	for i := range logs {
		x := math.Log10(a.Draw(1, r) / a.MedianPpm(1))
		logs[i] = x
		sum += x
		sum2 += x * x
	}
	slices.Sort(logs)
	mean := sum / n
	sd := math.Sqrt(sum2/n - mean*mean)
	assert.InDelta(t, 0, logs[n/2], 0.01, "median star sits on the relation")
	assert.InDelta(t, a.ScatterDex, sd, 0.005)
}

func TestNoiseModel(t *testing.T) {
	n := NoiseModel{FloorPpm: 0, RefMag: 12, PpmAtRefMag: 100}
	assert.InDelta(t, 100, n.PpmPerCadence(12), 1e-9)
	// Fact of photometry (Pogson's scale): 5 mag is a factor 100 in flux,
	// so photon noise grows tenfold.
	assert.InDelta(t, 1000, n.PpmPerCadence(17), 1e-9)
	n.FloorPpm = 30
	assert.InDelta(t, math.Sqrt(30*30+100*100), n.PpmPerCadence(12), 1e-9)
	assert.InDelta(t, 30, n.PpmPerCadence(0), 0.01, "bright stars hit the floor")
	require.NoError(t, n.Validate())
	assert.Error(t, NoiseModel{FloorPpm: -1, PpmAtRefMag: 1}.Validate())
	assert.Error(t, NoiseModel{PpmAtRefMag: 0}.Validate())
	assert.Error(t, NoiseModel{PpmAtRefMag: 1, RefMag: math.Inf(1)}.Validate())
}

// TestSinusoidAmplitudeError checks the S/N convention against a
// simulation: the least-squares amplitude of a sinusoid in N points of
// white noise σ has standard error σ sqrt(2/N). Common practice, no source;
// the simulation is the check.
func TestSinusoidAmplitudeError(t *testing.T) {
	const nPts, trials, period = 400, 3000, 37.3
	r := rand.New(rand.NewPCG(9, 10))
	s, c := make([]float64, nPts), make([]float64, nPts)
	var ss, cc, sc float64
	for i := range nPts {
		ph := 2 * math.Pi * float64(i) / period
		s[i], c[i] = math.Sin(ph), math.Cos(ph)
		ss += s[i] * s[i]
		cc += c[i] * c[i]
		sc += s[i] * c[i]
	}
	det := ss*cc - sc*sc
	var sum2 float64
	for range trials {
		var ys, yc float64
		for i := range nPts {
			y := r.NormFloat64() // σ = 1, no signal
			ys += y * s[i]
			yc += y * c[i]
		}
		a := (cc*ys - sc*yc) / det // sine coefficient
		sum2 += a * a
	}
	got := math.Sqrt(sum2 / trials)
	assert.InDelta(t, math.Sqrt(2.0/nPts), got, 0.04*math.Sqrt(2.0/nPts))

	// And Detection.SNR uses exactly that convention.
	d := Detection{Noise: NoiseModel{RefMag: 10, PpmAtRefMag: 1000}, BaselineD: 400, CadenceD: 1}
	assert.InDelta(t, 500/(1000*math.Sqrt(2.0/nPts)), d.SNR(500, 10), 1e-9)
}

func TestDetectionProbability(t *testing.T) {
	d := DefaultDetection()
	require.NoError(t, d.Validate())
	a := DefaultAmplitudeModel()

	// At the threshold the probability is one half, by construction.
	noise := d.Noise.PpmPerCadence(14)
	ampAtThreshold := d.ThresholdSNR * noise / math.Sqrt(0.5*d.Cadences())
	assert.InDelta(t, 0.5, d.Probability(ampAtThreshold, 14, 10), 1e-12)

	// Common practice, no source: a young, active star (Ro = 0.1, saturated
	// 1 % spots) is found even at magnitude 15 ...
	assert.Greater(t, d.Probability(a.MedianPpm(0.1), 15, 3), 0.99)
	// ... while an old, slow, quiet one (Ro = 2.5, ~150 ppm) at magnitude
	// 18 is almost never found, and never with fewer than 3 cycles.
	assert.Less(t, d.Probability(a.MedianPpm(2.5), 18, 28), 0.05)
	assert.Zero(t, d.Probability(1e6, 10, 45), "120-d baseline holds < 3 cycles of 45 d")

	// Monotone: brighter and larger signals are easier.
	prev := 1.0
	for mag := 10.0; mag <= 20; mag += 0.5 {
		p := d.Probability(300, mag, 10)
		assert.LessOrEqual(t, p, prev)
		prev = p
	}
	prev = 0
	for amp := 10.0; amp < 1e5; amp *= 1.5 {
		p := d.Probability(amp, 16, 10)
		assert.GreaterOrEqual(t, p, prev)
		prev = p
	}
	for _, bad := range [][3]float64{{0, 12, 10}, {100, 12, 0}, {math.NaN(), 12, 10}, {100, 12, math.NaN()}} {
		assert.Zero(t, d.Probability(bad[0], bad[1], bad[2]), "%v", bad)
	}
}

func TestDetectionValidate(t *testing.T) {
	for name, edit := range map[string]func(*Detection){
		"BaselineD":    func(d *Detection) { d.BaselineD = 0 },
		"CadenceD":     func(d *Detection) { d.CadenceD = 200 },
		"ThresholdSNR": func(d *Detection) { d.ThresholdSNR = -1 },
		"Sharpness":    func(d *Detection) { d.Sharpness = 0 },
		"MinCycles":    func(d *Detection) { d.MinCycles = math.NaN() },
		"PpmAtRefMag":  func(d *Detection) { d.Noise.PpmAtRefMag = 0 },
	} {
		d := DefaultDetection()
		edit(&d)
		assert.ErrorContains(t, d.Validate(), name)
	}
	a := DefaultAmplitudeModel()
	a.Slope = -1
	assert.ErrorContains(t, a.Validate(), "Slope")
}

func TestRecover(t *testing.T) {
	opts := DefaultRecoveryOptions()
	require.NoError(t, opts.Validate())
	r := rand.New(rand.NewPCG(11, 12))
	const n = 100000
	var counts [3]int
	var sum, sum2 float64
	for range n {
		p, alias := Recover(10, r, opts)
		counts[alias]++
		x := math.Log(p / 10)
		switch alias {
		case AliasHalf:
			x -= math.Log(0.5)
		case AliasDouble:
			x -= math.Log(2)
		}
		sum += x
		sum2 += x * x
	}
	// Binomial standard errors are ≈ 0.0007 and 0.0004; allow ~5σ.
	assert.InDelta(t, opts.HalfProb, float64(counts[AliasHalf])/n, 0.0035)
	assert.InDelta(t, opts.DoubleProb, float64(counts[AliasDouble])/n, 0.002)
	mean := sum / n
	assert.InDelta(t, 0, mean, 0.001)
	assert.InDelta(t, opts.RelScatter, math.Sqrt(sum2/n-mean*mean), 0.001)

	// No scatter, no aliases: the truth comes back.
	p, alias := Recover(7.5, r, RecoveryOptions{})
	assert.Equal(t, 7.5, p)
	assert.Equal(t, AliasNone, alias)
	// Same seed, same numbers.
	a, b := rand.New(rand.NewPCG(1, 1)), rand.New(rand.NewPCG(1, 1))
	for range 50 {
		pa, la := Recover(3, a, opts)
		pb, lb := Recover(3, b, opts)
		require.Equal(t, pa, pb)
		require.Equal(t, la, lb)
	}
	p, _ = Recover(-1, r, opts)
	assert.True(t, math.IsNaN(p))
	assert.Error(t, RecoveryOptions{HalfProb: 0.7, DoubleProb: 0.5}.Validate())
	assert.Error(t, RecoveryOptions{RelScatter: -0.1}.Validate())
}

func TestSpotsHotPathsDoNotAllocate(t *testing.T) {
	a, d, o := DefaultAmplitudeModel(), DefaultDetection(), DefaultRecoveryOptions()
	r := rand.New(rand.NewPCG(1, 2))
	assert.Zero(t, testing.AllocsPerRun(100, func() { d.Probability(a.Draw(0.5, r), 14, 8) }))
	assert.Zero(t, testing.AllocsPerRun(100, func() { Recover(8, r, o) }))
}

// power replaces exp(k ln x) for whole and half-whole k; it must agree with
// math.Pow to rounding, and fall back to it otherwise.
func TestPowerMatchesPow(t *testing.T) {
	for _, k := range []float64{0.5, 1, 1.5, 2, 3, 4, 7.5, 64, 0.3, 2.7, 100} {
		for _, x := range []float64{1e-6, 0.01, 0.37, 1, 1.9, 25, 1e4} {
			want, got := math.Pow(x, k), power(x, k)
			switch {
			case want < 1e-300: // underflow either way
				assert.Less(t, got, 1e-299, "x %v k %v", x, k)
			case want > 1e300:
				assert.Greater(t, got, 1e299, "x %v k %v", x, k)
			default:
				assert.InEpsilon(t, want, got, 1e-13, "x %v k %v", x, k)
			}
		}
		assert.Equal(t, 0.0, power(0, k), "k %v", k)
		assert.True(t, math.IsInf(power(math.Inf(1), k), 1), "k %v", k)
	}
}

// ProbabilityAtNoise is Probability with the noise already worked out, and
// both follow the logistic 1/(1 + (T/SNR)^k) for any sharpness.
func TestProbabilityAtNoise(t *testing.T) {
	d := DefaultDetection()
	for _, k := range []float64{4, 2.5, 3.7} {
		d.Sharpness = k
		for _, amp := range []float64{50, 300, 2000} {
			for _, mag := range []float64{10, 14, 17} {
				noise := d.Noise.PpmPerCadence(mag)
				got := d.ProbabilityAtNoise(amp, noise, 12)
				assert.Equal(t, d.Probability(amp, mag, 12), got)
				want := 1 / (1 + math.Pow(d.ThresholdSNR/d.SNR(amp, mag), k))
				assert.InDelta(t, want, got, 1e-14, "k %v amp %v mag %v", k, amp, mag)
			}
		}
	}
	assert.Zero(t, d.ProbabilityAtNoise(300, 100, 45), "baseline holds < MinCycles")
	assert.Zero(t, d.ProbabilityAtNoise(math.NaN(), 100, 10))
}

// Draw is MedianPpm times 10^(ScatterDex z) for the normal deviate z it
// draws, at any Rossby number and slope.
func TestAmplitudeDrawIsMedianTimesScatter(t *testing.T) {
	for _, slope := range []float64{1, 1.5, 2, 0.7} {
		a := DefaultAmplitudeModel()
		a.Slope = slope
		for _, ro := range []float64{0.05, 0.15, 0.4, 2, 9} {
			r1, r2 := rand.New(rand.NewPCG(3, 3)), rand.New(rand.NewPCG(3, 3))
			got := a.Draw(ro, r1)
			want := a.MedianPpm(ro) * math.Pow(10, a.ScatterDex*r2.NormFloat64())
			assert.InEpsilon(t, want, got, 1e-13, "slope %v ro %v", slope, ro)
		}
		assert.InEpsilon(t, a.AmpSatPpm*math.Pow(2/a.RoSat, -slope), a.MedianPpm(2), 1e-13)
	}
	r := rand.New(rand.NewPCG(1, 1))
	assert.True(t, math.IsNaN(DefaultAmplitudeModel().Draw(math.NaN(), r)))
}

// Recover draws a uniform, then a normal deviate, from r: a generator that
// skips it must draw the same to stay in step.
func TestRecoverStreamUse(t *testing.T) {
	a, b := rand.New(rand.NewPCG(5, 5)), rand.New(rand.NewPCG(5, 5))
	Recover(10, a, DefaultRecoveryOptions())
	b.Float64()
	b.NormFloat64()
	assert.Equal(t, b.Uint64(), a.Uint64())
}

// The search completeness is the logistic its comment states: one half at
// P½, 1/(1 + 2^k) at twice it, P½ scaled by (τ_c/τ_c☉)^power, and no loss
// when disabled. Worked by hand from the definition.
func TestSearchCompleteness(t *testing.T) {
	s := SearchCompleteness{HalfPeriodD: 20, TurnoverPower: 1, Steepness: 6}
	require.NoError(t, s.Validate())
	assert.InDelta(t, 0.5, s.Efficiency(20, 1), 1e-15)
	assert.InDelta(t, 1/(1+64.0), s.Efficiency(40, 1), 1e-15)
	assert.InDelta(t, 0.5, s.Efficiency(40, 2), 1e-15, "a star with twice the Sun's turnover time has P½ twice as long")
	assert.InDelta(t, 64/(1+64.0), s.Efficiency(10, 1), 1e-15)
	half := SearchCompleteness{HalfPeriodD: 20, TurnoverPower: 0.5, Steepness: 6}
	assert.InDelta(t, 0.5, half.Efficiency(20*math.Sqrt(4), 4), 1e-15)
	fixed := SearchCompleteness{HalfPeriodD: 20, TurnoverPower: 0, Steepness: 6}
	assert.InDelta(t, 0.5, fixed.Efficiency(20, math.NaN()), 1e-15, "a fixed-period loss needs no turnover time")
	assert.Equal(t, 0.0, s.Efficiency(20, math.NaN()), "no turnover time, no Rossby-scaled loss")
	assert.Equal(t, 1.0, SearchCompleteness{}.Efficiency(500, 1), "disabled: no loss")
	assert.NoError(t, SearchCompleteness{}.Validate())
	for _, bad := range []SearchCompleteness{{HalfPeriodD: -1, Steepness: 6}, {HalfPeriodD: 20, TurnoverPower: 4, Steepness: 6}, {HalfPeriodD: 20, TurnoverPower: 1}} {
		assert.Error(t, bad.Validate(), "%+v", bad)
	}
}

// The free-form loss is the interpolation its comment states: each node's
// value at its Rossby-scaled period P·τ_c☉/τ_c, linear in ln P between
// nodes (the mean of two neighbours at their geometric mean), flat beyond
// the end nodes, and a factor on top of the logistic. Worked by hand.
func TestSearchRossbyBands(t *testing.T) {
	bands := []float64{1, 0.9, 0.8, 0.4, 0.1, 0}
	s := SearchCompleteness{RossbyBands: bands, TurnoverPower: 1}
	require.NoError(t, s.Validate())
	assert.True(t, s.Enabled())
	assert.True(t, s.NeedsTurnover())
	for k, x := range RossbyNodesD {
		assert.InDelta(t, bands[k], s.Efficiency(x, 1), 1e-15, "node %g d", x)
	}
	assert.InDelta(t, 0.4, s.Efficiency(48, 2), 1e-15, "48 d at twice the Sun's turnover time is Rossby-scaled 24 d")
	assert.InDelta(t, 0.25, s.Efficiency(24*math.Sqrt2, 1), 1e-12, "half-way in ln P between 24 d (0.4) and 48 d (0.1)")
	assert.InDelta(t, 0.4+0.25*(0.1-0.4), s.Efficiency(24*math.Pow(2, 0.25), 1), 1e-12, "a quarter of the way in ln P")
	assert.Equal(t, 1.0, s.Efficiency(0.5, 1), "flat below the first node")
	assert.Equal(t, 0.0, s.Efficiency(500, 1), "flat beyond the last node")
	assert.Equal(t, 0.0, s.Efficiency(20, math.NaN()), "no turnover time, no Rossby number")
	half := SearchCompleteness{RossbyBands: bands, TurnoverPower: 0.5}
	assert.InDelta(t, 0.4, half.Efficiency(48, 4), 1e-15, "power ½: at 4 times the Sun's turnover time 48 d scales to 24 d")
	fixed := SearchCompleteness{RossbyBands: bands}
	assert.InDelta(t, 0.1, fixed.Efficiency(48, math.NaN()), 1e-15, "power 0: a fixed period, no turnover time needed")
	both := SearchCompleteness{HalfPeriodD: 24, TurnoverPower: 1, Steepness: 6, RossbyBands: bands}
	assert.InDelta(t, 0.5*0.4, both.Efficiency(48, 2), 1e-15, "a factor on the logistic: at ratio 2 its half point is 48 d, and 48 d is the 24 d node")
	for _, bad := range []SearchCompleteness{{RossbyBands: []float64{1, 1}}, {RossbyBands: []float64{1, 1, 1, 1.2, 1, 1}}, {RossbyBands: []float64{1, 1, 1, math.NaN(), 1, 1}}, {RossbyBands: bands, TurnoverPower: -1}} {
		assert.Error(t, bad.Validate(), "%+v", bad)
	}
}

// SplitBands takes the efficiency apart as its comment says: the
// logistic's share and the two nodes' weights, worked by hand, and the
// parts multiply back to Efficiency.
func TestSearchSplitBands(t *testing.T) {
	bands := []float64{1, 0.9, 0.8, 0.4, 0.1, 0}
	both := SearchCompleteness{HalfPeriodD: 24, TurnoverPower: 1, Steepness: 6, RossbyBands: bands}
	rest, k, f, ok := both.SplitBands(48*math.Sqrt2, 2)
	require.True(t, ok)
	assert.Equal(t, 3, k, "scaled period 24√2 d lies between the 24 d and 48 d nodes")
	assert.InDelta(t, 0.5, f, 1e-12, "half-way in ln x")
	assert.InDelta(t, 1/(1+math.Pow(math.Sqrt2, 6)), rest, 1e-12, "the logistic at √2 times its half point (48 d at ratio 2)")
	for _, c := range []struct{ p, tau float64 }{{1, 1}, {5, 0.7}, {33, 1.3}, {70, 1}, {400, 2}} {
		rest, k, f, ok := both.SplitBands(c.p, c.tau)
		require.True(t, ok)
		want := both.Efficiency(c.p, c.tau)
		assert.InDelta(t, want, rest*((1-f)*bands[k]+f*bands[k+1]), 1e-14, "P %g d, τ ratio %g", c.p, c.tau)
	}
	k, f = BandNodes(2)
	assert.Equal(t, []float64{0, 0}, []float64{float64(k), f}, "below the first node: all weight on it")
	k, f = BandNodes(200)
	assert.Equal(t, []float64{4, 1}, []float64{float64(k), f}, "beyond the last node: all weight on it")
	_, _, _, ok = SearchCompleteness{HalfPeriodD: 24, Steepness: 6}.SplitBands(30, 1)
	assert.False(t, ok, "no bands, no split")
	rest, _, _, ok = both.SplitBands(30, math.NaN())
	assert.False(t, ok)
	assert.Equal(t, 0.0, rest, "no turnover time: nothing is detected")
}

// The log forms the population uses are the models: an amplitude drawn
// at ln Ro is the one drawn at Ro (the median times 10^(σz), worked from
// the definition, with the same deviate), with no amplitude at Ro = 0 or
// without a Rossby number; the search's efficiency and split at the
// logarithms are the ones at the values.
func TestLogFormsMatchTheModels(t *testing.T) {
	a := AmplitudeModel{RoSat: 0.12, AmpSatPpm: 8000, Slope: 1.37, ScatterDex: 0.25}
	l := a.Log()
	assert.InDelta(t, math.Log(0.12), l.LnRoSat(), 1e-15)
	for _, ro := range []float64{0.01, 0.12, 0.3, 1.1, 4} {
		r1, r2 := rand.New(rand.NewPCG(9, 2)), rand.New(rand.NewPCG(9, 2))
		got, z := l.DrawDeviate(math.Log(ro), r1)
		zWant := r2.NormFloat64()
		assert.Equal(t, zWant, z)
		assert.InEpsilon(t, a.MedianPpm(ro)*math.Pow(10, a.ScatterDex*zWant), got, 1e-13, "ro %v", ro)
	}
	r := rand.New(rand.NewPCG(1, 1))
	for _, lnRo := range []float64{math.Inf(-1), math.NaN()} {
		amp, _ := l.DrawDeviate(lnRo, r)
		assert.True(t, math.IsNaN(amp), "ln Ro %v", lnRo)
	}

	s := SearchCompleteness{HalfPeriodD: 18, TurnoverPower: 0.7, Steepness: 5, RossbyBands: []float64{1, 0.95, 0.7, 0.5, 0.2, 0.1}}
	ls := s.Log()
	for _, c := range []struct{ p, tau float64 }{{2, 1}, {7, 0.6}, {19, 1.4}, {60, 1}, {300, 2.5}} {
		// Efficiency from its definition: the logistic in P/P½ times the
		// bands interpolated in ln of the scaled period.
		scale := math.Pow(c.tau, 0.7)
		k, f := BandNodes(c.p / scale)
		want := (s.RossbyBands[k] + f*(s.RossbyBands[k+1]-s.RossbyBands[k])) / (1 + math.Pow(c.p/(18*scale), 5))
		assert.InEpsilon(t, want, ls.Efficiency(math.Log(c.p), math.Log(c.tau)), 1e-12, "%+v", c)
		r1, k1, f1, ok1 := s.SplitBands(c.p, c.tau)
		r2, k2, f2, ok2 := ls.SplitBands(math.Log(c.p), math.Log(c.tau))
		assert.Equal(t, []any{k1, ok1}, []any{k2, ok2})
		assert.InDelta(t, r1, r2, 1e-14)
		assert.InDelta(t, f1, f2, 1e-14)
	}
	assert.Equal(t, 0.0, ls.Efficiency(math.Inf(-1), 0), "a zero period is never found")
	assert.Equal(t, 0.0, ls.Efficiency(math.Log(10), math.NaN()), "no turnover time where one is read")
}
