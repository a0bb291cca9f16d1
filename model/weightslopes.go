package model

import (
	"fmt"
	"math"
)

// A fit's side points in the spots' slope, the detection threshold and
// the binary share were a third of its re-observations, yet none of those
// parameters (nor the spots' saturated amplitude and scatter or the
// detection's sharpness) moves a stored star: each changes only how
// much the star counts — its detection probability or its weight. The
// derivatives of a star's count in them are closed forms of what the
// centre's pass already has, so ObserveSlopes gives them from that pass
// (ObserveOptions.WeightSlopes) and a fit's expansion needs no
// re-observation for them.
//
// The closed forms. The detection probability before the search's loss is
// P = 1/(1 + (T/S)^k) (spots.Detection.ProbabilityAtNoise), T the
// threshold, k the sharpness, S the signal-to-noise ratio, proportional
// to the amplitude A = A_sat·10^(σz)·(Ro/Ro_sat)^(−s) above saturation
// (spots.AmplitudeModel.Draw). With D = dP/d ln S = k·P·(1 − P) and
// d²P/d(ln S)² = k(1 − 2P)·D:
//
//	∂P/∂T = −D/T,                 ∂²P/∂T² = (k(1 − 2P) + 1)·D/T²
//	∂P/∂s = −D·ln(Ro/Ro_sat),     ∂²P/∂s² = k(1 − 2P)·D·ln²(Ro/Ro_sat)
//	∂P/∂A_sat = D/A_sat,          ∂²P/∂A_sat² = (k(1 − 2P) − 1)·D/A_sat²
//	∂P/∂k = −x·P(1 − P),          ∂²P/∂k² = x²·P(1 − P)(1 − 2P)
//	∂P/∂σ = D·z·ln 10,            ∂²P/∂σ² = k(1 − 2P)·D·(z·ln 10)²
//
// with x = ln(T/S) = ln((1 − P)/P)/k, read back from P itself, and z the
// star's deviate of the amplitude's scatter σ (dex).
//
// (the slope's zero at or below saturation, where A does not depend on
// it). The saturation Ro_sat itself is left to side points: a star's
// ∂P/∂Ro_sat jumps from D·s/Ro_sat to 0 as Ro_sat passes its Rossby
// number, so the counts' second derivative holds a term from the stars at
// Ro = Ro_sat that no star's own derivatives give. A star's count is its weight times P times the search's
// factor, which none of these parameters touches. The binary share λ
// re-weights a star by λf/(λ₀f) if it has a companion and by
// (1 − λf)/(1 − λ₀f) if not (f its mass's binary fraction, λ₀ the run's
// share; Observe): linear in λ while λf < 1, which holds over the share's
// whole range [0, 2] as f ≤ 0.5 (binaryFractionNodes).

// WeightParam names a parameter that changes only how much each stored
// star counts.
type WeightParam int

const (
	BinaryShare        WeightParam = iota // Binaries.FractionScale (counts are linear in it)
	SpotSlope                             // Spots.Slope
	DetectionThreshold                    // Survey.Detect.ThresholdSNR
	SpotAmplitude                         // Spots.AmpSatPpm
	DetectionSharpness                    // Survey.Detect.Sharpness
	SpotScatter                           // Spots.ScatterDex
)

func (w WeightParam) String() string {
	switch w {
	case BinaryShare:
		return "binary share"
	case SpotSlope:
		return "spot amplitude slope"
	case DetectionThreshold:
		return "detection threshold"
	case SpotAmplitude:
		return "saturated spot amplitude"
	case DetectionSharpness:
		return "detection sharpness"
	case SpotScatter:
		return "spot amplitude scatter"
	}
	return fmt.Sprintf("WeightParam(%d)", int(w))
}

// WeightSlope asks ObserveSlopes for the first derivative of the counts in
// a weight parameter, or with Second its second derivative.
type WeightSlope struct {
	Param  WeightParam
	Second bool
}

// checkWeightSlopes reports asked derivatives ObserveSlopes cannot give.
func checkWeightSlopes(ws []WeightSlope, baseScale float64) error {
	for _, w := range ws {
		switch {
		case w.Param < BinaryShare || w.Param > SpotScatter:
			return fmt.Errorf("model: no derivative in %v: want the binary share, the spots' slope, saturated amplitude or scatter, the detection threshold or sharpness", w.Param)
		case w.Param == BinaryShare && !(baseScale > 0):
			return fmt.Errorf("model: a derivative in the binary share needs the run's share (ObserveOptions.BaseFractionScale > 0), not %g", baseScale)
		}
	}
	return nil
}

// binaryWeightSlope returns ∂weight/∂λ of a stored star with binary
// fraction f (a companion: comp), at share scale of a run at base (see
// Observe's weights).
func binaryWeightSlope(f, base, scale float64, comp bool) float64 {
	f0 := min(1, base*f)
	if !(scale*f < 1) {
		return 0 // the fraction is held at 1
	}
	if comp {
		return f / f0
	}
	if f0 < 1 {
		return -f / (1 - f0)
	}
	return 0
}

// addWeightSlopes adds a star's derivatives in ob.weightSlopes, placed at
// fine bin base with weight frac on the next, to fs (one per entry):
// weight is its weight, dWeight that weight's derivative in the binary
// share.
func (ob *observer) addWeightSlopes(fs [][]float64, base int, frac, weight, dWeight float64, rot *rotation) {
	p := ob.obs
	P := rot.preSearch
	var k, d float64 // the sharpness, and D = dP/d ln S
	if p.Spots != nil && P > 0 {
		k = p.Survey.Detect.Sharpness
		d = k * P * (1 - P)
	}
	scale := weight * rot.search // what multiplies P in the star's count
	for i, ws := range ob.weightSlopes {
		var v float64
		switch ws.Param {
		case BinaryShare:
			if !ws.Second {
				v = dWeight * rot.prob
			}
		case DetectionThreshold:
			t := p.Survey.Detect.ThresholdSNR
			if ws.Second {
				v = (k*(1-2*P) + 1) * d / (t * t)
			} else {
				v = -d / t
			}
			v *= scale
		case SpotAmplitude:
			if d == 0 { // also when there is no spot model: nothing to move
				continue
			}
			a := p.Spots.AmpSatPpm
			if ws.Second {
				v = (k*(1-2*P) - 1) * d / (a * a)
			} else {
				v = d / a
			}
			v *= scale
		case SpotScatter:
			g := rot.spotZ * math.Ln10
			if ws.Second {
				v = k * (1 - 2*P) * d * g * g
			} else {
				v = d * g
			}
			v *= scale
		case DetectionSharpness:
			if d == 0 {
				continue
			}
			x := math.Log((1-P)/P) / k
			if math.IsInf(x, 0) || math.IsNaN(x) {
				continue // P within rounding of 0: no star to move
			}
			if ws.Second {
				v = x * x * P * (1 - P) * (1 - 2*P)
			} else {
				v = -x * P * (1 - P)
			}
			v *= scale
		case SpotSlope:
			lnRoSat := ob.plan.amp.LnRoSat()
			if d == 0 || !(rot.lnRo > lnRoSat) { // as LogAmplitude's power law
				continue
			}
			l := rot.lnRo - lnRoSat
			if ws.Second {
				v = k * (1 - 2*P) * d * l * l
			} else {
				v = -d * l
			}
			v *= scale
		}
		if v == 0 {
			continue
		}
		fs[i][base] += v * (1 - frac)
		fs[i][base+1] += v * frac
	}
}
