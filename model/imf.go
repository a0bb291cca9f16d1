package model

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
)

// IMF is a stellar initial mass function restricted to a mass range
// [MinMsun, MaxMsun]. It describes single stars (or primaries): companions
// are added separately (see Companion).
type IMF interface {
	// Name is the identifier accepted by NewIMF.
	Name() string
	// PDF is dN/dm normalised to unit integral over the range, in 1/M☉;
	// zero outside the range.
	PDF(massMsun float64) float64
	// CDF is the fraction of stars with mass ≤ massMsun.
	CDF(massMsun float64) float64
	// Sample draws one mass in M☉ by exact inversion of the CDF. It uses
	// one uniform number from r and allocates nothing.
	Sample(r *rand.Rand) float64
	// MeanMass is the mean stellar mass over the range, in M☉.
	MeanMass() float64
}

// IMF names accepted by NewIMF.
const (
	NameKroupa2001   = "kroupa2001"
	NameChabrier2003 = "chabrier2003"
)

// NewIMF builds the IMF called name (case-insensitive: "kroupa2001" or
// "chabrier2003") restricted to [minMsun, maxMsun].
func NewIMF(name string, minMsun, maxMsun float64) (IMF, error) {
	switch strings.ToLower(strings.TrimSpace(name)) {
	case NameKroupa2001:
		return NewKroupa2001(minMsun, maxMsun)
	case NameChabrier2003:
		return NewChabrier2003(minMsun, maxMsun)
	}
	return nil, fmt.Errorf("model: unknown IMF %q: want %q or %q", name, NameKroupa2001, NameChabrier2003)
}

// checkMassRange rejects ranges that are empty, non-positive or not finite.
func checkMassRange(name string, minMsun, maxMsun float64) error {
	switch {
	case math.IsNaN(minMsun) || math.IsNaN(maxMsun) || math.IsInf(minMsun, 0) || math.IsInf(maxMsun, 0):
		return fmt.Errorf("model: %s IMF mass range [%g, %g] M☉ is not finite: give two finite masses", name, minMsun, maxMsun)
	case minMsun <= 0:
		return fmt.Errorf("model: %s IMF mass range [%g, %g] M☉ starts at a non-positive mass: the lower limit must be > 0 (e.g. 0.08)", name, minMsun, maxMsun)
	case maxMsun <= minMsun:
		return fmt.Errorf("model: %s IMF mass range [%g, %g] M☉ is empty: the upper limit must exceed the lower one", name, minMsun, maxMsun)
	}
	return nil
}

// Kroupa2001 is the Kroupa (2001, MNRAS 322, 231) broken power law
// dN/dm ∝ m^−α with α = 0.3 below 0.08 M☉, 1.3 from 0.08 to 0.5 M☉ and 2.3
// above, continuous at the breaks.
type Kroupa2001 struct{ imfPieces }

// Kroupa (2001) slopes and break masses (his eq. 2).
const (
	kroupaAlpha0   = 0.3
	kroupaAlpha1   = 1.3
	kroupaAlpha2   = 2.3
	kroupaBreak1   = 0.08
	kroupaBreak2   = 0.5
	maxIMFSegments = 3
)

// NewKroupa2001 returns the Kroupa (2001) IMF restricted to [minMsun, maxMsun].
func NewKroupa2001(minMsun, maxMsun float64) (*Kroupa2001, error) {
	if err := checkMassRange(NameKroupa2001, minMsun, maxMsun); err != nil {
		return nil, err
	}
	// Coefficients that make A_k m^−α_k continuous at both breaks, with
	// A_0 = 1 (the normalisation is applied afterwards).
	a1 := math.Pow(kroupaBreak1, kroupaAlpha1-kroupaAlpha0)
	a2 := a1 * math.Pow(kroupaBreak2, kroupaAlpha2-kroupaAlpha1)
	shape := [...]imfSegment{
		powerLawSegment(0, kroupaBreak1, kroupaAlpha0, 1),
		powerLawSegment(kroupaBreak1, kroupaBreak2, kroupaAlpha1, a1),
		powerLawSegment(kroupaBreak2, math.Inf(1), kroupaAlpha2, a2),
	}
	k := &Kroupa2001{}
	k.build(shape[:], minMsun, maxMsun)
	return k, nil
}

// Name returns "kroupa2001".
func (*Kroupa2001) Name() string { return NameKroupa2001 }

// Chabrier2003 is the Chabrier (2003, PASP 115, 763, Table 1) single-star
// IMF: lognormal in log10 m below 1 M☉ (m_c = 0.079 M☉, σ = 0.69 dex),
// joined continuously at 1 M☉ to dN/dm ∝ m^−2.3.
type Chabrier2003 struct{ imfPieces }

// Chabrier (2003) Table 1, single-star disk IMF.
const (
	chabrierMcMsun = 0.079
	chabrierSigma  = 0.69
	chabrierJoin   = 1.0
	chabrierAlpha  = 2.3
)

// NewChabrier2003 returns the Chabrier (2003) single-star IMF restricted to
// [minMsun, maxMsun].
func NewChabrier2003(minMsun, maxMsun float64) (*Chabrier2003, error) {
	if err := checkMassRange(NameChabrier2003, minMsun, maxMsun); err != nil {
		return nil, err
	}
	mu := math.Log10(chabrierMcMsun)
	// dN/dm of the lognormal part (unit amplitude per dex) at 1 M☉ is
	// exp(−μ²/2σ²)/ln10; the power law takes that value there.
	join := math.Exp(-mu*mu/(2*chabrierSigma*chabrierSigma)) / math.Ln10
	shape := [...]imfSegment{
		logNormalSegment(0, chabrierJoin, mu, chabrierSigma),
		powerLawSegment(chabrierJoin, math.Inf(1), chabrierAlpha, join),
	}
	c := &Chabrier2003{}
	c.build(shape[:], minMsun, maxMsun)
	return c, nil
}

// Name returns "chabrier2003".
func (*Chabrier2003) Name() string { return NameChabrier2003 }

// imfPieces is a piecewise IMF: up to three segments, each a power law or a
// lognormal in log10 m, chosen by their share of the number of stars.
// Fixed-size arrays keep Sample free of pointer chasing and allocation.
type imfPieces struct {
	seg          [maxIMFSegments]imfSegment
	n            int
	cumShare     [maxIMFSegments]float64 // number fraction below each segment's upper edge
	minMsun      float64
	maxMsun      float64
	total        float64 // unnormalised number of stars over the range
	meanMassMsun float64
	table        massTable // for sampleByRejection
}

type imfKind uint8

const (
	imfPowerLaw imfKind = iota
	imfLogNormal
)

// imfSegment is one piece of an IMF over [lo, hi].
//
// Power law: dN/dm = coef m^−alpha.
// Lognormal: dN/dm = exp(−(log10 m − mu)²/(2 sigma²)) / (m ln10), i.e. a
// unit-amplitude Gaussian per dex.
type imfSegment struct {
	kind      imfKind
	lo, hi    float64
	coef      float64
	alpha     float64
	mu, sigma float64
	share     float64 // fraction of all stars in this segment
	below     float64 // fraction of all stars in earlier segments
	invShare  float64

	// Power-law inversion: m = (loP + u spanP)^invP, p = 1 − alpha.
	p, loP, spanP, invP float64
	// Lognormal inversion in the standard normal variable z: u is mapped to
	// [cLo, cLo+cSpan] of Φ (or of 1 − Φ when flip, which keeps precision
	// when the whole segment lies in the upper tail).
	cLo, cSpan float64
	flip       bool
}

func powerLawSegment(lo, hi, alpha, coef float64) imfSegment {
	return imfSegment{kind: imfPowerLaw, lo: lo, hi: hi, alpha: alpha, coef: coef}
}

func logNormalSegment(lo, hi, mu, sigma float64) imfSegment {
	return imfSegment{kind: imfLogNormal, lo: lo, hi: hi, mu: mu, sigma: sigma, coef: 1}
}

// build keeps the parts of shape inside [minMsun, maxMsun], normalises them
// and prepares the inverse CDF of each.
func (f *imfPieces) build(shape []imfSegment, minMsun, maxMsun float64) {
	f.minMsun, f.maxMsun = minMsun, maxMsun
	for _, s := range shape {
		lo, hi := math.Max(s.lo, minMsun), math.Min(s.hi, maxMsun)
		if hi <= lo {
			continue
		}
		s.lo, s.hi = lo, hi
		f.seg[f.n] = s
		f.n++
	}
	counts := [maxIMFSegments]float64{}
	massSum := 0.0
	for i := 0; i < f.n; i++ {
		s := &f.seg[i]
		counts[i] = s.number(s.hi)
		f.total += counts[i]
		massSum += s.mass()
	}
	acc := 0.0
	for i := 0; i < f.n; i++ {
		s := &f.seg[i]
		s.share = counts[i] / f.total
		s.invShare = 1 / s.share
		s.below = acc
		acc += s.share
		f.cumShare[i] = acc
		s.prepare()
	}
	f.cumShare[f.n-1] = 1
	f.meanMassMsun = massSum / f.total
	f.buildMassTable()
}

// number is the unnormalised number of stars in [s.lo, m].
func (s *imfSegment) number(m float64) float64 {
	if m <= s.lo {
		return 0
	}
	m = math.Min(m, s.hi)
	if s.kind == imfLogNormal {
		return s.sigma * math.Sqrt(2*math.Pi) * imfNormalMass(s.z(s.lo), s.z(m))
	}
	return s.coef * powerIntegral(s.lo, m, 1-s.alpha)
}

// mass is the unnormalised stellar mass in the segment.
func (s *imfSegment) mass() float64 {
	if s.kind == imfLogNormal {
		// ∫ 10^x N(x) dx over a Gaussian: shift the mean by k σ², k = ln10.
		k := math.Ln10
		ks := k * s.sigma
		return s.sigma * math.Sqrt(2*math.Pi) * math.Exp(k*s.mu+ks*ks/2) *
			imfNormalMass(s.z(s.lo)-ks, s.z(s.hi)-ks)
	}
	return s.coef * powerIntegral(s.lo, s.hi, 2-s.alpha)
}

// pdf is the unnormalised dN/dm.
func (s *imfSegment) pdf(m float64) float64 {
	if s.kind == imfLogNormal {
		z := s.z(m)
		return math.Exp(-z*z/2) / (m * math.Ln10)
	}
	return s.coef * math.Pow(m, -s.alpha)
}

func (s *imfSegment) z(m float64) float64 { return (math.Log10(m) - s.mu) / s.sigma }

// powerIntegral is ∫_lo^hi m^(p−1) dm.
func powerIntegral(lo, hi, p float64) float64 {
	if p == 0 {
		return math.Log(hi / lo)
	}
	return (math.Pow(hi, p) - math.Pow(lo, p)) / p
}

func (s *imfSegment) prepare() {
	if s.kind == imfLogNormal {
		zl, zh := s.z(s.lo), s.z(s.hi)
		if zl > 0 {
			s.flip = true
			s.cLo = imfNormalUpper(zh)
			s.cSpan = imfNormalUpper(zl) - s.cLo
		} else {
			s.cLo = imfNormalLower(zl)
			s.cSpan = imfNormalLower(zh) - s.cLo
		}
		return
	}
	s.p = 1 - s.alpha
	if s.p != 0 {
		s.loP = math.Pow(s.lo, s.p)
		s.spanP = math.Pow(s.hi, s.p) - s.loP
		s.invP = 1 / s.p
	} else {
		s.spanP = math.Log(s.hi / s.lo)
	}
}

// inverse maps u in [0, 1] to the mass with that fraction of the segment's
// stars below it.
func (s *imfSegment) inverse(u float64) float64 {
	if u > 1 { // rounding in the caller's rescaling
		u = 1
	}
	var m float64
	switch {
	case s.kind == imfLogNormal:
		c := s.cLo + u*s.cSpan
		// Φ⁻¹(c) = √2 erfinv(2c − 1).
		z := math.Sqrt2 * math.Erfinv(2*c-1)
		if s.flip {
			z = -z
		}
		m = math.Exp((s.mu + s.sigma*z) * math.Ln10)
	case s.p == 0:
		m = s.lo * math.Exp(u*s.spanP)
	default:
		m = math.Exp(math.Log(s.loP+u*s.spanP) * s.invP)
	}
	// Rounding may step a hair outside the segment.
	if m < s.lo {
		return s.lo
	}
	if m > s.hi {
		return s.hi
	}
	return m
}

// imfNormalLower is Φ(z), imfNormalUpper is 1 − Φ(z), each accurate in its tail.
func imfNormalLower(z float64) float64 { return 0.5 * math.Erfc(-z/math.Sqrt2) }
func imfNormalUpper(z float64) float64 { return 0.5 * math.Erfc(z/math.Sqrt2) }

// imfNormalMass is Φ(b) − Φ(a) for a ≤ b, without cancellation in the upper tail.
func imfNormalMass(a, b float64) float64 {
	if a > 0 {
		return imfNormalUpper(a) - imfNormalUpper(b)
	}
	return imfNormalLower(b) - imfNormalLower(a)
}

// Sample draws a mass in M☉: one uniform number picks the segment by its
// number share and, rescaled, inverts that segment's CDF.
func (f *imfPieces) Sample(r *rand.Rand) float64 {
	u := r.Float64()
	i := 0
	for i < f.n-1 && u >= f.cumShare[i] {
		i++
	}
	s := &f.seg[i]
	return s.inverse((u - s.below) * s.invShare)
}

// PDF is the normalised dN/dm in 1/M☉, zero outside the mass range.
func (f *imfPieces) PDF(massMsun float64) float64 {
	if !(massMsun >= f.minMsun && massMsun <= f.maxMsun) {
		return 0
	}
	for i := 0; i < f.n; i++ {
		if massMsun <= f.seg[i].hi {
			return f.seg[i].pdf(massMsun) / f.total
		}
	}
	return 0
}

// CDF is the fraction of stars with mass ≤ massMsun.
func (f *imfPieces) CDF(massMsun float64) float64 {
	switch {
	case math.IsNaN(massMsun):
		return math.NaN()
	case massMsun <= f.minMsun:
		return 0
	case massMsun >= f.maxMsun:
		return 1
	}
	prev := 0.0
	for i := 0; i < f.n; i++ {
		s := &f.seg[i]
		if massMsun <= s.hi {
			return prev + s.number(massMsun)/f.total
		}
		prev = f.cumShare[i]
	}
	return 1
}

// MeanMass is the mean mass over the range in M☉, from closed-form integrals.
func (f *imfPieces) MeanMass() float64 { return f.meanMassMsun }

// MassRange returns the range the IMF was built over, in M☉.
func (f *imfPieces) MassRange() (minMsun, maxMsun float64) { return f.minMsun, f.maxMsun }
