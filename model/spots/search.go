package spots

import (
	"fmt"
	"math"
)

// SearchCompleteness is the share of periods a survey's period search
// finds beyond what the light curve's signal-to-noise allows (Detection):
// slow rotators are lost to spot evolution, to detrending that removes
// long-period power and to red noise, none of which the white-noise
// signal-to-noise sees. Real pipelines measure this loss by injecting
// and recovering signals and find it falls steeply with period [common
// practice, no source]; how it depends on color is survey-specific. It is
// a logistic in ln P,
//
//	ε = 1 / (1 + (P/P½)^Steepness),   P½ = HalfPeriodD · (τ_c/τ_c☉)^TurnoverPower,
//
// so TurnoverPower 0 is a loss at a fixed period whatever the star, 1 a
// loss at a fixed Rossby number, and values between a loss that moves
// partly with the convective turnover time τ_c. HalfPeriodD 0 means no
// such loss (ε = 1): the scenarios' default, kept so that a fit can free
// it as a nuisance parameter of selection.
//
// RossbyBands is a second, free-form factor for a loss whose shape is not
// known: the efficiency at the scaled periods RossbyNodesD of
// x = P·(τ_c☉/τ_c)^TurnoverPower (with power 1 one node is one Rossby
// number; a survey whose loss moves less with color than τ_c does needs
// a lower power), linear in ln x between nodes and flat beyond the end
// nodes. Templates depend linearly on each
// node's value (a star counts with its detection probability and lies
// between two nodes), so the quadratic template expansion of a joint fit
// is exact in them and needs no starting grid, unlike the logistic's half
// period (the fit as a whole can still end on a local maximum through the
// other parameters). Empty: no such loss.
type SearchCompleteness struct {
	HalfPeriodD   float64 // P½ for a star of the Sun's turnover time (d); 0 = no loss
	TurnoverPower float64 // how P½ scales with τ_c
	Steepness     float64 // logistic slope in ln P

	RossbyBands []float64 // efficiency at RossbyNodesD, each in [0, 1]; empty = 1 everywhere
}

// RossbyNodesD are the scaled periods x (days; see SearchCompleteness) at which
// SearchCompleteness.RossbyBands gives the efficiency: a factor of two
// apart, from where nearly every period survives to beyond the slowest
// rotators of a few-Gyr-old K dwarf (the choice of nodes is ours).
var RossbyNodesD = [...]float64{3, 6, 12, 24, 48, 96}

// Enabled reports whether the search loses any periods.
func (s SearchCompleteness) Enabled() bool { return s.HalfPeriodD > 0 || len(s.RossbyBands) > 0 }

// NeedsTurnover reports whether Efficiency reads its tauRatio argument.
func (s SearchCompleteness) NeedsTurnover() bool {
	return s.TurnoverPower != 0 && (len(s.RossbyBands) > 0 || s.HalfPeriodD > 0)
}

// Validate reports parameters that cannot describe a completeness; keys a
// completeness does not read (the steepness without a half period, the
// power without any loss) are not checked.
func (s SearchCompleteness) Validate() error {
	if !(s.HalfPeriodD >= 0) || math.IsInf(s.HalfPeriodD, 1) {
		return fmt.Errorf("spots: search completeness HalfPeriodD must be finite and ≥ 0 (days; 0 = no loss), got %g", s.HalfPeriodD)
	}
	if n := len(s.RossbyBands); n != 0 && n != len(RossbyNodesD) {
		return fmt.Errorf("spots: search completeness RossbyBands holds %d values; want one per node of RossbyNodesD (%d) or none", n, len(RossbyNodesD))
	}
	for k, e := range s.RossbyBands {
		if !(e >= 0 && e <= 1) {
			return fmt.Errorf("spots: search completeness RossbyBands[%d] (at %g d) = %g; an efficiency lies in [0, 1]", k, RossbyNodesD[k], e)
		}
	}
	if !s.Enabled() {
		return nil // no loss: the other keys are not read
	}
	if !(s.TurnoverPower >= 0) || !(s.TurnoverPower <= 3) {
		return fmt.Errorf("spots: search completeness TurnoverPower must be in [0, 3] (0: a fixed period, 1: a fixed Rossby number), got %g", s.TurnoverPower)
	}
	if s.HalfPeriodD > 0 && (!(s.Steepness > 0) || !(s.Steepness <= 50)) {
		return fmt.Errorf("spots: search completeness Steepness must be in (0, 50] (logistic slope in ln P), got %g", s.Steepness)
	}
	return nil
}

// Efficiency returns ε for a period periodD of a star whose turnover time
// is tauRatio = τ_c/τ_c☉ (read only when NeedsTurnover). A star without a
// turnover time (tauRatio NaN) when one is needed, or a non-positive
// period, gives 0; a disabled completeness gives 1.
func (s SearchCompleteness) Efficiency(periodD, tauRatio float64) float64 {
	if !s.Enabled() {
		return 1
	}
	if !(periodD > 0) || (s.NeedsTurnover() && !(tauRatio > 0)) {
		return 0
	}
	scale := s.scale(tauRatio)
	eff := 1.0
	if len(s.RossbyBands) > 0 {
		eff = s.bandEfficiency(BandNodes(periodD / scale))
	}
	if s.HalfPeriodD == 0 {
		return eff
	}
	return eff / (1 + math.Exp(s.Steepness*math.Log(periodD/(s.HalfPeriodD*scale))))
}

// scale returns (τ_c/τ_c☉)^TurnoverPower for tauRatio = τ_c/τ_c☉.
func (s SearchCompleteness) scale(tauRatio float64) float64 {
	switch s.TurnoverPower {
	case 0:
		return 1
	case 1:
		return tauRatio // the default: spare an exp and a log per star
	}
	return math.Exp(s.TurnoverPower * math.Log(tauRatio))
}

// SplitBands returns the two parts of Efficiency: rest, everything but
// the RossbyBands factor, and the nodes k, k+1 with the weight f of the
// upper one, so that Efficiency = rest·((1−f)·RossbyBands[k] +
// f·RossbyBands[k+1]) when bands are set. It is how templates get their
// derivatives in each node's value from one pass over the stars: a star
// adds rest·(1−f) to node k's and rest·f to node k+1's. bands is false
// (and k, f unset) when no band factor applies — none is set, or rest is
// already 0.
func (s SearchCompleteness) SplitBands(periodD, tauRatio float64) (rest float64, k int, f float64, bands bool) {
	if !s.Enabled() {
		return 1, 0, 0, false
	}
	if !(periodD > 0) || (s.NeedsTurnover() && !(tauRatio > 0)) {
		return 0, 0, 0, false
	}
	scale := s.scale(tauRatio)
	rest = 1
	if s.HalfPeriodD > 0 {
		rest = 1 / (1 + math.Exp(s.Steepness*math.Log(periodD/(s.HalfPeriodD*scale))))
	}
	if len(s.RossbyBands) == 0 {
		return rest, 0, 0, false
	}
	k, f = BandNodes(periodD / scale)
	return rest, k, f, true
}

// bandEfficiency is RossbyBands interpolated at node k with weight f on
// node k+1 (exactly the end node's value beyond the last).
func (s SearchCompleteness) bandEfficiency(k int, f float64) float64 {
	if f == 1 {
		return s.RossbyBands[k+1]
	}
	return s.RossbyBands[k] + f*(s.RossbyBands[k+1]-s.RossbyBands[k])
}

// BandNodes returns where a scaled period x lies among RossbyNodesD: the
// lower node k of the pair it lies between and its weight f ∈ [0, 1] on
// node k+1, linear in ln x; flat beyond the end nodes (f = 0 at the first
// pair's lower node, 1 at the last pair's upper node).
func BandNodes(x float64) (k int, f float64) {
	last := len(RossbyNodesD) - 1
	switch {
	case x <= RossbyNodesD[0]:
		return 0, 0
	case x >= RossbyNodesD[last]:
		return last - 1, 1
	}
	// The nodes are 3·2^k d: one logarithm places x (this runs for every
	// detected star of every re-observation).
	u := math.Log(x/RossbyNodesD[0]) * (1 / math.Ln2)
	k = min(int(u), last-1)
	return k, min(u-float64(k), 1)
}
