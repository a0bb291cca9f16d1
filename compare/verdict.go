package compare

import (
	"fmt"
	"math"
	"strings"

	"gonum.org/v1/gonum/stat/distuv"
)

// Adequacy and misfit rules of the verdict.
const (
	// AdequacyLevel: a model describes the catalog when its deviance is
	// reached by more than 5 % of its own bootstrap replicates. At 1 %
	// (before), a smooth catalog of the independent model fitted with its
	// detection held at the truth passed as described (p = 0.04, excess
	// deviance 43) and its burst at 2.8 Gyr, gaining 2Δln L = 24,
	// came out "moderate" — judged against its misfit it is "unreliable"
	// (docs/independent-check.md).
	AdequacyLevel = 0.05
	// misfitFactor: when the model is not adequate, a burst whose
	// likelihood ratio is no larger than this many times the misfit that
	// remains (the excess deviance D − mean D*) is no evidence of anything:
	// an unmodelled ingredient that leaves that much misfit could as well
	// have produced the improvement. The choice of 1 is the plainest
	// reading of "comparable"; it is calibrated in the tests against
	// catalogs from an independent model (internal/othermodel).
	misfitFactor = 1.0
)

// verdict turns a test result into a strength, the reason for an
// "unreliable" one, the calibration it rests on, and a sentence. The
// thresholds are pStrong, pModerate and pWeak on the bootstrap p-value —
// of the likelihood ratio when the burst model describes the catalog, of
// the quasi-likelihood ratio LR/φ̂ when it does not.
func verdict(r *BurstResult) (strength, reason, calibration, text string) {
	a := r.AdequacyBurst
	adequate := a.Replicates == 0 || a.Adequate(AdequacyLevel)
	p, calibration := r.PValue, "bootstrap"
	if !adequate {
		p, calibration = r.PValueQuasi, "quasi-likelihood"
	}
	pText := fmt.Sprintf("bootstrap %s from %d replicates", pIs(p), r.Replicates)
	floor := p <= 1/float64(r.Replicates+1)+1e-15
	if floor {
		pText = fmt.Sprintf("bootstrap %s, none of %d replicates reaching the observed ratio", pIs(p), r.Replicates)
		if p > pStrong {
			pText += ", so more replicates could lower p"
		}
	}
	at := ""
	if r.AgeParam != "" {
		if r.AgeInterval.Hi68 > r.AgeInterval.Lo68 {
			at = " at " + formatAge(r.AgeInterval) + " Gyr"
			if r.AgeCalibrationSigma > 0 {
				at += fmt.Sprintf(" (the spin-down law's calibration, ±%.0f %% in age, included)", 100*r.AgeCalibrationSigma)
			}
		} else if i := indexOf(r.Burst.Names, r.AgeParam); i >= 0 {
			at = fmt.Sprintf(" at %.3g Gyr", r.Burst.Theta[i])
		}
	}
	dl := fmt.Sprintf("Δln L = %.1f", r.DeltaLogL)
	if !adequate {
		dl += fmt.Sprintf(", LR/φ̂ = %.1f", r.LR/r.Dispersion)
	}
	switch {
	case p <= pStrong:
		strength = "strong"
	case p <= pModerate:
		strength = "moderate"
	case p <= pWeak:
		strength = "weak"
	default:
		strength = "none"
	}
	fitText := fmt.Sprintf("The burst model describes the catalog (deviance %.0f against %.0f ± %.0f from counting noise, %s).",
		a.Deviance, a.ReplicateMean, a.ReplicateSD, pIs(a.PValue))
	misfit := ""
	if !adequate {
		misfit = fmt.Sprintf("the best fit leaves a deviance of %.0f where counting noise gives %.0f ± %.0f (%s; dispersion φ̂ = %.2f)%s",
			a.Deviance, a.ReplicateMean, a.ReplicateSD, pIs(a.PValue), a.Dispersion, worstRegions(a))
	}
	if !adequate && strength != "none" && r.LR <= misfitFactor*a.Excess {
		reason = fmt.Sprintf("the burst improves the fit by 2Δln L = %.1f, no more than the misfit the best model still leaves (excess deviance %.1f)", r.LR, a.Excess)
		return "unreliable", reason, calibration, fmt.Sprintf(
			"The models do not describe the catalog well enough to decide: %s. No burst is claimed: %s, so an ingredient the models lack could as well account for it. Free the physics and selection parameters the misfit points to ([[compare.free]]) or use the likelihood conditional on color, then test again.", misfit, reason)
	}
	var sentence string
	switch strength {
	case "strong":
		sentence = fmt.Sprintf("the catalog prefers a burst%s (%s; %s); a smooth history is ruled out at > 3σ.", at, pText, dl)
	case "moderate":
		sentence = fmt.Sprintf("the catalog favours a burst%s (%s; %s, %.1fσ); a smooth history is disfavoured but not ruled out at 3σ.", at, pText, dl, distuvSigma(p))
	case "weak":
		sentence = fmt.Sprintf("weak evidence for a burst%s (%s; %s, %.1fσ): a hint, not enough to rule out a smooth history.", at, pText, dl, distuvSigma(p))
	default:
		sentence = fmt.Sprintf("no evidence for a burst: the best burst%s improves the fit (%s) no more than smooth-history mocks do by chance (%s).", at, dl, pText)
	}
	if strength != "none" && len(r.Strains) > 0 {
		names := make([]string, len(r.Strains))
		for i, s := range r.Strains {
			names[i] = s.Name
		}
		sentence += fmt.Sprintf(" Caution: the fit strains %s, so the burst's age may be biased beyond its interval.", strings.Join(names, ", "))
	}
	if strength != "none" {
		sentence += unconvergedCaution(r)
	}
	if !adequate {
		text = fmt.Sprintf("The models do not describe the catalog fully: %s. Judged against that misfit (quasi-likelihood), %s", misfit, sentence)
	} else {
		text = strings.ToUpper(sentence[:1]) + sentence[1:] + " " + fitText
	}
	if strength != "none" {
		// Rules that refuse a burst whatever its ratio, the edge first.
		for _, refuse := range []func(*BurstResult) (reason, advice string){onRangeEdge, ageUndetermined} {
			if reason, advice := refuse(r); reason != "" {
				return "unreliable", reason, calibration, fmt.Sprintf("No burst is claimed: %s. %s Without that check the test would read: %s", reason, advice, text)
			}
		}
	}
	return strength, "", calibration, text
}

// ageUndetermined gives, when the burst age's 95 % profile interval (the
// nuisance parameters refitted at every age, its levels scaled by the
// dispersion φ̂ when φ̂ > 1) reaches both ends of the age's free range, why
// no burst is claimed and what to do ("", "" otherwise). A burst that
// gains about as much placed anywhere in the range marks no event at any
// one age: its gain comes from something spread across the plane — misfit
// when the model is not adequate, a shape the smooth family lacks when it
// is — which a burst at any age can take a share of. Under a smooth
// history a burst's age is not identified at all (Davies 1987); the
// bootstrap calibrates the ratio for that, but not for what the model's
// own mocks lack. In the trials on the independent model's catalogs (the
// README's check and docs/independent-check.md; the intervals are in the
// runs' logs) this was so in 9 of the 35 fits of smooth catalogs whose
// profile the logs kept — all `unreliable` or without evidence already,
// one (smooth-02 of the fine-bins check) refused by the misfit rule by a
// margin of 1 in 2Δln L — and in none of the 73 fits of burst catalogs
// (nor of the 20 of the own-model control).
func ageUndetermined(r *BurstResult) (reason, advice string) {
	iv := r.AgeIntervalProfile
	lo, hi := r.AgeBounds[0], r.AgeBounds[1]
	if r.AgeParam == "" || !(hi > lo) || !(iv.Hi95 > iv.Lo95) {
		return "", ""
	}
	loEnd, _ := rangeEdge(iv.Lo95, lo, hi)
	hiEnd, _ := rangeEdge(iv.Hi95, lo, hi)
	if loEnd != "min" || hiEnd != "max" {
		return "", ""
	}
	reason = fmt.Sprintf("the burst's age is not determined: its 95 %% profile interval, %.3g–%.3g Gyr, spans the whole range searched, so a burst placed anywhere in it gains about as much and marks no event at any one age", iv.Lo95, iv.Hi95)
	a := r.AdequacyBurst
	if a.Replicates > 0 && !a.Adequate(AdequacyLevel) {
		return reason, "The gain likely comes from misfit spread across the plane (see where the misfit lives); free the physics and selection it points to, then test again."
	}
	return reason, "The gain likely comes from a shape the smooth history's family cannot take; give the smooth history more freedom (a free decline, another part), then test again."
}

// edgeTol is how near an edge of its free range, as a share of the
// range, a best burst age counts as on that edge.
const edgeTol = 0.01

// rangeEdge says where v lies against its free range [lo, hi]: on its
// young end ("min"), its old end ("max"), within edgeTol of the range, or
// inside it (""); and in words, "the youngest age its range allows
// (0.1 Gyr)". No range (hi ≤ lo) is inside.
func rangeEdge(v, lo, hi float64) (end, words string) {
	switch {
	case !(hi > lo):
		return "", ""
	case v-lo <= edgeTol*(hi-lo):
		return "min", fmt.Sprintf("the youngest age its range allows (%.3g Gyr)", lo)
	case hi-v <= edgeTol*(hi-lo):
		return "max", fmt.Sprintf("the oldest age its range allows (%.3g Gyr)", hi)
	}
	return "", ""
}

// onRangeEdge gives, when the best burst age lies on an edge of its free
// range, why no burst is claimed and what to do ("", "" otherwise). The
// fit would have moved the burst further, so its age is the range's and
// the burst marks no event: it is the history's family bent at its end.
// At the young edge the likeliest cause is stars younger than the range
// or the spin-down law describes — the law gives them no period, a real
// catalog (and the independent model of the check) holds them, and with
// the detection held a burst at the youngest allowed age took them on
// every smooth catalog tried, one of them `weak`
// (docs/independent-check.md); at the old edge it stands in for what the
// models lack at the longest periods, as on that check's smooth catalogs
// (bursts at 2.4–3.0 Gyr, the three looked at closely 0.02 Gyr wide).
// The bootstrap cannot see this: its mocks come from the model, whose
// young and old ends are what the fit made them. A real burst inside the
// range is not touched.
func onRangeEdge(r *BurstResult) (reason, advice string) {
	i := indexOf(r.Burst.Names, r.AgeParam)
	if i < 0 {
		return "", ""
	}
	end, where := rangeEdge(r.Burst.Theta[i], r.AgeBounds[0], r.AgeBounds[1])
	switch end {
	case "min":
		return fmt.Sprintf("the best burst lies at %s, so that age is the range's, not the catalog's; likely cause: stars younger than the range or the spin-down law describes", where),
			"Widen the range downward where the law allows it, or mask more of the young cells (mask_below_age_gyr), and test again."
	case "max":
		return fmt.Sprintf("the best burst lies at %s, so that age is the range's, not the catalog's; a burst there likely stands in for what the models lack among the oldest stars the range reaches — the longest periods, where the detection and the law are least certain — rather than marking an event", where),
			"Test again with a wider age range where the spin-down law allows it, and free the detection against period if it is held."
	}
	return "", ""
}

// unconvergedCaution is the verdict's caution when a fit stopped at its
// round limit while ln L was still rising (FitResult.StillRising; ""
// otherwise): an unfinished smooth fit inflates the likelihood ratio, an
// unfinished burst fit leaves the age where the search stopped.
func unconvergedCaution(r *BurstResult) string {
	var parts []string
	for _, f := range []struct {
		name string
		fit  FitResult
	}{{"smooth-history", r.Smooth}, {"with-burst", r.Burst}} {
		if f.fit.StillRising() {
			parts = append(parts, fmt.Sprintf("the %s fit stopped at its limit of %d expansions with ln L still rising by %.1f a round", f.name, f.fit.Rounds, f.fit.LastGain))
		}
	}
	if len(parts) == 0 {
		return ""
	}
	return fmt.Sprintf(" Caution: %s, so the likelihood ratio and the burst's age are those of where the search stopped, not of the maximum.", strings.Join(parts, " and "))
}

// WorstRegions names, for messages, up to two regions with the largest
// excess deviance (", worst in …"), or "" if none has any.
func WorstRegions(a Adequacy) string { return worstRegions(a) }

// worstRegions names up to two regions with the largest excess deviance.
func worstRegions(a Adequacy) string {
	var parts []string
	for _, reg := range a.Regions {
		if len(parts) == 2 || !(reg.Excess > 0) {
			break
		}
		parts = append(parts, fmt.Sprintf("%s (excess %.0f)", reg.Describe(), reg.Excess))
	}
	if len(parts) == 0 {
		return ""
	}
	return ", worst in " + strings.Join(parts, " and ")
}

// distuvSigma is the one-sided normal equivalent of p, floored at 0.
func distuvSigma(p float64) float64 {
	return math.Max(0, distuv.UnitNormal.Quantile(1-p))
}

func indexOf(names []string, s string) int {
	for i, n := range names {
		if n == s {
			return i
		}
	}
	return -1
}

// pIs writes "p = …" for a p-value in a verdict.
func pIs(p float64) string {
	if p < 1e-15 {
		// The normal tail underflows or is below what a tail
		// approximation can be trusted to; say so rather than print 0.
		return "p < 1e-15"
	}
	if p >= 0.1 {
		return fmt.Sprintf("p = %.2f", p)
	}
	return fmt.Sprintf("p = %.2g", p)
}

// formatAge writes best ± error (or +hi/−lo when the interval is lopsided
// by more than 30 %), rounded to the error's first significant digit.
func formatAge(iv Interval) string {
	up, down := iv.Hi68-iv.Best, iv.Best-iv.Lo68
	e := math.Max(math.Min(up, down), 1e-9)
	dec := max(0, 1-int(math.Floor(math.Log10(e)))-1)
	if e/math.Pow(10, math.Floor(math.Log10(e))) < 2 {
		dec++ // two digits when the error starts with a 1
	}
	if math.Abs(up-down) <= 0.3*math.Max(up, down) {
		return fmt.Sprintf("%.*f ± %.*f", dec, iv.Best, dec, 0.5*(up+down))
	}
	return fmt.Sprintf("%.*f +%.*f/−%.*f", dec, iv.Best, dec, up, dec, down)
}
