package model

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"

	"spinpop/disk"
	"spinpop/model/spin"
	"spinpop/model/spots"
)

// Placer draws where a star of age bin k sits. ok is false when the draw
// was rejected (the radial profile is applied by rejection); the caller then
// redraws the age bin too, which keeps the joint (age, position) draw exact.
type Placer interface {
	Draw(k int, r *rand.Rand) (lDeg, bDeg, dPc, zPc float64, ok bool)
}

// AgeInBin draws an age inside age bin k.
type AgeInBin func(k int, r *rand.Rand) float64

// Extinction gives A_V to a star at distance dPc and height zPc above the
// midplane: enough for a plane-parallel dust layer (disk.SunDust), whose
// extinction along a sight line from the Sun depends on nothing else.
type Extinction func(dPc, zPc float64) float64

// Survey is how the invented survey sees a star.
type Survey struct {
	Band           Band // band of the magnitude limits and the photometric noise
	BrightLimitMag float64
	FaintLimitMag  float64
	Detect         spots.Detection          // noise model, cadence, baseline, threshold
	Search         spots.SearchCompleteness // periods the search loses beyond Detect's signal-to-noise
	Recovery       spots.RecoveryOptions
	Color          ColorCalibration // how the catalog's B−V scale relates to the model's
}

// ColorPivotMag is the B−V about which ColorCalibration stretches colors:
// near the middle of the F–K range that rotation catalogs hold, so that
// a change of scale moves the catalog's mean color little and the
// offset and the scale are nearly independent when both are fitted.
const ColorPivotMag = 1.0

// ColorCalibration maps the model's B−V onto the catalog's color scale:
//
//	B−V(catalog) = B−V + OffsetMag + (Scale − 1)(B−V − ColorPivotMag).
//
// Two catalogs — or a catalog and the relation table — rarely share a
// color zero point and scale to better than a few hundredths of a
// magnitude; fitted as nuisance parameters they stop a calibration
// difference from posing as a change in the ages. The zero value (Scale
// 0 read as 1) is the identity.
type ColorCalibration struct {
	OffsetMag float64
	Scale     float64
}

// Apply maps a model color onto the catalog's scale.
func (c ColorCalibration) Apply(bv float64) float64 {
	if c.Scale == 0 {
		return bv + c.OffsetMag
	}
	return bv + c.OffsetMag + (c.Scale-1)*(bv-ColorPivotMag)
}

// Invert maps a catalog color back onto the model's scale.
func (c ColorCalibration) Invert(bv float64) float64 {
	if c.Scale == 0 {
		return bv - c.OffsetMag
	}
	return (bv - c.OffsetMag + (c.Scale-1)*ColorPivotMag) / c.Scale
}

// Validate reports a calibration that is not a monotonic map.
func (c ColorCalibration) Validate() error {
	if !(c.Scale >= 0) || math.IsInf(c.Scale, 0) || math.IsNaN(c.OffsetMag) || math.IsInf(c.OffsetMag, 0) {
		return fmt.Errorf("model: color calibration offset %g mag, scale %g: want a finite offset and a positive, finite scale", c.OffsetMag, c.Scale)
	}
	return nil
}

// Binaries sets unresolved companions.
type Binaries struct {
	FractionScale     float64 // multiplies BinaryFraction(m); 0 switches binaries off
	MassRatioMin      float64
	TidalLockFraction float64 // share of binaries close enough to be tidally locked
	TidalLockMaxD     float64 // their periods: log-uniform in [1 d, TidalLockMaxD]
}

// Metallicity is an optional [Fe/H] spread with linear color and magnitude
// shifts per dex.
type Metallicity struct {
	SigmaDex     float64
	ColorPerDex  float64 // d(B-V)/d[Fe/H]
	AbsMagPerDex float64 // dM_V/d[Fe/H]
}

// Population is everything needed to make and observe stars. Build it once
// per scenario (tables inside are shared, read-only, by all workers).
type Population struct {
	// BinProb[k] is the probability that a drawn star belongs to age bin k:
	// SFH mass in the bin times the field's line-of-sight integral.
	BinProb []float64
	Age     AgeInBin
	Place   Placer
	Dust    Extinction // nil: no dust

	IMF       IMF
	Relations *Relations
	Law       spin.Law
	Turnover  spin.TurnoverTime
	Spots     *spots.AmplitudeModel // nil: no spot model; every period the light curve can hold is detected
	Evolved   bool                  // keep post-main-sequence stars, brightened
	Binaries  Binaries
	Metals    Metallicity
	// ColorScatterMag is the σ (mag) of a Gaussian scatter added to the B−V
	// of every star inside the survey's magnitude limits, about the mean
	// sequence: cosmic (star-to-star) and photometric together. 0: none.
	ColorScatterMag float64
	Survey          Survey
	Cuts            Cuts

	binAlias alias
	joint    *disk.JointSampler // when Place is a *disk.Sampler: bins and positions in one draw
	masses   massSampler        // when IMF is one of this package's: exact rejection, faster than inversion
}

// jointPlacer is a Placer that can also draw the age bin and the position
// together (disk.Sampler): see disk.JointSampler.
type jointPlacer interface {
	Placer
	BinIntegral(k int) float64
	Joint(binWeights []float64) (*disk.JointSampler, error)
}

// Prepare checks the population and builds its lookup tables.
func (p *Population) Prepare() error {
	switch {
	case p.Place == nil || p.Age == nil:
		return errors.New("model: population needs an age sampler and a placer")
	case p.IMF == nil || p.Relations == nil || p.Law == nil:
		return errors.New("model: population needs an IMF, relations and a spin-down law")
	case !p.Turnover.Valid():
		return errors.New("model: population needs a convective turnover-time prescription")
	}
	a, err := newAlias(p.BinProb)
	if err != nil {
		return fmt.Errorf("model: age-bin probabilities: %w", err)
	}
	p.binAlias = a
	p.masses = nil
	if ms, ok := p.IMF.(massSampler); ok && ms.rejectionReady() {
		p.masses = ms
	}
	p.joint = nil
	if jp, ok := p.Place.(jointPlacer); ok {
		p.joint = p.jointOf(jp)
	}
	return nil
}

// jointOf returns jp's joint sampler for the bin probabilities, which draws
// the law of the bin-then-Draw loop in place (see disk.JointSampler), or
// nil if a bin integral is unusable or the probabilities do not match jp's
// bins; place then runs that loop.
func (p *Population) jointOf(jp jointPlacer) *disk.JointSampler {
	w := make([]float64, len(p.BinProb))
	for k, pk := range p.BinProb {
		integral := jp.BinIntegral(k)
		if !(integral > 0) || math.IsInf(integral, 0) {
			return nil
		}
		w[k] = pk / integral
	}
	j, err := jp.Joint(w)
	if err != nil {
		return nil
	}
	return j
}

// Extinction ratios A_band/A_V and E(B−V)/A_V for the diffuse interstellar
// medium with R_V = 3.1 (Cardelli, Clayton & Mathis 1989) [memory].
const (
	ebvPerAV = 1 / 3.1
	aKsPerAV = 0.114
)

// EBVPerAV is the reddening per magnitude of V extinction the model
// applies to every star: 1/R_V, R_V = 3.1.
const EBVPerAV = ebvPerAV

// Fill makes and observes the stars of chunk c from stream r.
//
// It places every star of the chunk first (age bin, position, age), then
// makes and observes them one by one: each loop keeps its own tables in
// cache. Two draws take faster routes to the same laws: when Place is a
// *disk.Sampler, the age bins and positions come from its JointSampler
// (DrawMany, bin weights BinProb[k]/BinIntegral(k)), which loses no radially
// rejected points; and masses from this package's IMFs come from an exact
// rejection sampler instead of inverting the CDF, which costs a logarithm
// and an exponential. Either way the stars follow the same distributions,
// drawn with different random numbers. Rotation, its detection and the
// sky angles are worked out only for stars that pass the photometric
// catalog cuts (see Chunk).
func (p *Population) Fill(c *Chunk, r *rand.Rand) {
	if p.joint != nil {
		p.joint.DrawMany(r, c.AgeBin[:c.N], c.dir[:c.N], c.DistPc[:c.N], c.ZPc[:c.N])
		for i := 0; i < c.N; i++ {
			c.AgeGyr[i] = p.Age(int(c.AgeBin[i]), r)
		}
	} else {
		for i := 0; i < c.N; i++ {
			p.place(c, i, r)
		}
	}
	// What star works out only for the few stars that pass the photometric
	// cuts starts as "not worked out" for all: column by column, which
	// writes memory faster than eight scattered stores per star.
	resetColumns(c, c.N, p.joint != nil)
	clear(c.DetectProb[:c.N])
	rp := p.rotationPlan()
	for i := 0; i < c.N; i++ {
		p.star(c, i, r, &rp)
	}
}

// place draws the age bin, position and age of star i through the
// Placer, redrawing both bin and position on a radial rejection, which
// keeps the joint (age, position) draw exact.
func (p *Population) place(c *Chunk, i int, r *rand.Rand) {
	var k int
	var l, b, d, z float64
	for {
		k = p.binAlias.draw(r)
		var ok bool
		if l, b, d, z, ok = p.Place.Draw(k, r); ok {
			break
		}
	}
	c.AgeBin[i], c.AgeGyr[i] = int32(k), p.Age(k, r)
	c.LDeg[i], c.BDeg[i], c.DistPc[i], c.ZPc[i] = l, b, d, z
}

// star makes and observes star i, which place has put in the field, with
// the chunk's rotation plan rp.
func (p *Population) star(c *Chunk, i int, r *rand.Rand, rp *rotationPlan) {
	var flags Flag
	age, d, z := c.AgeGyr[i], c.DistPc[i], c.ZPc[i]
	var m float64
	if p.masses != nil {
		m = p.masses.sampleByRejection(r)
	} else {
		m = p.IMF.Sample(r)
	}
	c.MassMsun[i] = m

	// A mass outside the table (never, for a checked scenario) keeps the
	// zero observables At would give.
	teff, bvMS, absV, absKs, _ := p.Relations.atMain(m)
	bv := bvMS
	c.TeffK[i] = teff
	// What the spin-down law and the turnover time know of the star.
	spinStar := spin.Star{MassMsun: m, AgeGyr: age, BV: bvMS, TeffK: teff}

	// Past the main sequence: brighten (subgiant), or leave the dwarf sample.
	if dMag, gone := EvolvedBrightening(m, age); gone {
		flags |= FlagGone
	} else if dMag > 0 {
		flags |= FlagEvolved
		if !p.Evolved {
			flags |= FlagGone
		}
		absV -= dMag
		absKs -= dMag
	}

	feh := 0.0
	if p.Metals.SigmaDex > 0 {
		feh = p.Metals.SigmaDex * r.NormFloat64()
		bv += p.Metals.ColorPerDex * feh
		absV += p.Metals.AbsMagPerDex * feh
		absKs += p.Metals.AbsMagPerDex * feh
	}
	c.FeH[i] = feh

	comp := 0.0
	if scale := p.Binaries.FractionScale; scale > 0 {
		// Companion, with the mass-dependent fraction worked out only when
		// u falls where it could decide: below its smallest value near m
		// there is a companion, above its largest there is none. One
		// 64-bit draw gives both 32-bit uniforms.
		x := r.Uint64()
		u, v := unit32(x>>32), unit32(x)
		lo, hi := binaryFractionBounds(m)
		fLo := min(1, scale*lo)
		f := fLo
		if u >= fLo && u < min(1, scale*hi) {
			f = p.binaryFraction(m)
		}
		// A companion below the table's mass range is too faint to matter
		// and is ignored.
		if m2, has := companionFrom(m, u, v, f, p.Binaries.MassRatioMin); has {
			if _, bv2, absV2, absKs2, ok := p.Relations.atMain(m2); ok {
				comp = m2
				flags |= FlagBinary
				absB := CombineMags(absV+bv, absV2+bv2)
				absV = CombineMags(absV, absV2)
				absKs = CombineMags(absKs, absKs2)
				bv = absB - absV
			}
		}
	}
	c.CompanionMsun[i] = comp
	c.VKs[i], c.AbsMagV[i] = absV-absKs, absV

	av := 0.0
	if p.Dust != nil {
		av = p.Dust(d, z)
	}
	c.AV[i] = av
	absBand, aBand := absV, av
	if p.Survey.Band == BandKs {
		absBand, aBand = absKs, aKsPerAV*av
	}
	c.AbsMagBand[i] = absBand
	dm := 5*math.Log10(d) - 5
	app := absBand + dm + aBand
	c.AppMag[i] = app
	if app >= p.Survey.BrightLimitMag && app <= p.Survey.FaintLimitMag {
		flags |= FlagInMagRange
		// The color scatter is drawn only for stars a catalog could hold
		// (about one in ten): the others keep their mean color, which no
		// count or output reads (see Chunk), and the hot path one normal
		// deviate per star.
		if p.ColorScatterMag > 0 {
			bv += p.ColorScatterMag * r.NormFloat64()
		}
	}
	c.BV[i] = bv
	// What a catalog derives from photometry and parallax alone: reddened
	// color, and M_V = V − 5 log10(d/10 pc) with the extinction still in.
	obsBV, obsAbs := p.Survey.Color.Apply(bv+ebvPerAV*av), absV+av
	c.ObsBV[i], c.ObsAbsMag[i] = obsBV, obsAbs
	if p.Cuts.InColorRange(obsBV) {
		flags |= FlagInColorRange
	}
	// The band test is left out where the earlier cuts have already
	// failed (see Chunk): it is the costliest of the three.
	if flags&(FlagInMagRange|FlagInColorRange) == FlagInMagRange|FlagInColorRange && p.Cuts.OnMainSequence(p.Relations, obsBV, obsAbs, av) {
		flags |= FlagOnMainSeq
	}

	// Rotation and its detection matter only for stars a catalog could
	// hold; about nine in ten generated stars fail the magnitude limits
	// alone, so the rest of the star is skipped for them (see Chunk).
	if flags&catalogCuts != catalogCuts || flags&FlagGone != 0 {
		// Fill has set the rotation columns (and, after a joint draw, the
		// angles) to NaN and DetectProb to 0.
		if p.joint == nil {
			c.LDeg[i], c.BDeg[i] = math.NaN(), math.NaN()
		}
		c.Flags[i] = flags
		return
	}

	if p.joint != nil {
		c.LDeg[i], c.BDeg[i] = c.dir[i].Angles()
	}

	noise := p.Survey.Detect.Noise.PpmPerCadence(app)
	rot := rp.rotate(spinStar, comp, noise, r, r)
	per := rot.period()
	c.PeriodD[i] = per
	if rot.locked {
		flags |= FlagTidalLock
	}
	if !rot.ok {
		flags |= FlagOutsideLaw // its other rotation columns stay as Fill reset them
		c.Flags[i] = flags
		return
	}
	prob := rot.prob
	c.Rossby[i] = math.Exp(rot.lnRo)
	c.NoisePpm[i] = noise
	c.AmpPpm[i], c.DetectProb[i] = rot.ampPpm, prob
	// Detected or not, a star consumes the same random numbers: one that
	// is not detected draws the uniform and the normal deviate that
	// spots.Recover would have, without working out a period nobody reads.
	// (Stars that fail a photometric cut, above, draw none of these.)
	u := r.Float64()
	if u < prob {
		meas, alias := spots.Recover(per, r, p.Survey.Recovery)
		flags |= FlagDetected
		c.MeasPeriodD[i] = meas
		switch alias {
		case spots.AliasHalf:
			flags |= FlagHalfAlias
		case spots.AliasDouble:
			flags |= FlagDoubleAlias
		}
		if p.Cuts.InPeriodWindow(meas, z) {
			flags |= FlagInPeriodWindow
		}
	} else {
		r.Float64()
		r.NormFloat64()
		c.MeasPeriodD[i] = math.NaN()
	}
	c.Flags[i] = flags
}

// rotation is what the spin-down law and the spots make of a star that
// passes the photometric cuts.
type rotation struct {
	// periodD is the period as a law without a log form gave it, NaN
	// otherwise (period works it out: only a catalog needs it).
	periodD, ampPpm, prob float64
	// lnP and lnRo are ln of the period and of the Rossby number (NaN
	// without a turnover time): what the spots, the search and the fine
	// grid read.
	lnP, lnRo float64
	// preSearch is prob before the search completeness's factor, and
	// lnTauRatio the ln(τ_c/τ_c☉) that factor read (NaN when not read):
	// what Bank's node derivatives need to split that factor.
	preSearch, lnTauRatio float64
	search                float64 // the search completeness's factor (prob = preSearch·search when preSearch > 0)
	spotZ                 float64 // the normal deviate of the spot amplitude's scatter
	locked                bool    // a tidally locked binary: the period is the orbit's
	ok                    bool    // false outside the law's calibrated range: no period
}

// rotationPlan is what working out rotations needs of a Population,
// prepared once for a pass over many stars (a chunk, a re-observation):
// the law's log form, the spots' and the search's constants in log form.
// The period is carried as ln P from the law on, since the Rossby
// number's power law, the search's logistic and nodes, and the fine
// log-period grid all read its logarithm; P itself costs one exponential.
// A plan is read-only and may be shared by goroutines.
type rotationPlan struct {
	p          *Population
	law        spin.LogForm // the law's log form, when hasLog
	hasLog     bool
	amp        spots.LogAmplitude // when p.Spots is set
	detect     spots.LogDetection
	lnMinP     float64 // ln of the shortest period a light curve holds without a spot model (two cadences)
	search     spots.LogSearch
	lnTauSolar float64 // ln τ_c☉
	lnLockMaxD float64 // ln of the longest tidally locked period
}

// rotationPlan prepares p's rotations; p's law, spots, survey and
// binaries must not change while the plan is used.
func (p *Population) rotationPlan() rotationPlan {
	rp := rotationPlan{p: p, search: p.Survey.Search.Log(), detect: p.Survey.Detect.Log(), lnMinP: math.Log(2 * p.Survey.Detect.CadenceD),
		lnTauSolar: math.Log(p.Turnover.Solar()), lnLockMaxD: math.Log(p.Binaries.TidalLockMaxD)}
	rp.law, rp.hasLog = spin.LogFormOf(p.Law)
	if p.Spots != nil {
		rp.amp = p.Spots.Log()
	}
	return rp
}

// rotate gives star s (with a companion of comp solar masses, 0 if
// single, and survey noise noisePpm per cadence) its period — the
// spin-down law's, or the orbit's for a tidally locked pair — Rossby
// number, spot amplitude and detection probability. The law and the
// tidal-lock choice draw from lawR, the spot amplitude from spotR, in
// that order; the generator passes its chunk stream for both, the
// re-observation of stored stars (Bank) a separate stream for each, so
// that changing one part of the physics leaves the other's random
// numbers where they were.
func (rp *rotationPlan) rotate(s spin.Star, comp, noisePpm float64, lawR, spotR *rand.Rand) rotation {
	sp := rp.spinPeriod(s, comp, lawR)
	return rp.observeRotation(sp, noisePpm, spotR)
}

// spinState is the part of a star's rotation that the spin-down law, the
// tidal lock and the turnover time decide: what Bank keeps between
// re-observations that change none of them (lawMemo).
type spinState struct {
	periodD, lnP float64 // the period as a law without a log form gave it (NaN otherwise), and its ln
	lnTau        float64 // ln τ_c (τ_c in days; valid when tauOK)
	ok           bool    // false outside the law's calibrated range: no period
	locked       bool
	tauOK        bool
}

// spinPeriod is rotate's first part: the law's period (or the orbit's)
// drawn from lawR, and the turnover time, which draws nothing.
func (rp *rotationPlan) spinPeriod(s spin.Star, comp float64, lawR *rand.Rand) spinState {
	p := rp.p
	var st spinState
	st.periodD = math.NaN()
	if rp.hasLog {
		st.lnP, st.ok = rp.law.LnPeriod(s, lawR)
	} else {
		st.periodD, st.ok = p.Law.Period(s, lawR)
		st.lnP = math.Log(st.periodD)
	}
	if comp > 0 && p.Binaries.TidalLockFraction > 0 && lawR.Float64() < p.Binaries.TidalLockFraction {
		// Log-uniform between 1 d and TidalLockMaxD.
		st.lnP = lawR.Float64() * rp.lnLockMaxD
		st.periodD = math.NaN()
		st.ok = true
		st.locked = true
	}
	if !st.ok {
		return st
	}
	tau, ok := p.Turnover.Days(s)
	st.lnTau, st.tauOK = math.NaN(), ok
	if ok {
		st.lnTau = math.Log(tau)
	}
	return st
}

// observeRotation is rotate's second part: Rossby number, spot amplitude
// (drawn from spotR) and detection probability of a star whose spin
// spinPeriod gave.
func (rp *rotationPlan) observeRotation(sp spinState, noisePpm float64, spotR *rand.Rand) rotation {
	z := math.NaN()
	if sp.ok && rp.p.Spots != nil {
		z = spotR.NormFloat64() // the amplitude's scatter deviate, its only draw
	}
	return rp.observeRotationAt(sp, noisePpm, z)
}

// observeRotationAt is observeRotation with the spot amplitude's deviate z
// given (read only with a spot model).
func (rp *rotationPlan) observeRotationAt(sp spinState, noisePpm, z float64) rotation {
	p := rp.p
	lnP := sp.lnP
	rot := rotation{periodD: sp.periodD, lnP: lnP, ok: sp.ok, locked: sp.locked}
	if !sp.ok {
		return rot
	}
	rot.lnRo = math.NaN()
	if sp.tauOK && lnP > math.Inf(-1) {
		rot.lnRo = lnP - sp.lnTau // Ro = P/τ_c, as TurnoverTime.Rossby
	}
	rot.prob, rot.ampPpm = 1, math.NaN()
	if p.Spots != nil {
		// A star outside the turnover-time fit has no Rossby number; its
		// NaN amplitude makes it undetectable, which the catalog flags.
		rot.ampPpm, rot.spotZ = rp.amp.FromDeviate(rot.lnRo, z), z
		rot.prob = rp.detect.ProbabilityAtNoise(rot.ampPpm, noisePpm, lnP)
	} else if !(lnP >= rp.lnMinP) || rp.detect.TooLong(lnP) { // also no period (NaN)
		// No spot model: a period is found whenever the light curve can
		// hold it (Nyquist at the short end, MinCycles at the long end).
		rot.prob = 0
	}
	rot.preSearch, rot.lnTauRatio = rot.prob, math.NaN()
	if p.Survey.Search.Enabled() && rot.prob > 0 && p.Survey.Search.NeedsTurnover() && sp.tauOK {
		rot.lnTauRatio = sp.lnTau - rp.lnTauSolar
	}
	rp.searchFactor(&rot)
	return rot
}

// period returns the star's period in days: the law's own number when it
// gave one, exp(ln P) otherwise.
func (rot *rotation) period() float64 {
	if !math.IsNaN(rot.periodD) {
		return rot.periodD
	}
	return math.Exp(rot.lnP)
}

// searchFactor sets rot.prob to rot.preSearch times the search
// completeness's efficiency at the star's period and τ_c/τ_c☉ (as
// observeRotation does; Bank's seen memo applies it again to a star's
// kept rotation under other nodes).
func (rp *rotationPlan) searchFactor(rot *rotation) {
	rot.prob, rot.search = rot.preSearch, 1
	if rp.p.Survey.Search.Enabled() && rot.prob > 0 {
		rot.search = rp.search.Efficiency(rot.lnP, rot.lnTauRatio)
		rot.prob *= rot.search
	}
}

// catalogCuts are the photometric catalog steps. A star that fails one
// of them can never enter a catalog, whatever its rotation.
const catalogCuts = FlagInMagRange | FlagInColorRange | FlagOnMainSeq

// unit32 maps the low 32 bits of x to [0, 1).
func unit32(x uint64) float64 { return float64(uint32(x)) * (1.0 / (1 << 32)) }

// binaryFractionMin and binaryFractionMax bound BinaryFraction.
var binaryFractionMin, binaryFractionMax = binaryFractionRange()

func (p *Population) binaryFraction(m float64) float64 {
	return min(1, p.Binaries.FractionScale*BinaryFraction(m))
}
