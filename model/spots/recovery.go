package spots

import (
	"fmt"
	"math"
	"math/rand/v2"
)

// Alias codes returned by Recover.
const (
	AliasNone   = 0 // the true period, scattered
	AliasHalf   = 1 // half the true period (two similar spot groups)
	AliasDouble = 2 // twice the true period
)

// RecoveryOptions describe how a period analysis misreports a period: a
// relative scatter, Gaussian in ln P, and harmonics. A periodogram of a
// star with spots on opposite hemispheres peaks at P/2; an
// autocorrelation analysis sometimes locks onto 2P.
type RecoveryOptions struct {
	RelScatter float64 // standard deviation of ln(P_measured/P_alias)
	HalfProb   float64 // probability of reporting P/2
	DoubleProb float64 // probability of reporting 2P
}

// DefaultRecoveryOptions returns 5 % scatter, 5 % half-period and 2 %
// double-period aliases [common practice, no source: injection–recovery
// tests of periodogram and autocorrelation pipelines report a few-percent
// precision and alias rates of this order].
func DefaultRecoveryOptions() RecoveryOptions {
	return RecoveryOptions{RelScatter: 0.05, HalfProb: 0.05, DoubleProb: 0.02}
}

// Validate reports options that are not probabilities or scatters.
func (o RecoveryOptions) Validate() error {
	switch {
	case !(o.RelScatter >= 0) || math.IsInf(o.RelScatter, 1):
		return fmt.Errorf("spots: recovery RelScatter must be finite and ≥ 0, got %g", o.RelScatter)
	case !(o.HalfProb >= 0) || !(o.DoubleProb >= 0) || !(o.HalfProb+o.DoubleProb <= 1):
		return fmt.Errorf("spots: recovery HalfProb (%g) and DoubleProb (%g) must be ≥ 0 and sum to at most 1", o.HalfProb, o.DoubleProb)
	}
	return nil
}

// Recover returns the period an analysis would report for a star of true
// period trueP (d), drawing one uniform and then one normal deviate from r
// (r.Float64, then r.NormFloat64: a generator that skips Recover for an
// undetected star draws the same two to keep its stream aligned), and
// which alias it picked. Validate opts once, not per star; a non-positive
// or NaN trueP gives NaN.
func Recover(trueP float64, r *rand.Rand, opts RecoveryOptions) (measuredP float64, alias int) {
	u := r.Float64()
	z := r.NormFloat64()
	if !(trueP > 0) {
		return math.NaN(), AliasNone
	}
	p := trueP
	switch {
	case u < opts.HalfProb:
		p, alias = 0.5*trueP, AliasHalf
	case u < opts.HalfProb+opts.DoubleProb:
		p, alias = 2*trueP, AliasDouble
	}
	return p * math.Exp(opts.RelScatter*z), alias
}
