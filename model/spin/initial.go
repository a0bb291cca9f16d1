package spin

import (
	"fmt"
	"math"
)

// PeriodShape names the form of the initial-period distribution.
type PeriodShape int

const (
	// LogUniform spreads initial periods uniformly in ln P over [MinD, MaxD].
	LogUniform PeriodShape = iota + 1
	// LogNormal is normal in log10 P with median MedianD and width SigmaDex,
	// truncated at ±3σ: the far tails would otherwise put stars beyond
	// break-up or at periods no young cluster shows.
	LogNormal
)

// lognormalTruncSigma is the truncation of the lognormal in units of σ,
// and lognormalLo the normal CDF there.
const lognormalTruncSigma = 3

var lognormalLo = 0.5 * math.Erfc(lognormalTruncSigma/math.Sqrt2)

// InitialPeriods is the distribution of rotation periods at the start age,
// when the disk releases the star. Stars draw a quantile u ∈ [0, 1) and
// take P0 = Quantile(u); drawing the quantile rather than the period keeps
// the median star, the calibration star, well defined.
type InitialPeriods struct {
	Shape    PeriodShape
	MinD     float64 // LogUniform: lower edge (d)
	MaxD     float64 // LogUniform: upper edge (d)
	MedianD  float64 // LogNormal: median (d)
	SigmaDex float64 // LogNormal: standard deviation of log10 P (dex)
}

// Validate reports a distribution that cannot be sampled.
func (d InitialPeriods) Validate() error {
	switch d.Shape {
	case LogUniform:
		if !(d.MinD > 0) || !(d.MaxD > d.MinD) || math.IsInf(d.MaxD, 1) {
			return fmt.Errorf("spin: log-uniform initial periods need 0 < MinD < MaxD < ∞ (days), got MinD=%g MaxD=%g", d.MinD, d.MaxD)
		}
	case LogNormal:
		if !(d.MedianD > 0) || math.IsInf(d.MedianD, 1) || !(d.SigmaDex >= 0) || math.IsInf(d.SigmaDex, 1) {
			return fmt.Errorf("spin: lognormal initial periods need MedianD > 0 (days) and finite SigmaDex ≥ 0, got MedianD=%g SigmaDex=%g", d.MedianD, d.SigmaDex)
		}
	default:
		return fmt.Errorf("spin: initial-period shape %d unknown; use LogUniform or LogNormal", int(d.Shape))
	}
	return nil
}

// Median returns the median initial period in days.
func (d InitialPeriods) Median() float64 { return d.Quantile(0.5) }

// Quantile returns the initial period (d) below which a fraction u of stars
// lie; u is clamped to [0, 1].
func (d InitialPeriods) Quantile(u float64) float64 {
	u = math.Min(math.Max(u, 0), 1)
	switch d.Shape {
	case LogUniform:
		return d.MinD * math.Exp(u*math.Log(d.MaxD/d.MinD))
	case LogNormal:
		// Map u onto the central part of the normal CDF between ±3σ.
		v := lognormalLo + u*(1-2*lognormalLo)
		z := math.Sqrt2 * math.Erfinv(2*v-1)
		return d.MedianD * math.Exp(math.Ln10*d.SigmaDex*z)
	}
	return math.NaN()
}
