package othermodel

import (
	"errors"
	"fmt"
	"math"
)

// GyroLaw is an empirical gyrochronology law P = A (B−V − C)^B t^N, with
// P in days, B−V the intrinsic color and t the age in Myr.
type GyroLaw struct {
	Name       string
	A, B, C, N float64
}

// Barnes2007 is the law of Barnes (2007), ApJ 669, 1167, with his fitted
// coefficients.
func Barnes2007() GyroLaw {
	return GyroLaw{Name: "barnes2007", A: 0.7725, B: 0.601, C: 0.4, N: 0.5189}
}

// Mamajek2008 is the law of Mamajek & Hillenbrand (2008), ApJ 687, 1264,
// with their revised coefficients.
func Mamajek2008() GyroLaw {
	return GyroLaw{Name: "mamajek2008", A: 0.407, B: 0.325, C: 0.495, N: 0.566}
}

// PeriodD returns the law's period in days for intrinsic color bv and age
// ageMyr, and false where the law has no period (B−V ≤ C or age ≤ 0).
func (g GyroLaw) PeriodD(bv, ageMyr float64) (float64, bool) {
	if !(bv > g.C) || !(ageMyr > 0) {
		return math.NaN(), false
	}
	return g.A * math.Pow(bv-g.C, g.B) * math.Pow(ageMyr, g.N), true
}

// Box is a top-hat burst: a constant extra rate between StartGyr and
// EndGyr (lookback) holding Fraction of all mass ever formed.
type Box struct {
	StartGyr, EndGyr, Fraction float64
}

// History is the star-formation history over lookback age τ ∈ [0, MaxAgeGyr]:
// a smooth rate ∝ 1 + RampSlope·τ/MaxAgeGyr (0 = constant; > 0 more stars
// long ago), plus an optional box burst that takes Box.Fraction of the mass.
type History struct {
	MaxAgeGyr float64
	RampSlope float64 // ≥ −1 so the rate stays ≥ 0
	Burst     *Box    // nil: smooth only
}

// SmoothHistory is the default null: a constant rate over 11 Gyr.
func SmoothHistory() History { return History{MaxAgeGyr: 11} }

// BoxBurst is SmoothHistory plus a box of full width widthGyr centred on
// ageGyr (so ageGyr is the burst age a test should recover) holding
// fraction of all mass formed.
func BoxBurst(ageGyr, widthGyr, fraction float64) History {
	h := SmoothHistory()
	h.Burst = &Box{StartGyr: ageGyr - widthGyr/2, EndGyr: ageGyr + widthGyr/2, Fraction: fraction}
	return h
}

// Survey is the invented survey's field and catalog cuts.
type Survey struct {
	LDeg, BDeg, RadiusDeg  float64 // cone centre (Galactic) and radius
	DistMaxPc              float64 // stars from 0 to this distance
	VMinMag, VMaxMag       float64 // apparent V range (bright, faint)
	BVMinMag, BVMaxMag     float64 // observed B−V range
	PeriodMinD, PeriodMaxD float64 // measured-period window
}

// ExampleSurvey returns the numbers of the project's example scenario
// (scenarios/examples/base.toml, which example:fit extends): the field
// cone, distance limit, magnitude limits, color cuts and the period
// window (2 × cadence to baseline / min_cycles). Update it when those
// examples change.
func ExampleSurvey() Survey {
	return Survey{
		LDeg: 197, BDeg: -34, RadiusDeg: 8, DistMaxPc: 1500,
		VMinMag: 10, VMaxMag: 16.5,
		BVMinMag: 0.45, BVMaxMag: 1.6,
		PeriodMinD: 2 * 0.03125, PeriodMaxD: 1000.0 / 3.0,
	}
}

// ExampleSunHeightPc is z☉ of the example scenario; the catalog reader adds
// the scenario's z☉ to d sin b, so the generator must place the Sun there.
const ExampleSunHeightPc = 20.8

// Detection is the survey's period-detection efficiency: a logistic in
// ln P around P50(B−V) = P50RefD·exp(P50ColorSlope·(B−V − 0.65)), times
// a logistic magnitude completeness around V50Mag, times MaxEfficiency.
type Detection struct {
	MaxEfficiency float64
	P50RefD       float64 // half-detection period at B−V = 0.65
	P50ColorSlope float64 // d ln P50 / d(B−V)
	LnPWidth      float64 // logistic width in ln P
	V50Mag        float64 // magnitude of half completeness
	VWidthMag     float64 // logistic width in V
}

// Efficiency is the detection probability of a star of true period
// periodD, observed color bv and apparent magnitude v.
func (d Detection) Efficiency(periodD, bv, v float64) float64 {
	p50 := d.P50RefD * math.Exp(d.P50ColorSlope*(bv-0.65))
	inP := 1 / (1 + math.Exp((math.Log(periodD)-math.Log(p50))/d.LnPWidth))
	inV := 1 / (1 + math.Exp((v-d.V50Mag)/d.VWidthMag))
	return d.MaxEfficiency * inP * inV
}

// Relations replaces the built-in mass relations: a diagnostic hook, so
// that a check can hand this model another relation table and see what
// the relations alone do to a fit, every other ingredient unchanged.
type Relations struct {
	Name string
	// Dwarf gives a main-sequence star's intrinsic B−V and M_V; ok false
	// outside the table (the star is drawn again).
	Dwarf func(massMsun float64) (bv, absMagV float64, ok bool)
	// LifetimeGyr is the main-sequence lifetime; older stars are removed.
	LifetimeGyr func(massMsun float64) float64
}

// Vertical replaces the exponential layers of the disk: a diagnostic
// hook like Relations, so that a check can hand this model another
// vertical structure and see what the disk alone does to a fit.
type Vertical struct {
	Name string
	// Accept is the probability of keeping a star of age ageGyr placed at
	// height zPc: the vertical density at (age, z) over a bound that no age
	// or height exceeds, so a value in [0, 1]. Its integral over z at each
	// age must be the same for every age (the history, not the disk, sets
	// how many stars of each age there are).
	Accept func(ageGyr, zPc float64) float64
}

// Config is every ingredient of the model. DefaultConfig fills it.
type Config struct {
	Stars   int // catalog rows to collect
	History History
	Survey  Survey

	// Stars: Salpeter-type IMF dN/dM ∝ M^−IMFSlope on [MassMinMsun, MassMaxMsun].
	IMFSlope, MassMinMsun, MassMaxMsun float64

	Gyro             GyroLaw
	Stall            *Stall     // nil: the law's clock never pauses
	Relations        *Relations // nil: the built-in relations (relations.go)
	PeriodScatterDex float64    // intrinsic lognormal scatter about the law
	Detection        Detection

	// Measurement.
	PeriodErrRel   float64 // Gaussian relative period error
	HalfAliasProb  float64 // share of detected periods reported at P/2
	ColorErrMag    float64 // Gaussian B−V error
	MagErrMag      float64 // Gaussian V error
	ParallaxErrMas float64 // Gaussian parallax error

	// Disk and dust.
	Vertical                  *Vertical // nil: the exponential layers below
	SunRadiusKpc, SunHeightPc float64
	ScaleLengthKpc            float64 // radial exponential
	ScaleHeight0Pc            float64 // h(τ) = h0 (1 + τ/τ1)^β
	ScaleHeightTau1Gyr        float64
	ScaleHeightBeta           float64
	AVPerKpc                  float64 // uniform extinction along the line of sight
	RV                        float64 // A_V / E(B−V)
}

// DefaultConfig returns the model with the example survey, a constant
// history, 24,000 catalog stars (the demo catalog's size) and the Barnes
// (2007) law.
func DefaultConfig() Config {
	return Config{
		Stars:   24000,
		History: SmoothHistory(),
		Survey:  ExampleSurvey(),

		IMFSlope: 2.35, MassMinMsun: 0.4, MassMaxMsun: 1.4,

		Gyro:             Barnes2007(),
		PeriodScatterDex: 0.08,
		Detection: Detection{MaxEfficiency: 0.95, P50RefD: 20, P50ColorSlope: 1.5,
			LnPWidth: 0.25, V50Mag: 15.3, VWidthMag: 0.25},

		PeriodErrRel: 0.02, HalfAliasProb: 0.01,
		ColorErrMag: 0.01, MagErrMag: 0.01, ParallaxErrMas: 0.02,

		SunRadiusKpc: 8.2, SunHeightPc: ExampleSunHeightPc,
		ScaleLengthKpc: 3.0,
		ScaleHeight0Pc: 70, ScaleHeightTau1Gyr: 1, ScaleHeightBeta: 0.7,
		AVPerKpc: 0.25, RV: 3.1,
	}
}

// Validate reports the first value that would make the generator fail or
// loop forever, naming the field and what would be right.
func (c Config) Validate() error {
	if c.Stall != nil {
		if err := c.Stall.validate(); err != nil {
			return err
		}
	}
	if c.Vertical != nil && c.Vertical.Accept == nil {
		return fmt.Errorf("othermodel: Vertical %q needs Accept", c.Vertical.Name)
	}
	if c.Relations != nil && (c.Relations.Dwarf == nil || c.Relations.LifetimeGyr == nil) {
		return fmt.Errorf("othermodel: Relations %q needs both Dwarf and LifetimeGyr", c.Relations.Name)
	}
	h, s := c.History, c.Survey
	switch {
	case c.Stars < 1:
		return fmt.Errorf("othermodel: Stars = %d, want ≥ 1", c.Stars)
	case !(h.MaxAgeGyr > 0):
		return fmt.Errorf("othermodel: History.MaxAgeGyr = %g, want > 0", h.MaxAgeGyr)
	case !(h.RampSlope >= -1):
		return fmt.Errorf("othermodel: History.RampSlope = %g, want ≥ −1 (rate must stay ≥ 0)", h.RampSlope)
	case h.Burst != nil && !(h.Burst.StartGyr >= 0 && h.Burst.EndGyr > h.Burst.StartGyr && h.Burst.EndGyr <= h.MaxAgeGyr):
		return fmt.Errorf("othermodel: burst box [%g, %g] Gyr must satisfy 0 ≤ start < end ≤ MaxAgeGyr = %g", h.Burst.StartGyr, h.Burst.EndGyr, h.MaxAgeGyr)
	case h.Burst != nil && !(h.Burst.Fraction >= 0 && h.Burst.Fraction < 1):
		return fmt.Errorf("othermodel: burst Fraction = %g, want in [0, 1)", h.Burst.Fraction)
	case !(s.RadiusDeg > 0 && s.RadiusDeg <= 90 && s.DistMaxPc > 0):
		return errors.New("othermodel: Survey needs 0 < RadiusDeg ≤ 90 and DistMaxPc > 0")
	case !(s.VMaxMag > s.VMinMag && s.BVMaxMag > s.BVMinMag && s.PeriodMaxD > s.PeriodMinD && s.PeriodMinD >= 0):
		return errors.New("othermodel: Survey ranges (V, B−V, period) need max > min and PeriodMinD ≥ 0")
	case !(c.MassMinMsun > 0 && c.MassMaxMsun > c.MassMinMsun && c.IMFSlope != 1):
		return errors.New("othermodel: IMF needs 0 < MassMinMsun < MassMaxMsun and IMFSlope ≠ 1")
	case !(c.Gyro.A > 0 && c.Gyro.N > 0):
		return fmt.Errorf("othermodel: gyrochronology law %q needs A > 0 and N > 0", c.Gyro.Name)
	case !(c.Detection.MaxEfficiency > 0 && c.Detection.LnPWidth > 0 && c.Detection.VWidthMag > 0 && c.Detection.P50RefD > 0):
		return errors.New("othermodel: Detection needs MaxEfficiency, P50RefD, LnPWidth and VWidthMag > 0")
	case c.PeriodScatterDex < 0 || c.PeriodErrRel < 0 || c.ColorErrMag < 0 || c.MagErrMag < 0 || c.ParallaxErrMas < 0:
		return errors.New("othermodel: scatters and errors must be ≥ 0")
	case !(c.HalfAliasProb >= 0 && c.HalfAliasProb < 1):
		return fmt.Errorf("othermodel: HalfAliasProb = %g, want in [0, 1)", c.HalfAliasProb)
	case !(c.ScaleLengthKpc > 0 && c.ScaleHeight0Pc > 0 && c.ScaleHeightTau1Gyr > 0 && c.SunRadiusKpc > s.DistMaxPc/1000):
		return errors.New("othermodel: disk needs positive scales and SunRadiusKpc beyond the field's reach")
	case c.AVPerKpc < 0 || !(c.RV > 0):
		return errors.New("othermodel: dust needs AVPerKpc ≥ 0 and RV > 0")
	}
	return nil
}
