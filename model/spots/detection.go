package spots

import (
	"fmt"
	"math"
)

// Detection decides how likely a survey is to find a rotation period.
//
// The signal-to-noise of a sinusoid of semi-amplitude A fitted to N
// evenly sampled points of white noise σ is A/σ · sqrt(N/2), since the
// least-squares amplitude has standard error σ sqrt(2/N) (common practice).
// Real spot signals evolve and sit on red noise, so the threshold is set
// well above what white noise alone would demand. The probability rises
// smoothly around ThresholdSNR,
//
//	p = 1 / (1 + (ThresholdSNR / SNR)^Sharpness),
//
// a logistic curve in ln SNR, and is zero unless the baseline holds at
// least MinCycles rotations.
type Detection struct {
	Noise        NoiseModel
	BaselineD    float64 // length of the light curve (d)
	CadenceD     float64 // time between points (d)
	ThresholdSNR float64 // SNR at which p = 1/2
	Sharpness    float64 // logistic slope in ln SNR; p = 1/(1+2^−k) at twice the threshold
	MinCycles    float64 // rotations the baseline must hold
}

// DefaultDetection returns a 120-day, 45-minute-cadence light curve with
// DefaultNoiseModel, threshold SNR 10, sharpness 4 (p ≈ 6 % at half the
// threshold, ≈ 94 % at twice it) and at least 3 cycles [common practice,
// no source: periodogram searches are usually trusted only for a few
// cycles and for peaks well above the white-noise expectation].
func DefaultDetection() Detection {
	return Detection{
		Noise:        DefaultNoiseModel(),
		BaselineD:    120,
		CadenceD:     1.0 / 32,
		ThresholdSNR: 10,
		Sharpness:    4,
		MinCycles:    3,
	}
}

// Validate reports parameters that cannot describe a survey.
func (d Detection) Validate() error {
	if err := d.Noise.Validate(); err != nil {
		return err
	}
	switch {
	case !(d.BaselineD > 0) || math.IsInf(d.BaselineD, 1):
		return fmt.Errorf("spots: detection BaselineD must be positive and finite (days), got %g", d.BaselineD)
	case !(d.CadenceD > 0) || !(d.CadenceD <= d.BaselineD):
		return fmt.Errorf("spots: detection CadenceD must be positive and no longer than BaselineD (%g d), got %g", d.BaselineD, d.CadenceD)
	case !(d.ThresholdSNR > 0) || math.IsInf(d.ThresholdSNR, 1):
		return fmt.Errorf("spots: detection ThresholdSNR must be positive and finite, got %g", d.ThresholdSNR)
	case !(d.Sharpness > 0) || math.IsInf(d.Sharpness, 1):
		return fmt.Errorf("spots: detection Sharpness must be positive and finite, got %g", d.Sharpness)
	case !(d.MinCycles >= 0) || math.IsInf(d.MinCycles, 1):
		return fmt.Errorf("spots: detection MinCycles must be finite and ≥ 0, got %g", d.MinCycles)
	}
	return nil
}

// Cadences returns the number of points N = BaselineD/CadenceD.
func (d Detection) Cadences() float64 { return d.BaselineD / d.CadenceD }

// SNR returns A/σ · sqrt(N/2) for semi-amplitude ampPpm at magnitude mag.
func (d Detection) SNR(ampPpm, mag float64) float64 {
	return ampPpm / d.Noise.PpmPerCadence(mag) * math.Sqrt(0.5*d.BaselineD/d.CadenceD)
}

// Probability returns the chance that a period periodD with semi-amplitude
// ampPpm is detected in a star of magnitude mag. Non-positive or NaN
// inputs give 0.
func (d Detection) Probability(ampPpm, mag, periodD float64) float64 {
	return d.ProbabilityAtNoise(ampPpm, d.Noise.PpmPerCadence(mag), periodD)
}

// ProbabilityAtNoise is Probability for a star whose noise per cadence,
// Noise.PpmPerCadence(mag), is already known: a generator that records the
// noise anyway saves working it out twice.
func (d Detection) ProbabilityAtNoise(ampPpm, noisePpm, periodD float64) float64 {
	return d.Log().ProbabilityAtNoise(ampPpm, noisePpm, math.Log(periodD))
}

// LogDetection is a Detection prepared for many stars whose periods are
// known by their logarithm (as the population's rotations are): the
// signal-to-noise factor √(N/2) and the longest period the baseline holds,
// ln(BaselineD/MinCycles), are worked out once.
type LogDetection struct {
	threshold, sharpness float64
	snrScale, lnMaxP     float64
}

// Log returns d prepared for periods known by their logarithm.
func (d Detection) Log() LogDetection {
	return LogDetection{threshold: d.ThresholdSNR, sharpness: d.Sharpness,
		snrScale: math.Sqrt(0.5 * d.BaselineD / d.CadenceD), lnMaxP: math.Log(d.BaselineD / d.MinCycles)}
}

// TooLong reports whether a period of ln P = lnP is longer than the
// baseline holds MinCycles times.
func (l LogDetection) TooLong(lnP float64) bool { return lnP > l.lnMaxP }

// ProbabilityAtNoise is Detection.ProbabilityAtNoise for a period of
// ln P = lnP (days): 0 for no period (lnP NaN or −Inf), no amplitude, or a
// period longer than the baseline holds MinCycles times.
func (l LogDetection) ProbabilityAtNoise(ampPpm, noisePpm, lnP float64) float64 {
	if !(lnP > math.Inf(-1)) || !(ampPpm > 0) || l.TooLong(lnP) {
		return 0
	}
	snr := ampPpm / noisePpm * l.snrScale
	if !(snr > 0) {
		return 0
	}
	return 1 / (1 + power(l.threshold/snr, l.sharpness))
}

// power returns x^k for x ≥ 0: by repeated squaring (and one square root)
// when k is a whole or half-whole number in (0, 64] — detection sharpness
// and amplitude slopes usually are — otherwise as exp(k ln x).
func power(x, k float64) float64 {
	if n := int(2 * k); float64(n) == 2*k && n >= 1 && n <= 128 {
		p := 1.0
		if n&1 != 0 {
			p = math.Sqrt(x)
		}
		for n >>= 1; n != 0; n >>= 1 {
			if n&1 != 0 {
				p *= x
			}
			x *= x
		}
		return p
	}
	return math.Exp(k * math.Log(x))
}
