package model

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"sync"

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

// Extinction gives A_V toward (l, b) out to distance d.
type Extinction func(lDeg, bDeg, dPc float64) float64

// Survey is how the invented survey sees a star.
type Survey struct {
	Band           Band // band of the magnitude limits and the photometric noise
	BrightLimitMag float64
	FaintLimitMag  float64
	Detect         spots.Detection // noise model, cadence, baseline, threshold
	Recovery       spots.RecoveryOptions
}

// Cuts are the catalogue cuts, applied identically to model and data.
type Cuts struct {
	BVMin, BVMax    float64
	MSBandBrightMag float64 // keep stars up to this much brighter than the single-star sequence at their color
	MSBandFaintMag  float64 // and this much fainter
	PeriodMinD      float64
	PeriodMaxD      float64
	HeightMaxPc     float64 // |z| cut; 0 = none
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
	Survey    Survey
	Cuts      Cuts

	binAlias alias
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
	return nil
}

// Extinction ratios A_band/A_V and E(B−V)/A_V for the diffuse interstellar
// medium with R_V = 3.1 (Cardelli, Clayton & Mathis 1989) [memory].
const (
	ebvPerAV = 1 / 3.1
	aKsPerAV = 0.114
)

// Fill makes and observes the stars of chunk c from stream r.
//
// It works in two passes. The first places every star, grouped by age bin
// (see place), so that each bin's line-of-sight tables stay in cache while
// they are used; the second makes and observes the stars one by one. The
// stars come out in slot order, a deterministic function of r.
func (p *Population) Fill(c *Chunk, r *rand.Rand) {
	s := placeScratch.Get().(*placeBuf)
	p.place(c, r, s)
	placeScratch.Put(s)
	for i := 0; i < c.N; i++ {
		p.star(c, i, r)
	}
}

// placeBuf is a worker's scratch for place; pooled so that Fill allocates
// nothing once warm.
type placeBuf struct {
	pending []int32 // slots still to place, ascending
	order   []int32 // the pending slots grouped by age bin
	count   []int32 // per-bin counts, then running offsets into order
	ok      []bool  // per slot: the last proposal was kept
}

var placeScratch = sync.Pool{New: func() any { return new(placeBuf) }}

func growInt32(s []int32, n int) []int32 {
	if cap(s) < n {
		return make([]int32, n)
	}
	return s[:n]
}

// place draws the age bin, position and age of every star of c.
//
// Each slot repeats the joint proposal of the population's definition —
// an age bin from BinProb, then a position from Place.Draw(k) — until a
// proposal is kept, so the kept (bin, position) of every slot follows the
// exact joint distribution and slots are independent. Only the order in
// which proposals are made differs from a star-by-star loop: in each round
// every pending slot first draws its bin, then the slots are visited bin by
// bin, and the slots whose proposal was rejected wait for the next round.
// Which random numbers go to which proposal is decided by earlier random
// numbers only, never by the values a proposal will produce, so each
// proposal still sees fresh independent uniforms.
func (p *Population) place(c *Chunk, r *rand.Rand, s *placeBuf) {
	if os.Getenv("NOGROUP") != "" {
		for j := range c.N {
			for {
				k := p.binAlias.draw(r)
				l, b, d, z, ok := p.Place.Draw(k, r)
				if ok {
					c.AgeBin[j] = int32(k)
					c.LDeg[j], c.BDeg[j], c.DistPc[j], c.ZPc[j] = l, b, d, z
					c.AgeGyr[j] = p.Age(k, r)
					break
				}
			}
		}
		return
	}
	n, nb := c.N, len(p.binAlias.prob)
	s.pending = growInt32(s.pending, n)
	s.order = growInt32(s.order, n)
	s.count = growInt32(s.count, nb+1)
	if cap(s.ok) < n {
		s.ok = make([]bool, n)
	}
	s.ok = s.ok[:n]
	pending := s.pending
	for i := range pending {
		pending[i] = int32(i)
	}
	for len(pending) > 0 {
		count := s.count
		clear(count)
		for _, j := range pending {
			k := p.binAlias.draw(r)
			c.AgeBin[j] = int32(k)
			count[k+1]++
		}
		for k := 1; k <= nb; k++ {
			count[k] += count[k-1]
		}
		order := s.order[:len(pending)]
		for _, j := range pending {
			k := c.AgeBin[j]
			order[count[k]] = j
			count[k]++
		}
		for _, j := range order {
			k := int(c.AgeBin[j])
			l, b, d, z, ok := p.Place.Draw(k, r)
			s.ok[j] = ok
			if ok {
				c.LDeg[j], c.BDeg[j], c.DistPc[j], c.ZPc[j] = l, b, d, z
				c.AgeGyr[j] = p.Age(k, r)
			}
		}
		// Keep the rejected slots, in slot order, for the next round.
		left := pending[:0]
		for _, j := range pending {
			if !s.ok[j] {
				left = append(left, j)
			}
		}
		pending = left
	}
}

func (p *Population) star(c *Chunk, i int, r *rand.Rand) {
	var flags Flag
	age := c.AgeGyr[i]
	l, b, d, z := c.LDeg[i], c.BDeg[i], c.DistPc[i], c.ZPc[i]
	m := p.IMF.Sample(r)
	c.MassMsun[i] = m

	pt, _ := p.Relations.At(m)
	bv, absV, absKs := pt.BV, pt.AbsMagV, pt.AbsMagKs
	c.TeffK[i] = pt.TeffK

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
	if p.Binaries.FractionScale > 0 {
		// A companion below the table's mass range is too faint to matter
		// and is ignored.
		if m2, has := Companion(m, r, p.binaryFraction, p.Binaries.MassRatioMin); has {
			if q, ok := p.Relations.At(m2); ok {
				comp = m2
				flags |= FlagBinary
				absB := CombineMags(absV+bv, q.AbsMagV+q.BV)
				absV = CombineMags(absV, q.AbsMagV)
				absKs = CombineMags(absKs, q.AbsMagKs)
				bv = absB - absV
			}
		}
	}
	c.CompanionMsun[i] = comp
	c.BV[i], c.VKs[i], c.AbsMagV[i] = bv, absV-absKs, absV

	av := 0.0
	if p.Dust != nil {
		av = p.Dust(l, b, d)
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
	// What a catalogue derives from photometry and parallax alone: reddened
	// color, and M_V = V − 5 log10(d/10 pc) with the extinction still in.
	c.ObsBV[i] = bv + ebvPerAV*av
	c.ObsAbsMag[i] = absV + av
	if app >= p.Survey.BrightLimitMag && app <= p.Survey.FaintLimitMag {
		flags |= FlagInMagRange
	}
	if c.ObsBV[i] >= p.Cuts.BVMin && c.ObsBV[i] <= p.Cuts.BVMax {
		flags |= FlagInColorRange
	}
	if p.onMainSequence(c.ObsBV[i], c.ObsAbsMag[i]) {
		flags |= FlagOnMainSeq
	}

	// Rotation: the spin-down law, or the orbit for tidally locked pairs.
	per, ok := p.Law.Period(spin.Star{MassMsun: m, AgeGyr: age, BV: pt.BV, TeffK: pt.TeffK}, r)
	if comp > 0 && p.Binaries.TidalLockFraction > 0 && r.Float64() < p.Binaries.TidalLockFraction {
		per = math.Exp(r.Float64() * math.Log(p.Binaries.TidalLockMaxD))
		ok = true
		flags |= FlagTidalLock
	}
	c.PeriodD[i] = per
	if !ok {
		flags |= FlagOutsideLaw
		c.Rossby[i], c.AmpPpm[i], c.NoisePpm[i], c.DetectProb[i], c.MeasPeriodD[i] = math.NaN(), math.NaN(), math.NaN(), 0, math.NaN()
		c.Flags[i] = flags
		return
	}
	ro, _ := p.Turnover.Rossby(per, spin.Star{MassMsun: m, AgeGyr: age, BV: pt.BV, TeffK: pt.TeffK})
	c.Rossby[i] = ro
	c.NoisePpm[i] = p.Survey.Detect.Noise.PpmPerCadence(app)
	prob := 1.0
	amp := math.NaN()
	if p.Spots != nil {
		// A star outside the turnover-time fit has no Rossby number; its
		// NaN amplitude makes it undetectable, which the catalogue flags.
		amp = p.Spots.Draw(ro, r)
		prob = p.Survey.Detect.Probability(amp, app, per)
	} else if per < 2*p.Survey.Detect.CadenceD || p.Survey.Detect.BaselineD < p.Survey.Detect.MinCycles*per {
		// No spot model: a period is found whenever the light curve can
		// hold it (Nyquist at the short end, MinCycles at the long end).
		prob = 0
	}
	c.AmpPpm[i], c.DetectProb[i] = amp, prob
	// Always consume the same random numbers whatever the outcome, so one
	// star's fate never shifts the stream of the next.
	u := r.Float64()
	meas, alias := spots.Recover(per, r, p.Survey.Recovery)
	if u < prob {
		flags |= FlagDetected
		c.MeasPeriodD[i] = meas
		switch alias {
		case spots.AliasHalf:
			flags |= FlagHalfAlias
		case spots.AliasDouble:
			flags |= FlagDoubleAlias
		}
		if meas >= p.Cuts.PeriodMinD && meas <= p.Cuts.PeriodMaxD && (p.Cuts.HeightMaxPc <= 0 || math.Abs(z) <= p.Cuts.HeightMaxPc) {
			flags |= FlagInPeriodWindow
		}
	} else {
		c.MeasPeriodD[i] = math.NaN()
	}
	c.Flags[i] = flags
}

func (p *Population) binaryFraction(m float64) float64 {
	return min(1, p.Binaries.FractionScale*BinaryFraction(m))
}

// onMainSequence applies the catalogue's band around the single-star main
// sequence: the same test is applied to observed stars (see compare).
func (p *Population) onMainSequence(bv, absV float64) bool {
	return OnMainSequence(p.Relations, p.Cuts, bv, absV)
}

// OnMainSequence is the catalogue's color–magnitude cut: keep a star whose
// M_V lies within the band around the single-star sequence at its B−V.
// Unresolved binaries (up to 0.753 mag brighter) and evolved stars fall out
// when the band is narrow, in data and model alike.
func OnMainSequence(rel *Relations, cuts Cuts, bv, absV float64) bool {
	ms, ok := rel.AbsMagVAtBV(bv)
	if !ok {
		return false
	}
	dm := absV - ms
	return dm >= -cuts.MSBandBrightMag && dm <= cuts.MSBandFaintMag
}
