package spin

import (
	"fmt"
	"math"
	"math/rand/v2"
)

// TorqueOptions configure TorqueLaw. Start from DefaultTorqueOptions and
// change what the scenario sets; NewTorqueLaw checks every field.
type TorqueOptions struct {
	// Turnover is the τ_c prescription that defines the Rossby number of
	// saturation and of weakened braking.
	Turnover TurnoverTime
	// RadiusOfMass gives the main-sequence radius (R☉) of a star of given
	// mass; the caller passes its stellar relations so this package does not
	// depend on them. PowerLawRadius is a stand-in.
	RadiusOfMass func(massMsun float64) float64
	// TeffOfMass gives T_eff (K) of a star of given mass. Needed only when
	// Turnover is CranmerSaar2011, whose τ_c depends on T_eff: the torque
	// law is a function of mass, so that one star's history does not hinge
	// on the scatter of its observed color.
	TeffOfMass func(massMsun float64) float64

	// TorqueExponent is p in the unsaturated torque ∝ τ_c^p Ω^(p+1);
	// Matt et al. (2015, ApJL 799, L23) take p = 2 [memory], which gives
	// Skumanich's P ∝ t^(1/2).
	TorqueExponent float64
	// SaturationRatio is χ = Ro☉/Ro_sat; below Ro_sat the torque grows only
	// linearly with Ω. Matt et al. (2015): χ = 10 [memory].
	SaturationRatio float64
	// TorqueRadiusExp and TorqueMassExp give the torque scale
	// T0 ∝ R^TorqueRadiusExp M^TorqueMassExp; Matt et al. (2015) quote
	// R^3.1 M^0.5 [memory].
	TorqueRadiusExp float64
	TorqueMassExp   float64
	// GyrationMassExp sets the mass dependence of the squared radius of
	// gyration, k² ∝ M^GyrationMassExp, in I = k² M R². Only the mass
	// dependence matters: the solar value cancels in the calibration.
	GyrationMassExp float64

	// Initial is the period distribution at StartAgeGyr, the end of disk
	// locking; before that a star keeps its initial period.
	Initial     InitialPeriods
	StartAgeGyr float64

	// SolarPeriodD and SolarAgeGyr calibrate the torque: a 1 M☉ star with
	// the median initial period reaches SolarPeriodD at SolarAgeGyr. The
	// default 25.4 d is the Sun's Carrington (mid-latitude) sidereal period.
	SolarPeriodD float64
	SolarAgeGyr  float64

	// RoCritOverSolar, if positive, switches braking off once the Rossby
	// number Ro = P/τ_c exceeds RoCritOverSolar × Ro☉, with Ro☉ =
	// SolarPeriodD/τ_c☉ in the law's own turnover scale (weakened braking,
	// van Saders et al. 2016, Nature 529, 181: Ro_crit ≈ Ro☉ [memory]); the
	// period then stays frozen. Quoting the threshold in units of Ro☉
	// keeps it where it is when Turnover changes: the two scales differ by
	// ~7 % for the Sun, so an absolute Ro_crit would move the Sun's own
	// threshold with the choice. Must be ≥ 1 (the Sun reaches its period);
	// 0 keeps braking on at all Ro.
	RoCritOverSolar float64

	// Stall pauses braking for a mass-dependent age range.
	Stall StallOptions
}

// PowerLawRadius is R = M^0.8 (R☉, M☉), a rough main-sequence stand-in used
// by the defaults and the tests [common practice for lower-main-sequence
// dwarfs; the population code should pass its own relation].
func PowerLawRadius(massMsun float64) float64 { return math.Pow(massMsun, 0.8) }

// DefaultTorqueOptions returns the tuned defaults:
//
//   - Wright et al. (2018) τ_c, p = 2, χ = 10, T0 ∝ R^3.1 M^0.5 (Matt et al.
//     2015 [memory]); R = M^0.8.
//   - k² ∝ M^−1: the whole-star k² runs from ≈ 0.07 for the Sun [memory] to
//     0.205 for an n = 1.5 polytrope, the fully convective limit reached
//     near 0.35 M☉, i.e. roughly ∝ M^−1. With it the law puts 0.7 M☉ at
//     13.8 d at 0.65 Gyr, on the 10–15 d K-dwarf sequence of a ~650 Myr
//     cluster [memory]; with constant k² the K dwarfs spin down too fast
//     (0.7 M☉ at 16.8 d).
//   - Initial periods lognormal with median 2 d and 0.3 dex at 10 Myr
//     [memory of young-cluster period distributions of a few days]. The
//     median must lie below the Sun's saturation period (≈ 2.5 d) for the
//     solar track to lose memory of its start by 1 Gyr (Skumanich slope).
//   - Sun: 25.4 d at 4.57 Gyr [memory: 25.38 d is the Carrington sidereal
//     period, which belongs to mid latitudes (~26°) — the equatorial
//     sidereal period is ≈ 24.5 d and the synodic Carrington period 27.3 d
//     — and 4.57 Gyr the meteoritic age]. No weakened braking, no stall.
//
// The model has constant moment of inertia, so it has no pre-main-sequence
// spin-up; its young (< ~100 Myr) periods are crude.
func DefaultTorqueOptions() TorqueOptions {
	return TorqueOptions{
		Turnover:        Wright2018,
		RadiusOfMass:    PowerLawRadius,
		TorqueExponent:  2,
		SaturationRatio: 10,
		TorqueRadiusExp: 3.1,
		TorqueMassExp:   0.5,
		GyrationMassExp: -1,
		Initial:         InitialPeriods{Shape: LogNormal, MedianD: 2, SigmaDex: 0.3},
		StartAgeGyr:     0.01,
		SolarPeriodD:    25.4,
		SolarAgeGyr:     4.57,
		RoCritOverSolar: 0,
		Stall:           DefaultStallOptions(),
	}
}

// TorqueLaw spins stars down under a saturated wind torque of the
// Matt et al. (2015) form with constant moment of inertia. With ω = Ω/Ω☉,
// q = τ_c/τ_c☉ and K(m) = T0(m)/(I(m) Ω☉):
//
//	saturated   (ω q ≥ χ): dω/dt = −K χ^p ω        ⇒ P grows exponentially;
//	unsaturated (ω q < χ): dω/dt = −K q^p ω^(p+1)  ⇒ P^p grows linearly in t,
//
// joined where the star crosses Ro_sat, all in closed form. Weakened braking
// freezes P at Ro_crit; the stall is evaluated at an effective age (see
// StallOptions). K☉ is found by root finding at construction.
type TorqueLaw struct {
	opts      TorqueOptions
	tauSunD   float64 // τ_c of the 1 M☉ model star (d)
	rSun      float64 // radius of the 1 M☉ model star (R☉)
	kSunPerGy float64 // calibrated K☉ (1/Gyr)
	chiP      float64 // χ^p
}

// NewTorqueLaw checks the options and calibrates the torque scale.
func NewTorqueLaw(opts TorqueOptions) (*TorqueLaw, error) {
	if err := opts.validate(); err != nil {
		return nil, err
	}
	l := &TorqueLaw{opts: opts, chiP: math.Pow(opts.SaturationRatio, opts.TorqueExponent)}
	tau, ok := l.turnover(solarMassMsun)
	if !ok {
		return nil, fmt.Errorf("spin: torque law: τ_c of a 1 M☉ star is undefined with turnover %q (TeffOfMass(1) = %g K)", opts.Turnover, l.teff(solarMassMsun))
	}
	l.tauSunD = tau
	l.rSun = opts.RadiusOfMass(solarMassMsun)
	if !(l.rSun > 0) || math.IsInf(l.rSun, 1) {
		return nil, fmt.Errorf("spin: torque law: RadiusOfMass(1) = %g, want a positive radius in R☉", l.rSun)
	}
	if err := l.calibrate(); err != nil {
		return nil, err
	}
	return l, nil
}

func (o TorqueOptions) validate() error {
	pos := func(name string, v float64) error {
		if !(v > 0) || math.IsInf(v, 1) {
			return fmt.Errorf("spin: torque law: %s must be positive and finite, got %g", name, v)
		}
		return nil
	}
	fin := func(name string, v float64) error {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("spin: torque law: %s must be finite, got %g", name, v)
		}
		return nil
	}
	if !o.Turnover.Valid() {
		return fmt.Errorf("spin: torque law: Turnover not set; use one of %q (DefaultTorqueOptions sets %q)", TurnoverNames(), Wright2018)
	}
	if o.RadiusOfMass == nil {
		return fmt.Errorf("spin: torque law: RadiusOfMass is nil; pass the stellar radius relation or PowerLawRadius")
	}
	if o.Turnover == CranmerSaar2011 && o.TeffOfMass == nil {
		return fmt.Errorf("spin: torque law: turnover %q needs TeffOfMass; pass the stellar T_eff relation or use %q", CranmerSaar2011, Wright2018)
	}
	for _, err := range []error{
		pos("TorqueExponent", o.TorqueExponent),
		fin("TorqueRadiusExp", o.TorqueRadiusExp),
		fin("TorqueMassExp", o.TorqueMassExp),
		fin("GyrationMassExp", o.GyrationMassExp),
		pos("StartAgeGyr", o.StartAgeGyr),
		pos("SolarPeriodD", o.SolarPeriodD),
		pos("SolarAgeGyr", o.SolarAgeGyr),
		o.Initial.Validate(),
		o.Stall.Validate(),
	} {
		if err != nil {
			return err
		}
	}
	if !(o.SaturationRatio > 1) || math.IsInf(o.SaturationRatio, 1) {
		return fmt.Errorf("spin: torque law: SaturationRatio χ = Ro☉/Ro_sat must exceed 1 and be finite, got %g", o.SaturationRatio)
	}
	if !(o.RoCritOverSolar == 0 || o.RoCritOverSolar >= 1) || math.IsInf(o.RoCritOverSolar, 1) {
		return fmt.Errorf("spin: torque law: RoCritOverSolar must be 0 (no weakened braking) or finite and ≥ 1 (below 1 the Sun would stop braking before it reaches SolarPeriodD), got %g", o.RoCritOverSolar)
	}
	if !(o.SolarAgeGyr > o.StartAgeGyr) {
		return fmt.Errorf("spin: torque law: SolarAgeGyr (%g) must exceed StartAgeGyr (%g)", o.SolarAgeGyr, o.StartAgeGyr)
	}
	if med := o.Initial.Median(); !(med < o.SolarPeriodD) {
		return fmt.Errorf("spin: torque law: median initial period %g d must be shorter than SolarPeriodD %g d, or no braking reaches it", med, o.SolarPeriodD)
	}
	return nil
}

// Name implements Law.
func (l *TorqueLaw) Name() string { return "torque" }

// Options returns the options the law was built with.
func (l *TorqueLaw) Options() TorqueOptions { return l.opts }

// SolarRossby returns Ro☉ = SolarPeriodD/τ_c☉ in the law's turnover scale.
func (l *TorqueLaw) SolarRossby() float64 { return l.opts.SolarPeriodD / l.tauSunD }

// SolarRatePerGyr returns the calibrated K☉ = T0☉/(I☉ Ω☉) in 1/Gyr: the
// e-folding rate of ω in the unsaturated regime at ω = 1 is K☉ (and K☉ χ^p
// while saturated).
func (l *TorqueLaw) SolarRatePerGyr() float64 { return l.kSunPerGy }

// Period implements Law. It reads s.MassMsun and s.AgeGyr and draws one
// uniform quantile of the initial-period distribution from r.
func (l *TorqueLaw) Period(s Star, r *rand.Rand) (periodD float64, ok bool) {
	return l.PeriodAt(s.MassMsun, s.AgeGyr, r.Float64())
}

// PeriodAt returns the period (d) at ageGyr of a star of mass massMsun born
// at quantile u ∈ [0, 1] of the initial-period distribution. ok is false
// outside the turnover prescription's mass (or T_eff) range or for a
// non-positive age.
func (l *TorqueLaw) PeriodAt(massMsun, ageGyr, u float64) (periodD float64, ok bool) {
	if !(ageGyr > 0) || math.IsInf(ageGyr, 1) {
		return math.NaN(), false
	}
	tau, ok := l.turnover(massMsun)
	if !ok {
		return math.NaN(), false
	}
	r := l.opts.RadiusOfMass(massMsun)
	if !(r > 0) {
		return math.NaN(), false
	}
	k := l.kSunPerGy * l.massScale(massMsun, r)
	age := ageGyr
	if l.opts.Stall.Enabled {
		age = l.opts.Stall.effectiveAge(massMsun, ageGyr)
	}
	return l.evolve(k, tau/l.tauSunD, l.opts.Initial.Quantile(u), age-l.opts.StartAgeGyr), true
}

// massScale returns K(m)/K☉ = (T0/T0☉)(I☉/I) for radius r (R☉) at mass m.
func (l *TorqueLaw) massScale(m, r float64) float64 {
	o := &l.opts
	rr := r / l.rSun
	// T0 ∝ R^a M^b, I ∝ M^(1+g) R²  ⇒  K ∝ R^(a−2) M^(b−1−g).
	return math.Exp((o.TorqueRadiusExp-2)*math.Log(rr) + (o.TorqueMassExp-1-o.GyrationMassExp)*math.Log(m))
}

// evolve advances the period p0 (d) by dt Gyr of braking for a star with
// rate k (1/Gyr) and turnover ratio q = τ_c/τ_c☉.
func (l *TorqueLaw) evolve(k, q, p0, dt float64) float64 {
	if dt <= 0 {
		return p0
	}
	o := &l.opts
	pSun := o.SolarPeriodD
	pCrit := math.Inf(1)
	if o.RoCritOverSolar > 0 {
		// Ro_crit τ_c = f Ro☉ τ_c = f P☉ q: exactly f P☉ for the Sun.
		pCrit = o.RoCritOverSolar * pSun * q
		if p0 >= pCrit {
			return p0
		}
	}
	p := p0
	// Saturated while P < P_sat, i.e. Ro < Ro☉/χ.
	if pSat := pSun * q / o.SaturationRatio; p < pSat {
		rate := k * l.chiP
		tSat := math.Log(pSat/p) / rate
		if dt <= tSat {
			return math.Min(p*math.Exp(rate*dt), pCrit)
		}
		dt -= tSat
		p = pSat
	}
	// Unsaturated: P^p = P1^p + p K q^p P☉^p Δt.
	e := o.TorqueExponent
	if e == 2 {
		p = math.Sqrt(p*p + 2*k*q*q*pSun*pSun*dt)
	} else {
		p = math.Pow(math.Pow(p, e)+e*k*math.Pow(q*pSun, e)*dt, 1/e)
	}
	return math.Min(p, pCrit)
}

// turnover returns τ_c (d) for a star of the given mass.
func (l *TorqueLaw) turnover(m float64) (float64, bool) {
	s := Star{MassMsun: m}
	if l.opts.Turnover == CranmerSaar2011 {
		s.TeffK = l.teff(m)
	}
	return l.opts.Turnover.Days(s)
}

func (l *TorqueLaw) teff(m float64) float64 {
	if l.opts.TeffOfMass == nil {
		return math.NaN()
	}
	return l.opts.TeffOfMass(m)
}
