package assemble

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"

	"spinpop/disk"
	"spinpop/model"
	"spinpop/model/spin"
	"spinpop/model/spots"
	"spinpop/scenarios"
	"spinpop/sfh"
)

// Built is a scenario turned into the objects a run uses. Tables inside are
// built once and shared read-only by all workers.
type Built struct {
	Scenario    *scenarios.Scenario
	History     *sfh.History
	AgeEdgesGyr []float64
	Sampler     *disk.Sampler // the field's per-age-bin line-of-sight tables
	Population  *model.Population
	Relations   *model.Relations
	Law         spin.Law
	Sun         disk.Sun

	binSamplers []*sfh.RangeSampler
}

// Build makes the run objects of a resolved scenario. Errors here come from
// combinations the loader cannot see alone (for instance a mass range
// beyond the relation table); they name the keys involved.
func Build(s *scenarios.Scenario) (*Built, error) {
	b := &Built{Scenario: s, AgeEdgesGyr: s.Disk.AgeBinEdgesGyr}
	var err error
	if b.History, err = History(s); err != nil {
		return nil, err
	}
	if b.Relations, err = Relations(s); err != nil {
		return nil, err
	}
	lo, hi := b.Relations.MassRange()
	if s.IMF.MassMinMsun < lo || s.IMF.MassMaxMsun > hi {
		return nil, fmt.Errorf("imf.mass_min_msun/mass_max_msun = %g–%g M☉ reaches beyond the main-sequence relation table (%g–%g M☉): narrow the range", s.IMF.MassMinMsun, s.IMF.MassMaxMsun, lo, hi)
	}
	imf, err := model.NewIMF(s.IMF.Form, s.IMF.MassMinMsun, s.IMF.MassMaxMsun)
	if err != nil {
		return nil, fmt.Errorf("imf: %w", err)
	}
	if b.Law, err = Law(s, b.Relations); err != nil {
		return nil, err
	}

	b.Sun = disk.Sun{RKpc: s.Disk.SunRadiusKpc, ZPc: s.Disk.SunHeightPc}
	if b.Sampler, err = b.sampler(); err != nil {
		return nil, err
	}
	// Ages inside each bin follow the history exactly.
	nb := len(b.AgeEdgesGyr) - 1
	b.binSamplers = make([]*sfh.RangeSampler, nb)
	mass := b.History.BinWeights(b.AgeEdgesGyr)
	prob := make([]float64, nb)
	for k := range nb {
		prob[k] = mass[k] * b.Sampler.BinIntegral(k)
		if mass[k] > 0 {
			if b.binSamplers[k], err = b.History.RangeSampler(b.AgeEdgesGyr[k], b.AgeEdgesGyr[k+1]); err != nil {
				return nil, fmt.Errorf("history: age bin %d: %w", k, err)
			}
		}
	}

	if err := samplerFastEnough(s, b.Sampler, prob); err != nil {
		return nil, err
	}

	var dust model.Extinction
	if s.Dust.Model == "exponential" {
		dl := disk.DustLayer{ScaleHeightPc: s.Dust.ScaleHeightPc, MidplaneAvPerKpc: s.Dust.MidplaneAvPerKpc}
		if err := dl.Validate(); err != nil {
			return nil, fmt.Errorf("dust: %w", err)
		}
		dust = dl.FromSun(b.Sun).AV
	}

	pop := &model.Population{
		BinProb:         prob,
		Age:             b.ageInBin,
		Place:           b.Sampler,
		Dust:            dust,
		IMF:             imf,
		Relations:       b.Relations,
		Evolved:         s.Stars.Evolved,
		Binaries:        model.Binaries{MassRatioMin: s.Stars.BinaryMassRatioMin, TidalLockMaxD: s.Stars.TidalLockPeriodMaxD},
		Metals:          model.Metallicity{SigmaDex: s.Stars.MetallicitySigmaDex, ColorPerDex: s.Stars.ColorPerDex, AbsMagPerDex: s.Stars.AbsMagPerDex},
		ColorScatterMag: s.Stars.ColorScatterMag,
	}
	if err := observing(s, pop, b.Law); err != nil {
		return nil, err
	}
	b.Population = pop
	if err := b.Population.Prepare(); err != nil {
		return nil, err
	}
	return b, nil
}

// Relations is the scenario's dwarf sequence: the table, moved in M_V by
// stars.sequence_shift_* when the scenario gives a shift.
func Relations(s *scenarios.Scenario) (*model.Relations, error) {
	rel, err := model.DwarfSequence()
	if err != nil {
		return nil, err
	}
	shift := model.LinearShift(s.Stars.SequenceShiftBV, s.Stars.SequenceShiftMag)
	if shift == nil {
		return rel, nil
	}
	rel, err = rel.ShiftedInMV(shift)
	if err != nil {
		return nil, fmt.Errorf("stars.sequence_shift_b_v/sequence_shift_mag: %w", err)
	}
	return rel, nil
}

// ObservingPopulation returns a copy of base (a population built from this
// scenario's stars, disk and dust) with the parts that observe stars taken
// from s: the spin-down law and turnover time, spots, detection, recovery,
// color calibration, binary fraction scale, tidal locking and cuts. It is
// what a comparison re-observes stored template stars with when nuisance
// parameters move (model.Bank.Observe).
func ObservingPopulation(s *scenarios.Scenario, base *model.Population) (*model.Population, error) {
	law, err := Law(s, base.Relations)
	if err != nil {
		return nil, err
	}
	p := *base
	if err := observing(s, &p, law); err != nil {
		return nil, err
	}
	return &p, nil
}

// observing fills p's observing parts from s, with law as its law.
func observing(s *scenarios.Scenario, p *model.Population, law spin.Law) error {
	turn, err := spin.TurnoverByName(s.Spin.Turnover)
	if err != nil {
		return fmt.Errorf("spin.turnover: %w", err)
	}
	det := spots.Detection{
		Noise:        spots.NoiseModel{FloorPpm: s.Survey.NoiseFloorPpm, RefMag: s.Survey.NoiseRefMag, PpmAtRefMag: s.Survey.NoisePpmAtRefMag},
		BaselineD:    s.Survey.BaselineD,
		CadenceD:     s.Survey.CadenceD,
		ThresholdSNR: s.Survey.DetectionSNR,
		Sharpness:    s.Survey.DetectionSharp,
		MinCycles:    s.Survey.MinCycles,
	}
	if err := det.Validate(); err != nil {
		return fmt.Errorf("survey: %w", err)
	}
	search := spots.SearchCompleteness{HalfPeriodD: s.Survey.SearchHalfD, TurnoverPower: s.Survey.SearchTauPower, Steepness: s.Survey.SearchSteepness}
	search.RossbyBands = s.Survey.SearchBands()
	if err := search.Validate(); err != nil {
		return fmt.Errorf("survey: %w", err)
	}
	rec := spots.RecoveryOptions{RelScatter: s.Survey.PeriodScatterRel, HalfProb: s.Survey.HalfAliasProb, DoubleProb: s.Survey.DoubleAliasProb}
	if err := rec.Validate(); err != nil {
		return fmt.Errorf("survey: %w", err)
	}
	band, err := model.ParseBand(s.Survey.Band)
	if err != nil {
		return fmt.Errorf("survey.band: %w", err)
	}
	var amp *spots.AmplitudeModel
	if s.Spin.Spots.Enabled {
		amp = &spots.AmplitudeModel{RoSat: s.Spin.Spots.RoSat, AmpSatPpm: s.Spin.Spots.AmpSatPpm, Slope: s.Spin.Spots.Slope, ScatterDex: s.Spin.Spots.ScatterDex}
		if err := amp.Validate(); err != nil {
			return fmt.Errorf("spin.spots: %w", err)
		}
	}
	color := model.ColorCalibration{OffsetMag: s.Survey.ColorOffsetMag, Scale: s.Survey.ColorScale}
	if err := color.Validate(); err != nil {
		return fmt.Errorf("survey.color_offset_mag/color_scale: %w", err)
	}
	p.Law, p.Turnover, p.Spots = law, turn, amp
	p.Binaries.FractionScale = s.Stars.BinaryFractionScale
	p.Binaries.TidalLockFraction = s.Stars.TidalLockFraction
	p.Survey = model.Survey{Band: band, BrightLimitMag: s.Survey.BrightLimitMag, FaintLimitMag: s.Survey.FaintLimitMag, Detect: det, Search: search, Recovery: rec, Color: color}
	p.Cuts = Cuts(s)
	return nil
}

func (b *Built) ageInBin(k int, r *rand.Rand) float64 { return b.binSamplers[k].Sample(r) }

// sampler builds the field's line-of-sight tables: each age bin's vertical
// profile is the mixture of tracer profiles over the ages inside the bin,
// formed at a constant rate within the bin (so the tables do not depend on
// the history, and templates built from them serve any history).
func (b *Built) sampler() (*disk.Sampler, error) {
	s := b.Scenario
	mixes, err := binMixtures(s, b.AgeEdgesGyr)
	if err != nil {
		return nil, err
	}
	field, err := Field(s)
	if err != nil {
		return nil, err
	}
	sheet := Sheet(s)
	radial := disk.Radial{ScaleLengthKpc: s.Disk.ScaleLengthKpc}
	smp, err := disk.NewMixtureSampler(field, b.Sun, sheet, radial, mixes, disk.SamplerOptions{})
	if err != nil {
		return nil, fmt.Errorf("disk/survey.field: %w", err)
	}
	return smp, nil
}

// minProposalEfficiency is the smallest share of position proposals the
// sampler may keep. The default scenarios keep about 0.9; below 10⁻³ a
// run is over a thousand times slower per star than usual, which happens
// only when the disk is so thin that the field barely holds any of it
// (disk.sigma_10gyr_kms = disk.sheet_sigma_kms = 1 km/s keeps 3·10⁻⁶:
// 64 stars/s instead of a million). Such a scenario is refused at
// check time rather than left to crawl for hours.
const minProposalEfficiency = 1e-3

// samplerFastEnough refuses a scenario whose position sampler would keep
// almost none of its proposals. prob is each age bin's share of the
// stars; ProposalEfficiency is the exact ratio of a bin's integral over
// the field to that of its envelope.
func samplerFastEnough(s *scenarios.Scenario, smp *disk.Sampler, prob []float64) error {
	num, den := 0.0, 0.0
	for k, p := range prob {
		if e := smp.ProposalEfficiency(k); p > 0 {
			num += p
			den += p / e
		}
	}
	eff := num / den
	if !(num > 0) || eff >= minProposalEfficiency {
		return nil
	}
	sheet := Sheet(s)
	return fmt.Errorf("disk.sigma_10gyr_kms = %g and disk.sheet_sigma_kms = %g make a disk so thin (sheet scale height z0 = %.3g pc) that the survey field holds almost none of its stars: the position sampler would keep 1 proposal in %.3g and a run would crawl; use dispersions near those of the Galactic thin disk (of order 20 km/s; the defaults are 25 and 20) or a field that crosses the midplane",
		s.Disk.Sigma10GyrKms, s.Disk.SheetSigmaKms, sheet.Z0Pc(), 1/eff)
}

// Field turns survey.field into a disk.Field.
func Field(s *scenarios.Scenario) (disk.Field, error) {
	f := s.Survey.Field
	var field disk.Field
	switch f.Kind {
	case "cone":
		field = disk.Cone{LDeg: f.LDeg, BDeg: f.BDeg, RadiusDeg: f.RadiusDeg, DistMinPc: f.DistanceMinPc, DistMaxPc: f.DistanceMaxPc}
	case "sphere":
		field = disk.Sphere{RadiusPc: f.DistanceMaxPc, DistMinPc: f.DistanceMinPc}
	case "cones":
		cl := make(disk.ConeList, len(f.Cones))
		for i, c := range f.Cones {
			cl[i] = disk.Cone{LDeg: c.LDeg, BDeg: c.BDeg, RadiusDeg: c.RadiusDeg, DistMinPc: c.DistanceMinPc, DistMaxPc: c.DistanceMaxPc}
		}
		field = cl
	default:
		return nil, fmt.Errorf("survey.field.kind = %q: want cone, sphere or cones", f.Kind)
	}
	if err := field.Validate(); err != nil {
		return nil, fmt.Errorf("survey.field: %w", err)
	}
	return field, nil
}

// Cuts gives the catalog cuts, shared by model and data.
func Cuts(s *scenarios.Scenario) model.Cuts {
	c := s.Cuts
	return model.Cuts{BVMin: c.BVMin, BVMax: c.BVMax, MSBandBrightMag: c.MSBandBrightMag, MSBandFaintMag: c.MSBandFaintMag,
		MSBandDereddened: c.MSBandDereddened, PeriodMinD: c.PeriodMinD, PeriodMaxD: c.PeriodMaxD, HeightMaxPc: c.HeightMaxPc}
}

// History builds the star-formation history of a scenario (see
// scenarios.BuildHistory).
func History(s *scenarios.Scenario) (*sfh.History, error) {
	h, err := scenarios.BuildHistory(&s.History)
	if err != nil {
		return nil, fmt.Errorf("history: %w", err)
	}
	return h, nil
}

// Law builds the scenario's spin-down law from the law registry
// (spin.Lookup), with its intrinsic period scatter (spin.period_scatter_dex)
// and period scale (spin.period_scale) when they are not 0 and 1; the
// relation table supplies T_eff by mass.
func Law(s *scenarios.Scenario, rel *model.Relations) (spin.Law, error) {
	law, err := plainLaw(s, rel)
	if err != nil || (s.Spin.PeriodScatterDex == 0 && s.Spin.PeriodScale == 1) {
		return law, err
	}
	sc := spin.Scattered{Law: law, Dex: s.Spin.PeriodScatterDex, Scale: s.Spin.PeriodScale}
	if err := sc.Validate(); err != nil {
		return nil, fmt.Errorf("spin.period_scatter_dex / period_scale: %w", err)
	}
	return sc, nil
}

// plainLaw is Law without the intrinsic scatter.
func plainLaw(s *scenarios.Scenario, rel *model.Relations) (spin.Law, error) {
	spec, ok := spin.Lookup(s.Spin.Law)
	if !ok {
		return nil, fmt.Errorf("spin.law: unknown spin-down law %q; use one of %q", s.Spin.Law, spin.Names())
	}
	if tables, owners := scenarios.SwitchedOnElsewhere(s); len(tables) > 0 {
		return nil, fmt.Errorf("%s: options of the %s law, switched on; spin.law = %q cannot use them (set spin.law = %q or switch them off)",
			strings.Join(tables, ", "), owners[0], s.Spin.Law, owners[0])
	}
	turn, err := spin.TurnoverByName(s.Spin.Turnover)
	if err != nil {
		return nil, fmt.Errorf("spin.turnover: %w", err)
	}
	teff := func(m float64) float64 {
		if p, ok := rel.At(m); ok {
			return p.TeffK
		}
		return 5772 * math.Pow(m, 0.5)
	}
	l, err := spec.New(s.Spin.Options, spin.Env{Turnover: turn, TeffOfMass: teff})
	if err != nil {
		if len(spec.Tables) > 0 {
			return nil, fmt.Errorf("spin.%s: %w", spec.Tables[0].Name, err)
		}
		return nil, fmt.Errorf("spin.law = %q: %w", s.Spin.Law, err)
	}
	return l, nil
}

// Sheet is the scenario's self-gravitating sheet, the vertical potential
// every age population moves in.
func Sheet(s *scenarios.Scenario) disk.Sheet {
	return disk.Sheet{SheetSigmaKms: s.Disk.SheetSigmaKms, SurfaceDensityMsunPc2: s.Disk.SurfaceDensityMsunPc2}
}

// Heating is the scenario's age–velocity-dispersion relation.
func Heating(s *scenarios.Scenario) disk.AVR {
	return disk.AVR{Sigma10Kms: s.Disk.Sigma10GyrKms, Tau1Gyr: s.Disk.HeatingTau1Gyr, Beta: s.Disk.HeatingBeta}
}

// binMixtures returns each age bin's vertical mixture: the tracer profiles
// over the ages inside the bin, formed at a constant rate within it (four
// sub-ages per bin).
func binMixtures(s *scenarios.Scenario, ageEdgesGyr []float64) ([]disk.Mixture, error) {
	avr := Heating(s)
	mixes := make([]disk.Mixture, len(ageEdgesGyr)-1)
	for k := range mixes {
		m, err := avr.BinMixture(ageEdgesGyr[k], ageEdgesGyr[k+1], 4)
		if err != nil {
			return nil, fmt.Errorf("disk: %w", err)
		}
		mixes[k] = m
	}
	return mixes, nil
}

// HeatingWeight returns the importance weight that turns the stars of a
// run of scenario run into stars of a disk heated as in scenario other:
// for a star of age bin k at height |z|, the ratio of other's vertical
// density of that bin to run's (disk.Mixture.Density). Both profiles are
// normalised per unit mass formed, so templates re-weighted by it are
// other's templates per unit mass, as a run of other would make them. nil
// when the two disks' heating and potential are the same.
func HeatingWeight(run, other *scenarios.Scenario, ageEdgesGyr []float64) (func(bin int, absZPc float64) float64, error) {
	a, b := run.Disk, other.Disk
	if a.Sigma10GyrKms == b.Sigma10GyrKms && a.HeatingTau1Gyr == b.HeatingTau1Gyr && a.HeatingBeta == b.HeatingBeta &&
		a.SheetSigmaKms == b.SheetSigmaKms && a.SurfaceDensityMsunPc2 == b.SurfaceDensityMsunPc2 {
		return nil, nil
	}
	from, err := binMixtures(run, ageEdgesGyr)
	if err != nil {
		return nil, err
	}
	to, err := binMixtures(other, ageEdgesGyr)
	if err != nil {
		return nil, err
	}
	sFrom, sTo := Sheet(run), Sheet(other)
	for _, s := range []disk.Sheet{sFrom, sTo} {
		if err := s.Validate(); err != nil {
			return nil, fmt.Errorf("disk: %w", err)
		}
	}
	pFrom, pTo := make([]disk.MixtureDensity, len(from)), make([]disk.MixtureDensity, len(to))
	for k := range from {
		pFrom[k], pTo[k] = from[k].Prepare(sFrom), to[k].Prepare(sTo)
	}
	return func(k int, absZPc float64) float64 {
		return pTo[k].At(absZPc) / pFrom[k].At(absZPc)
	}, nil
}
