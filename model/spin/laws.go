package spin

import "math"

// The project's spin-down laws, registered once here (see LawSpec).
func init() {
	youngEmpirical := func(youngestGyr float64) []string {
		if youngestGyr < gyroMinAgeGyr {
			return []string{"empirical gyrochronology laws are calibrated on stars older than about 0.1 Gyr; younger stars get no period"}
		}
		return nil
	}
	for _, l := range []struct {
		law   GyroLaw
		label string
	}{
		{Barnes2007(), "Barnes (2007)"},
		{MamajekHillenbrand2008(), "Mamajek & Hillenbrand (2008)"},
		{Angus2015(), "Angus et al. (2015)"},
	} {
		law := l.law
		MustRegister(LawSpec{
			Name: law.LawName, Label: l.label,
			Tables:  []OptionTable{gyroTable(law)},
			Borrows: []string{stallTable},
			New:     func(o Options, _ Env) (Law, error) { return law.withCoefficients(o) },
			Caveats: youngEmpirical,
		})
	}
	MustRegister(torqueSpec)
}

var inf = math.Inf(1)

// gyroTable is an empirical law's option table, [spin.<law>]: its four
// coefficients, the published values by default. They exist to be moved:
// fitted as nuisance parameters ([[compare.free]] with prior = "gaussian",
// whose default width is the published uncertainty) or swept.
func gyroTable(g GyroLaw) OptionTable {
	return OptionTable{Name: g.LawName, Doc: "coefficients of P = a (B−V − c)^b t^n, t in Myr; the published values by default", Keys: []Key{
		{Name: "a", Doc: "period scale (d)", Default: g.A, Min: 0, MinOpen: true, Max: 10},
		{Name: "b", Doc: "color exponent", Default: g.B, Min: 0, MinOpen: true, Max: 2},
		{Name: "c", Doc: "color zero point (mag)", Default: g.C, Min: 0, Max: 1, MaxOpen: true},
		{Name: "n", Doc: "age exponent", Default: g.N, Min: 0, MinOpen: true, Max: 1.5},
	}}
}

// withCoefficients returns the law with the coefficients of its option
// table, and the stall of [spin.stall] when that is switched on. Its
// accepted colors stay above c, where the relation runs to zero period.
func (g GyroLaw) withCoefficients(o Options) (Law, error) {
	g.A, g.B, g.C, g.N = o.Float(g.LawName, "a"), o.Float(g.LawName, "b"), o.Float(g.LawName, "c"), o.Float(g.LawName, "n")
	g.Stall = stallFromOptions(o)
	if g.C+0.05 > g.MinBV {
		g.MinBV = g.C + 0.05
	}
	if err := g.Validate(); err != nil {
		return nil, err
	}
	return g, nil
}

// PublishedUncertainty returns the published 1σ uncertainty of option key
// of law's option table, where the law has one (the empirical laws'
// coefficients).
func PublishedUncertainty(law, key string) (float64, bool) {
	spec, ok := Lookup(law)
	if !ok {
		return 0, false
	}
	l, err := spec.New(Defaults{}, Env{Turnover: Wright2018})
	if err != nil {
		return 0, false
	}
	g, ok := l.(GyroLaw)
	if !ok {
		return 0, false
	}
	u, ok := map[string]float64{"a": g.Uncertainty.A, "b": g.Uncertainty.B, "c": g.Uncertainty.C, "n": g.Uncertainty.N}[key]
	return u, ok && u > 0
}

// torqueSpec is the wind-torque law with its two switchable features.
var torqueSpec = LawSpec{
	Name:  torqueName,
	Label: "wind torque",
	Tables: []OptionTable{
		{Name: "torque", Doc: "the wind-torque law with saturation", Keys: []Key{
			{Name: "solar_period_d", Doc: "calibration target at 4.57 Gyr, the Sun's Carrington (mid-latitude) sidereal period", Default: 25.4, Min: 0, MinOpen: true, Max: inf,
				Memory: "Carrington sidereal period, 25.38 d, of mid latitudes (equatorial sidereal ≈ 24.5 d, synodic ≈ 27.3 d)"},
			{Name: "saturation_chi", Doc: "Ro_sun / Ro_sat", Default: 10.0, Min: 1, Max: inf, Why: "chi = Ro_sun / Ro_sat", Memory: "Matt et al. (2015)"},
			{Name: "initial_period_dist", Doc: "distribution of initial periods", Default: "lognormal", OneOf: []string{"log-uniform", "lognormal"}},
			{Name: "initial_period_min_d", Doc: "log-uniform: lower end", Default: 1.0, Min: 0, MinOpen: true, Max: inf},
			{Name: "initial_period_max_d", Doc: "log-uniform: upper end", Default: 10.0, Min: -inf, Max: inf, Above: "initial_period_min_d", AboveWhy: "empty period range"},
			{Name: "initial_period_median_d", Doc: "lognormal: median", Default: 2.0, Min: 0, MinOpen: true, Max: inf},
			{Name: "initial_period_sigma_dex", Doc: "lognormal: width", Default: 0.3, Min: 0, Max: inf},
			{Name: "start_age_gyr", Doc: "age the initial periods refer to", Default: 0.01, Min: 0, Max: 1, MaxOpen: true, Why: "the initial periods belong to young stars"},
		}},
		{Name: stallTable, Doc: "a spin-down stall: braking pauses for K dwarfs of 4000-5000 K, weakening toward the G dwarfs and early M dwarfs (see spin.StallOptions); a starting point for fits, not a calibration", Switch: "enabled", SkipWhenOff: true, Keys: []Key{
			{Name: "enabled", Default: false},
			{Name: "start_gyr_at_0p8msun", Doc: "pause start age for 0.8 Msun", Default: 0.65, Min: 0, MinOpen: true, Max: inf, Memory: "Curtis et al. (2019)"},
			{Name: "duration_gyr_at_0p8msun", Doc: "pause length for 0.8 Msun", Default: 0.35, Min: 0, MinOpen: true, Max: inf, Memory: "Curtis et al. (2019)"},
			{Name: "start_mass_slope", Doc: "start ∝ (m/0.8)^slope; 0 keeps one window, which keeps the sequence monotonic", Default: 0.0, Min: -10, Max: 0, Why: "the stall does not start earlier toward low mass"},
			{Name: "duration_mass_slope", Doc: "duration ∝ (m/0.8)^slope", Default: 0.0, Min: -10, Max: 0, Why: "the stall does not shorten toward low mass"},
			{Name: "mass_min_msun", Doc: "no stall at or below this mass", Default: 0.5, Min: 0, Max: 120},
			{Name: "full_mass_min_msun", Doc: "full-strength pause from this mass", Default: 0.6, Min: 0, Max: 120,
				Above: "mass_min_msun", AboveWhy: "the pause strengthens from mass_min_msun up to full_mass_min_msun"},
			{Name: "full_mass_max_msun", Doc: "to this mass", Default: 0.75, Min: 0, Max: 120,
				Above: "full_mass_min_msun", AboveWhy: "empty full-strength mass range"},
			{Name: "mass_max_msun", Doc: "no stall at or above this mass", Default: 1.1, Min: 0, Max: 120,
				Above: "full_mass_max_msun", AboveWhy: "the pause weakens from full_mass_max_msun up to mass_max_msun"},
			{Name: "catch_up_fraction", Doc: "after the pause the star regains the lost time over this fraction of the pause; 0 = stays behind", Default: 0.25, Min: 0, Max: 10, Why: "0 = never catch up"},
		}},
		{Name: "weakened_braking", Doc: "weakened magnetic braking above a critical Rossby number, a multiple of the Sun's in spin.turnover's own scale", Switch: "enabled", Keys: []Key{
			{Name: "enabled", Default: false},
			{Name: "ro_crit_over_solar", Doc: "critical Rossby number in units of the Sun's", Default: 1.0, Min: 1, Max: inf,
				Why: "below 1 the Sun would stop braking before it reaches its period", Memory: "van Saders et al. (2016): Ro_crit ≈ Ro_sun"},
		}, Retired: map[string]string{
			"ro_crit": "the threshold is now ro_crit_over_solar, a multiple of the Sun's Rossby number in spin.turnover's own scale " +
				"(so that choosing the turnover time does not move it); ro_crit = R was R/1.84 Ro_sun with turnover = \"wright2018\" " +
				"and R/1.97 Ro_sun with \"cranmer-saar2011\" (solar_period_d = 25.4): for the old default 2.0 write ro_crit_over_solar = 1.09 or 1.01, " +
				"or 1.0, the value van Saders et al. (2016) quote",
		}},
	},
	New: newTorqueFromOptions,
	Caveats: func(float64) []string {
		return []string{"the torque law keeps the moment of inertia constant: periods of stars younger than about 0.1 Gyr (no pre-main-sequence contraction) are crude"}
	},
	Variants: []Variant{
		{Label: "wind torque"},
		{Label: "wind torque, weakened braking", On: []string{"weakened_braking"}},
		{Label: "wind torque, stalled spin-down", On: []string{"stall"}},
	},
}

// newTorqueFromOptions builds the torque law from its option tables. The
// torque scalings were tuned with R = M^0.8 (PowerLawRadius); env supplies
// T_eff for the Cranmer & Saar turnover time.
func newTorqueFromOptions(opt Options, env Env) (Law, error) {
	o := DefaultTorqueOptions()
	o.Turnover = env.Turnover
	if env.TeffOfMass != nil {
		o.TeffOfMass = env.TeffOfMass
	}
	o.SolarPeriodD = opt.Float("torque", "solar_period_d")
	o.SaturationRatio = opt.Float("torque", "saturation_chi")
	o.StartAgeGyr = opt.Float("torque", "start_age_gyr")
	switch d := opt.String("torque", "initial_period_dist"); d {
	case "log-uniform":
		o.Initial = InitialPeriods{Shape: LogUniform, MinD: opt.Float("torque", "initial_period_min_d"), MaxD: opt.Float("torque", "initial_period_max_d")}
	case "lognormal":
		o.Initial = InitialPeriods{Shape: LogNormal, MedianD: opt.Float("torque", "initial_period_median_d"), SigmaDex: opt.Float("torque", "initial_period_sigma_dex")}
	default:
		return nil, &OptionError{Table: "torque", Key: "initial_period_dist", Msg: "want log-uniform or lognormal, not " + d}
	}
	if opt.Bool("weakened_braking", "enabled") {
		o.RoCritOverSolar = opt.Float("weakened_braking", "ro_crit_over_solar")
	}
	o.Stall = stallFromOptions(opt)
	return NewTorqueLaw(o)
}

// stallTable is the option table of the stall, [spin.stall]: the torque
// law's, borrowed by the empirical laws.
const stallTable = "stall"

// stallFromOptions returns the stall of [spin.stall], disabled when the
// table is switched off.
func stallFromOptions(opt Options) StallOptions {
	if !opt.Bool(stallTable, "enabled") {
		return StallOptions{}
	}
	// The scenario writes start ∝ (m/0.8)^slope; StallOptions writes
	// (m/0.8)^(−slope).
	f := func(key string) float64 { return opt.Float(stallTable, key) }
	return StallOptions{Enabled: true, PivotMsun: 0.8,
		StartGyrAtPivot: f("start_gyr_at_0p8msun"), DurationGyrAtPivot: f("duration_gyr_at_0p8msun"),
		StartMassSlope: -f("start_mass_slope"), DurationMassSlope: -f("duration_mass_slope"),
		MinMsun: f("mass_min_msun"), FullMinMsun: f("full_mass_min_msun"),
		FullMaxMsun: f("full_mass_max_msun"), CutoffMsun: f("mass_max_msun"),
		CatchUpFraction: f("catch_up_fraction")}
}

// OptionError is a bad option value, named by its table and key.
type OptionError struct {
	Table, Key, Msg string
}

func (e *OptionError) Error() string { return "spin." + e.Table + "." + e.Key + ": " + e.Msg }

// TypicalPeriod is the period of the star that started from the median
// initial period: the one a gyrochrone follows.
func (l *TorqueLaw) TypicalPeriod(s Star) (float64, bool) {
	return l.PeriodAt(s.MassMsun, s.AgeGyr, 0.5)
}
