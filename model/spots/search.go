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
// period, gives 0; a disabled completeness gives 1. It is LogSearch's
// efficiency at the logarithms, so that a star gets the same factor
// whichever form its period came in.
func (s SearchCompleteness) Efficiency(periodD, tauRatio float64) float64 {
	return s.Log().Efficiency(math.Log(periodD), math.Log(tauRatio))
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
	return s.Log().SplitBands(math.Log(periodD), math.Log(tauRatio))
}

// LogSearch is a SearchCompleteness prepared for stars whose period and
// τ_c/τ_c☉ are known by their logarithms (as the population's rotations
// are): ln P½ is worked out once, the nodes are placed without a
// logarithm, and the logistic costs one exponential.
type LogSearch struct {
	s             SearchCompleteness
	on, tau, half bool
	lnHalf        float64
}

// Log returns s prepared for its log form.
func (s SearchCompleteness) Log() LogSearch {
	l := LogSearch{s: s, on: s.Enabled(), tau: s.NeedsTurnover(), half: s.HalfPeriodD > 0}
	if l.half {
		l.lnHalf = math.Log(s.HalfPeriodD)
	}
	return l
}

// lnScale returns ln of (τ_c/τ_c☉)^TurnoverPower, 0 for power 0 whatever
// lnTauRatio is.
func (l LogSearch) lnScale(lnTauRatio float64) float64 {
	switch l.s.TurnoverPower {
	case 0:
		return 0
	case 1:
		return lnTauRatio
	}
	return l.s.TurnoverPower * lnTauRatio
}

// usable reports whether a star of ln P = lnP and ln τ_c/τ_c☉ = lnTauRatio
// can be found at all: a period > 0, and a turnover time where one is read.
func (l LogSearch) usable(lnP, lnTauRatio float64) bool {
	return lnP > math.Inf(-1) && !math.IsNaN(lnP) && (!l.tau || lnTauRatio > math.Inf(-1) && !math.IsNaN(lnTauRatio))
}

// Efficiency is SearchCompleteness.Efficiency at ln P = lnP and
// ln(τ_c/τ_c☉) = lnTauRatio.
func (l LogSearch) Efficiency(lnP, lnTauRatio float64) float64 {
	if !l.on {
		return 1
	}
	if !l.usable(lnP, lnTauRatio) {
		return 0
	}
	lnScale := l.lnScale(lnTauRatio)
	eff := 1.0
	if len(l.s.RossbyBands) > 0 {
		eff = l.s.bandEfficiency(BandNodesLog(lnP - lnScale))
	}
	if !l.half {
		return eff
	}
	return eff / (1 + math.Exp(l.s.Steepness*(lnP-lnScale-l.lnHalf)))
}

// SplitBands is SearchCompleteness.SplitBands at the logarithms.
func (l LogSearch) SplitBands(lnP, lnTauRatio float64) (rest float64, k int, f float64, bands bool) {
	if !l.on {
		return 1, 0, 0, false
	}
	if !l.usable(lnP, lnTauRatio) {
		return 0, 0, 0, false
	}
	lnScale := l.lnScale(lnTauRatio)
	rest = 1
	if l.half {
		rest = 1 / (1 + math.Exp(l.s.Steepness*(lnP-lnScale-l.lnHalf)))
	}
	if len(l.s.RossbyBands) == 0 {
		return rest, 0, 0, false
	}
	k, f = BandNodesLog(lnP - lnScale)
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
func BandNodes(x float64) (k int, f float64) { return BandNodesLog(math.Log(x)) }

// lnNodeFirst and lnNodeLast are the logarithms of the end nodes.
var lnNodeFirst, lnNodeLast = math.Log(RossbyNodesD[0]), math.Log(RossbyNodesD[len(RossbyNodesD)-1])

// BandNodesLog is BandNodes at ln x = lnX. The nodes are 3·2^k d, so
// ln x places x without a search.
func BandNodesLog(lnX float64) (k int, f float64) {
	last := len(RossbyNodesD) - 1
	switch {
	case !(lnX > lnNodeFirst): // also NaN, as x ≤ 0 was
		return 0, 0
	case lnX >= lnNodeLast:
		return last - 1, 1
	}
	u := (lnX - lnNodeFirst) * (1 / math.Ln2)
	k = min(int(u), last-1)
	return k, min(u-float64(k), 1)
}
