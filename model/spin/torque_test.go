package spin

import (
	"math"
	"math/rand/v2"
	"slices"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func defaultTorque(t testing.TB, edit func(*TorqueOptions)) *TorqueLaw {
	t.Helper()
	o := DefaultTorqueOptions()
	if edit != nil {
		edit(&o)
	}
	l, err := NewTorqueLaw(o)
	require.NoError(t, err)
	return l
}

func TestTorqueCalibration(t *testing.T) {
	for _, edit := range []func(*TorqueOptions){
		nil,
		func(o *TorqueOptions) { o.SolarPeriodD = 27 },
		func(o *TorqueOptions) { o.Initial = InitialPeriods{Shape: LogUniform, MinD: 0.8, MaxD: 8} },
		func(o *TorqueOptions) { o.TorqueExponent = 1.5 },
		func(o *TorqueOptions) { o.RoCritOverSolar = 1.1 },
		func(o *TorqueOptions) { o.RoCritOverSolar = 1 },
	} {
		l := defaultTorque(t, edit)
		o := l.Options()
		// Source: the brief's requirement — the calibrated law brings a
		// 1 M☉ star with the median initial period to the solar period
		// at the solar age within 1 %.
		p, ok := l.PeriodAt(1, o.SolarAgeGyr, 0.5)
		require.True(t, ok)
		assert.InDelta(t, 1, p/o.SolarPeriodD, 0.01)
		assert.InDelta(t, 1, p/o.SolarPeriodD, 1e-9, "bisection should reach machine precision")
	}
}

func TestTorqueSkumanich(t *testing.T) {
	// Source: Skumanich (1972), ApJ 171, 565: P ∝ t^0.5 for Sun-like stars.
	l := defaultTorque(t, nil)
	p1, _ := l.PeriodAt(1, 1, 0.5)
	p4, _ := l.PeriodAt(1, 4, 0.5)
	assert.InDelta(t, 0.50, math.Log(p4/p1)/math.Log(4), 0.01)
}

func TestTorqueMedianOfDraws(t *testing.T) {
	// Period is monotone in the initial quantile, so the median of drawn
	// periods is the calibration star's period.
	l := defaultTorque(t, nil)
	r := rand.New(rand.NewPCG(7, 11))
	ps := make([]float64, 20001)
	for i := range ps {
		p, ok := l.Period(Star{MassMsun: 1, AgeGyr: 4.57}, r)
		require.True(t, ok)
		ps[i] = p
	}
	slices.Sort(ps)
	assert.InDelta(t, 25.4, ps[len(ps)/2], 0.25)

	// Same seed, same numbers.
	a := rand.New(rand.NewPCG(3, 4))
	b := rand.New(rand.NewPCG(3, 4))
	for range 100 {
		pa, _ := l.Period(Star{MassMsun: 0.8, AgeGyr: 1}, a)
		pb, _ := l.Period(Star{MassMsun: 0.8, AgeGyr: 1}, b)
		require.Equal(t, pa, pb)
	}
}

// integrate solves dω/dt numerically (RK4, fixed step) from the start age,
// with braking multiplied by 1 − h inside the stall's pause and by 1 + h/c
// during its catch-up (h the stall's strength at this mass, c the catch-up
// fraction), and switched off beyond Ro_crit: an independent check of the
// closed forms, the saturated→unsaturated join and the effective-age
// treatment of the stall.
func integrate(l *TorqueLaw, m, u float64, agesGyr []float64) []float64 {
	o := l.opts
	tau, _ := l.turnover(m)
	q := tau / l.tauSunD
	k := l.kSunPerGy * l.massScale(m, o.RadiusOfMass(m))
	p := o.TorqueExponent
	chi := o.SaturationRatio
	pCrit := math.Inf(1)
	if o.RoCritOverSolar > 0 {
		pCrit = o.RoCritOverSolar * l.SolarRossby() * tau
	}
	start, end, catchUp := 0.0, 0.0, 0.0
	h := o.Stall.Strength(m)
	if d := o.Stall.DurationGyr(m); d > 0 {
		start = o.Stall.StartGyr(m)
		end = start + d
		catchUp = end + o.Stall.CatchUpFraction*d
	}
	kSat, kUnsat := k*math.Pow(chi, p), k*math.Pow(q, p)
	rhs := func(t, w float64) float64 {
		g := 1.0
		switch {
		case t > start && t < end:
			g = 1 - h
		case t >= end && t < catchUp:
			g = 1 + h/o.Stall.CatchUpFraction
		}
		if o.SolarPeriodD/w >= pCrit {
			return 0
		}
		if w*q >= chi {
			return -g * kSat * w
		}
		if p == 2 {
			return -g * kUnsat * w * w * w
		}
		return -g * kUnsat * math.Pow(w, p+1)
	}
	w := o.SolarPeriodD / o.Initial.Quantile(u)
	t := o.StartAgeGyr
	out := make([]float64, len(agesGyr))
	for i, age := range agesGyr { // ascending
		n := int(math.Ceil((age - t) / 5e-5))
		h := (age - t) / float64(n)
		for range n {
			s1 := rhs(t, w)
			s2 := rhs(t+h/2, w+h/2*s1)
			s3 := rhs(t+h/2, w+h/2*s2)
			s4 := rhs(t+h, w+h*s3)
			w += h / 6 * (s1 + 2*s2 + 2*s3 + s4)
			t += h
		}
		out[i] = o.SolarPeriodD / w
	}
	return out
}

func TestTorqueMatchesIntegration(t *testing.T) {
	variants := map[string]func(*TorqueOptions){
		"default": nil,
		"p=1.5":   func(o *TorqueOptions) { o.TorqueExponent = 1.5 },
		"weakened braking": func(o *TorqueOptions) {
			o.RoCritOverSolar = 1.1
		},
		"stall": func(o *TorqueOptions) { o.Stall.Enabled = true },
		"stall without catch-up": func(o *TorqueOptions) {
			o.Stall.Enabled = true
			o.Stall.CatchUpFraction = 0
		},
	}
	for name, edit := range variants {
		l := defaultTorque(t, edit)
		for _, m := range []float64{0.5, 0.55, 0.75, 0.9, 1.0, 1.2} {
			for _, u := range []float64{0, 0.5, 0.97} {
				ages := []float64{0.05, 0.3, 0.9, 1.05, 3, 8}
				for i, want := range integrate(l, m, u, ages) {
					age := ages[i]
					got, ok := l.PeriodAt(m, age, u)
					require.True(t, ok)
					assert.InDelta(t, 1, got/want, 2e-4, "%s: m=%g u=%g age=%g: closed %g numeric %g", name, m, u, age, got, want)
				}
			}
		}
	}
}

func TestTorqueClusterSequences(t *testing.T) {
	// From memory of rotation sequences of open clusters (slow sequences
	// read off period–color diagrams in the literature); the wide ranges
	// reflect that. The median initial period stands for the slow sequence.
	l := defaultTorque(t, nil)
	check := func(ageGyr, mLo, mHi, pLo, pHi float64) {
		t.Helper()
		for m := mLo; m <= mHi+1e-9; m += 0.05 {
			p, ok := l.PeriodAt(m, ageGyr, 0.5)
			require.True(t, ok)
			assert.GreaterOrEqual(t, p, pLo, "%g M☉ at %g Gyr", m, ageGyr)
			assert.LessOrEqual(t, p, pHi, "%g M☉ at %g Gyr", m, ageGyr)
		}
	}
	check(0.125, 0.7, 1.0, 3, 8)  // ~125 Myr cluster: G–K slow sequence at 3–8 d
	check(0.65, 0.7, 0.8, 10, 15) // ~650 Myr cluster: K dwarfs at 10–15 d
	check(0.70, 0.7, 0.8, 10, 15)
	check(2.5, 0.8, 0.8, 20, 30) // ~2.5–3 Gyr cluster: early K near 20–30 d
	check(3.0, 0.8, 0.8, 20, 30)
}

func TestWeakenedBraking(t *testing.T) {
	on := defaultTorque(t, func(o *TorqueOptions) { o.RoCritOverSolar = 1.1 })
	off := defaultTorque(t, nil)
	pOn, _ := on.PeriodAt(1, 8, 0.5)
	pOff, _ := off.PeriodAt(1, 8, 0.5)
	// Idea from van Saders et al. (2016), Nature 529, 181: beyond Ro_crit a
	// solar twin stops spinning down, so at 8 Gyr it rotates no slower than
	// when it crossed Ro_crit = 1.1 Ro☉, i.e. 1.1 × 25.4 d, and faster than
	// under standard braking.
	assert.LessOrEqual(t, pOn, 1.1*25.4*(1+1e-12))
	assert.InDelta(t, 1.1*25.4, pOn, 1e-9, "crossed before 8 Gyr, so frozen at Ro_crit")
	assert.Less(t, pOn, pOff)
	// Before the crossing both laws agree.
	a, _ := on.PeriodAt(1, 3, 0.5)
	b, _ := off.PeriodAt(1, 3, 0.5)
	assert.InDelta(t, a, b, 1e-9*b)
	// A star born beyond Ro_crit never brakes.
	p, _ := on.PeriodAt(1.35, 5, 1)
	assert.Equal(t, on.Options().Initial.Quantile(1), p)
}

// The weakened-braking threshold is a multiple of Ro☉ in the law's own
// turnover scale, so choosing Cranmer & Saar (2011) or Wright et al.
// (2018) does not move it for the Sun: a solar twin freezes at the same
// period in both (van Saders et al. 2016, Nature 529, 181, quote
// Ro_crit ≈ Ro☉ in their model's scale [memory]). An absolute Ro_crit
// would not: the two scales put Ro☉ at 1.84 and 1.97.
func TestWeakenedBrakingThresholdFollowsTheTurnoverScale(t *testing.T) {
	teff := func(m float64) float64 { return 5772 * math.Pow(m, 0.55) }
	wright := defaultTorque(t, func(o *TorqueOptions) { o.RoCritOverSolar = 1.2 })
	cs := defaultTorque(t, func(o *TorqueOptions) {
		o.RoCritOverSolar = 1.2
		o.Turnover = CranmerSaar2011
		o.TeffOfMass = teff
	})
	// Source: Wright et al. (2018) and Cranmer & Saar (2011) fits at 1 M☉
	// and 5772 K [memory]: τ_c☉ = 13.80 d and 12.87 d.
	assert.InDelta(t, 25.4/13.80, wright.SolarRossby(), 0.005)
	assert.InDelta(t, 25.4/12.87, cs.SolarRossby(), 0.005)
	for _, l := range []*TorqueLaw{wright, cs} {
		p, ok := l.PeriodAt(1, 10, 0.5)
		require.True(t, ok)
		assert.InDelta(t, 1.2*25.4, p, 1e-9, "%s: frozen at 1.2 P☉", l.Options().Turnover)
		// Other masses freeze at 1.2 Ro☉ in the law's own τ_c.
		tau, _ := l.turnover(0.8)
		p, ok = l.PeriodAt(0.8, 13, 0.5)
		require.True(t, ok)
		assert.InDelta(t, 1.2*l.SolarRossby()*tau, p, 1e-9, "%s at 0.8 M☉", l.Options().Turnover)
	}
}

// Source: Curtis et al. (2019), ApJ 879, 49 [memory]: K dwarfs of about
// 4000–5000 K (0.61–0.80 M☉ in the mean dwarf sequence of Pecaut &
// Mamajek 2013) rotate at the same periods in an open cluster of about
// 1 Gyr as in one of about 0.65 Gyr, while G dwarfs (5400–5900 K,
// 0.9–1.05 M☉) have spun down between them; tolerances reflect memory.
func TestStall(t *testing.T) {
	stall := defaultTorque(t, func(o *TorqueOptions) { o.Stall.Enabled = true })
	plain := defaultTorque(t, nil)
	for _, m := range []float64{0.61, 0.65, 0.7, 0.75} {
		a, _ := stall.PeriodAt(m, 0.65, 0.5)
		b, _ := stall.PeriodAt(m, 1.0, 0.5)
		assert.InDelta(t, 1, b/a, 0.01, "%g M☉ holds its period from 0.65 to 1 Gyr", m)
	}
	a, _ := stall.PeriodAt(0.8, 0.65, 0.5)
	b, _ := stall.PeriodAt(0.8, 1.0, 0.5)
	assert.InDelta(t, 1, b/a, 0.05, "0.8 M☉ (5000 K), at the edge, almost holds")
	for _, m := range []float64{0.9, 0.95, 1.0, 1.05} {
		a, _ := stall.PeriodAt(m, 0.65, 0.5)
		b, _ := stall.PeriodAt(m, 1.0, 0.5)
		assert.Greater(t, b/a, 1.1, "%g M☉ keeps spinning down", m)
	}

	// After the catch-up every star is back on its unpaused track, so the
	// solar calibration is untouched.
	o := stall.Options().Stall
	for _, m := range []float64{0.55, 0.7, 0.9, 1.0} {
		after := o.StartGyr(m) + o.DurationGyr(m)*(1+o.CatchUpFraction)
		for _, age := range []float64{after + 1e-9, after + 0.5, 4.57} {
			p, _ := stall.PeriodAt(m, age, 0.5)
			q, _ := plain.PeriodAt(m, age, 0.5)
			assert.InDelta(t, q, p, 1e-9*q, "%g M☉ at %g Gyr", m, age)
		}
	}
	assert.InDelta(t, plain.SolarRatePerGyr(), stall.SolarRatePerGyr(), 1e-12*plain.SolarRatePerGyr())

	// Strength: full for the K dwarfs, tapering to nothing at both ends.
	for _, m := range []float64{0.6, 0.65, 0.7, 0.75} {
		assert.Equal(t, 1.0, o.Strength(m), "%g M☉", m)
	}
	for _, m := range []float64{0.3, 0.5, 1.1, 1.3} {
		assert.Zero(t, o.Strength(m), "%g M☉", m)
		assert.Zero(t, o.DurationGyr(m), "%g M☉", m)
	}
	assert.InDelta(t, 0.5, o.Strength(math.Sqrt(0.5*0.6)), 1e-12, "half strength half way in ln m")
	assert.InDelta(t, 0.5, o.Strength(math.Sqrt(0.75*1.1)), 1e-12)
	prev := 1.0
	for m := 0.76; m < 1.1; m += 0.01 {
		h := o.Strength(m)
		assert.Less(t, h, prev, "strength falls toward the G dwarfs (%g M☉)", m)
		prev = h
	}
}

// unpaused is the period of l's star without the stall, with l's own
// calibrated torque (a stall that touches 1 M☉ for good moves it).
func unpaused(l *TorqueLaw, m, ageGyr, u float64) float64 {
	tau, _ := l.turnover(m)
	k := l.kSunPerGy * l.massScale(m, l.opts.RadiusOfMass(m))
	return l.evolve(k, tau/l.tauSunD, l.opts.Initial.Quantile(u), ageGyr-l.opts.StartAgeGyr)
}

// Without a catch-up the stalled star resumes braking from where it
// paused and stays behind its unpaused track by the time it lost, h × the
// pause.
func TestStallWithoutCatchUp(t *testing.T) {
	stall := defaultTorque(t, func(o *TorqueOptions) { o.Stall.Enabled = true; o.Stall.CatchUpFraction = 0 })
	o := stall.Options().Stall
	for _, m := range []float64{0.7, 0.9} {
		end := o.StartGyr(m) + o.DurationGyr(m)
		held, _ := stall.PeriodAt(m, end, 0.5)
		after, _ := stall.PeriodAt(m, end+1, 0.5)
		shifted := unpaused(stall, m, end+1-o.Strength(m)*o.DurationGyr(m), 0.5)
		assert.Greater(t, after, held)
		assert.InDelta(t, shifted, after, 1e-12*after, "%g M☉", m)
	}
}

// With a catch-up the stalled star rejoins the unpaused track after the
// pause, passing quickly through the periods in between: the prescribed
// fast transit that opens a gap above the stalled sequence.
func TestStallCatchUp(t *testing.T) {
	stall := defaultTorque(t, func(o *TorqueOptions) { o.Stall.Enabled = true; o.Stall.CatchUpFraction = 0.25 })
	plain := defaultTorque(t, nil)
	o := stall.Options().Stall
	const m = 0.7
	s, d := o.StartGyr(m), o.DurationGyr(m)
	c := 0.25 * d
	// Before the pause and after the catch-up: identical to the plain law.
	for _, age := range []float64{0.5 * s, s + d + c + 0.01, s + d + c + 2} {
		a, _ := stall.PeriodAt(m, age, 0.5)
		b, _ := plain.PeriodAt(m, age, 0.5)
		assert.InDelta(t, b, a, 1e-9*b, "age %g", age)
	}
	// Continuous at both ends of the catch-up.
	p0, _ := stall.PeriodAt(m, s+d, 0.5)
	p0b, _ := stall.PeriodAt(m, s+d+1e-9, 0.5)
	assert.InDelta(t, p0, p0b, 1e-6*p0)
	// During the catch-up the period grows (1 + 1/c) times faster than
	// the plain law's at the same effective age.
	mid := s + d + c/2
	pa, _ := stall.PeriodAt(m, mid, 0.5)
	pb, _ := stall.PeriodAt(m, mid+1e-4, 0.5)
	eff := s + (mid-s-d)*(d+c)/c
	qa, _ := plain.PeriodAt(m, eff, 0.5)
	qb, _ := plain.PeriodAt(m, eff+1e-4, 0.5)
	assert.InDelta(t, (1+1/0.25)*(qb-qa), pb-pa, 0.02*(pb-pa))

	bad := DefaultTorqueOptions()
	bad.Stall.Enabled = true
	bad.Stall.CatchUpFraction = -1
	_, err := NewTorqueLaw(bad)
	assert.ErrorContains(t, err, "CatchUpFraction")
}

// inversionMassMsun is the largest mass on the grid where the law's
// sequence at ageGyr and quantile u is not monotonic: below it the stars
// are still leaving saturation, and the slow-rotator sequence has not yet
// reached them (in young clusters low-mass stars still rotate fast).
func inversionMassMsun(l *TorqueLaw, ageGyr, u float64) float64 {
	last := 0.0
	prev, _ := l.PeriodAt(0.2, ageGyr, u)
	for m := 0.2025; m <= 1.3; m += 0.0025 {
		p, _ := l.PeriodAt(m, ageGyr, u)
		if p > prev {
			last = m
		}
		prev = p
	}
	return last
}

// Common practice, no source: on the slow-rotator sequence a lower-mass
// star never spins faster than a higher-mass star of the same age and
// birth quantile (the sequence of every open cluster rises toward lower
// mass). The stall must not break that: at every age from 0.1 to 10 Gyr
// and for the 25th, 50th and 75th percentile of initial periods, the
// stalled sequence is monotonic in mass from just above the plain law's
// own low-mass inversion (see inversionMassMsun) up to 1.3 M☉. The
// previous stall broke it (at 1 Gyr 0.8 M☉ at 10.7 d under 1.0 M☉ at
// 11.9 d).
func TestStallKeepsSequenceMonotonic(t *testing.T) {
	stall := defaultTorque(t, func(o *TorqueOptions) { o.Stall.Enabled = true })
	plain := defaultTorque(t, nil)
	checked := 0
	for _, u := range []float64{0.25, 0.5, 0.75} {
		for i := 10; i <= 1000; i++ {
			age := float64(i) / 100
			lo := inversionMassMsun(plain, age, u) + 0.005
			prev, _ := stall.PeriodAt(lo, age, u)
			for m := lo + 0.0025; m <= 1.3; m += 0.0025 {
				p, ok := stall.PeriodAt(m, age, u)
				require.True(t, ok)
				if p > prev {
					t.Fatalf("u %g, %g Gyr: %g M☉ at %.4f d spins slower than %g M☉ at %.4f d", u, age, m, p, m-0.0025, prev)
				}
				prev = p
				checked++
			}
		}
	}
	assert.Greater(t, checked, 500_000)
	// The case: at 1 Gyr the G dwarfs lie below the K dwarfs.
	var ps []float64
	for _, m := range []float64{0.7, 0.8, 0.9, 1.0} {
		p, _ := stall.PeriodAt(m, 1, 0.5)
		ps = append(ps, p)
	}
	assert.True(t, slices.IsSortedFunc(ps, func(a, b float64) int { return cmpDesc(a, b) }), "%v", ps)
}

func cmpDesc(a, b float64) int {
	switch {
	case a > b:
		return -1
	case a < b:
		return 1
	}
	return 0
}

func TestInitialPeriods(t *testing.T) {
	lu := InitialPeriods{Shape: LogUniform, MinD: 1, MaxD: 16}
	require.NoError(t, lu.Validate())
	assert.InDelta(t, 1, lu.Quantile(0), 1e-12)
	assert.InDelta(t, 16, lu.Quantile(1), 1e-12)
	assert.InDelta(t, 4, lu.Median(), 1e-12)
	assert.InDelta(t, 1, lu.Quantile(-3), 1e-12, "u clamped")

	ln := InitialPeriods{Shape: LogNormal, MedianD: 2, SigmaDex: 0.3}
	require.NoError(t, ln.Validate())
	assert.InDelta(t, 2, ln.Median(), 1e-12)
	assert.InDelta(t, 2*math.Pow(10, -0.9), ln.Quantile(0), 1e-9, "truncated at −3σ")
	assert.InDelta(t, 2*math.Pow(10, 0.9), ln.Quantile(1), 1e-9, "truncated at +3σ")
	// Invert by hand: the truncated CDF at the returned period is u.
	phi := func(z float64) float64 { return 0.5 * math.Erfc(-z/math.Sqrt2) }
	for _, u := range []float64{0.01, 0.3, 0.841345, 0.99} {
		z := math.Log10(ln.Quantile(u)/2) / 0.3
		assert.InDelta(t, u, (phi(z)-phi(-3))/(phi(3)-phi(-3)), 1e-9)
	}
	prev := 0.0
	for u := 0.0; u <= 1; u += 0.01 {
		p := ln.Quantile(u)
		assert.Greater(t, p, prev)
		prev = p
	}
	assert.Error(t, InitialPeriods{Shape: LogUniform, MinD: 5, MaxD: 2}.Validate())
	assert.Error(t, InitialPeriods{Shape: LogNormal, MedianD: -1}.Validate())
	assert.Error(t, InitialPeriods{}.Validate())
}

func TestTorqueOptionErrors(t *testing.T) {
	cases := map[string]func(*TorqueOptions){
		"Turnover":        func(o *TorqueOptions) { o.Turnover = 0 },
		"RadiusOfMass":    func(o *TorqueOptions) { o.RadiusOfMass = nil },
		"TeffOfMass":      func(o *TorqueOptions) { o.Turnover = CranmerSaar2011 },
		"TorqueExponent":  func(o *TorqueOptions) { o.TorqueExponent = 0 },
		"SaturationRatio": func(o *TorqueOptions) { o.SaturationRatio = 0.5 },
		"GyrationMassExp": func(o *TorqueOptions) { o.GyrationMassExp = math.NaN() },
		"StartAgeGyr":     func(o *TorqueOptions) { o.StartAgeGyr = -1 },
		"SolarAgeGyr":     func(o *TorqueOptions) { o.SolarAgeGyr = 0.005 },
		"SolarPeriodD":    func(o *TorqueOptions) { o.SolarPeriodD = 1 },
		"RoCritOverSolar": func(o *TorqueOptions) { o.RoCritOverSolar = 0.9 },
		"initial":         func(o *TorqueOptions) { o.Initial.SigmaDex = -1 },
		"CutoffMsun": func(o *TorqueOptions) {
			o.Stall.Enabled = true
			o.Stall.CutoffMsun = 0.5
		},
		"DurationMassSlope": func(o *TorqueOptions) {
			o.Stall.Enabled = true
			o.Stall.DurationMassSlope = -1
		},
		"RadiusOfMass(1)": func(o *TorqueOptions) { o.RadiusOfMass = func(float64) float64 { return 0 } },
	}
	for want, edit := range cases {
		o := DefaultTorqueOptions()
		edit(&o)
		l, err := NewTorqueLaw(o)
		require.Error(t, err, want)
		assert.Nil(t, l)
		if want != "initial" && want != "SolarPeriodD" {
			assert.Contains(t, err.Error(), want)
		}
	}
	// A stall covering the Sun's whole life leaves nothing to calibrate.
	o := DefaultTorqueOptions()
	o.Stall = StallOptions{Enabled: true, PivotMsun: 0.8, StartGyrAtPivot: 0.005, DurationGyrAtPivot: 100, FullMinMsun: 0.1, FullMaxMsun: 1.5, CutoffMsun: 2}
	_, err := NewTorqueLaw(o)
	assert.ErrorContains(t, err, "calibrate")
}

func TestTorqueCranmerSaar(t *testing.T) {
	// A toy T_eff(M) only to exercise the T_eff-based turnover.
	teff := func(m float64) float64 { return 5772 * math.Pow(m, 0.55) }
	l := defaultTorque(t, func(o *TorqueOptions) {
		o.Turnover = CranmerSaar2011
		o.TeffOfMass = teff
	})
	assert.InDelta(t, 25.4/12.88, l.SolarRossby(), 0.01)
	p, ok := l.PeriodAt(1, 4.57, 0.5)
	require.True(t, ok)
	assert.InDelta(t, 25.4, p, 1e-6)
	_, ok = l.PeriodAt(0.3, 1, 0.5) // T_eff ≈ 3000 K: outside the fit
	assert.False(t, ok)
}

func TestTorqueRanges(t *testing.T) {
	l := defaultTorque(t, nil)
	for _, s := range []Star{{MassMsun: 1.5, AgeGyr: 1}, {MassMsun: 0.05, AgeGyr: 1}, {MassMsun: 1, AgeGyr: 0}, {MassMsun: 1, AgeGyr: math.NaN()}} {
		p, ok := l.Period(s, rand.New(rand.NewPCG(1, 1)))
		assert.False(t, ok, "%+v", s)
		assert.True(t, math.IsNaN(p))
	}
	// Before the disk lets go, a star keeps its initial period.
	p, ok := l.PeriodAt(0.8, 0.005, 0.3)
	require.True(t, ok)
	assert.Equal(t, l.Options().Initial.Quantile(0.3), p)
}

func TestHotPathsDoNotAllocate(t *testing.T) {
	l := defaultTorque(t, func(o *TorqueOptions) {
		o.RoCritOverSolar = 1.1
		o.Stall.Enabled = true
	})
	g := Barnes2007()
	r := rand.New(rand.NewPCG(1, 2))
	s := Star{MassMsun: 0.8, AgeGyr: 2, BV: 0.9, TeffK: 5000}
	assert.Zero(t, testing.AllocsPerRun(100, func() { l.Period(s, r) }))
	assert.Zero(t, testing.AllocsPerRun(100, func() { g.Period(s, r) }))
	assert.Zero(t, testing.AllocsPerRun(100, func() { Wright2018.Rossby(10, s) }))
}
