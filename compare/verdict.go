package compare

import (
	"fmt"
	"math"
)

// verdict turns a test result into a strength and a sentence. The
// thresholds are pStrong, pModerate and pWeak on the bootstrap p-value.
func verdict(r *BurstResult) (strength, text string) {
	pText := fmt.Sprintf("bootstrap p = %s from %d replicates", formatP(r.PValue), r.Replicates)
	floor := r.PValue <= 1/float64(r.Replicates+1)+1e-15
	if floor {
		pText = fmt.Sprintf("bootstrap p = %s, none of %d replicates reaching the observed LR", formatP(r.PValue), r.Replicates)
		if r.PValue > pStrong {
			pText += ", so more replicates could lower p"
		}
	}
	at := ""
	if r.AgeParam != "" {
		if r.AgeInterval.Hi68 > r.AgeInterval.Lo68 {
			at = " at " + formatAge(r.AgeInterval) + " Gyr"
		} else if i := indexOf(r.Burst.Names, r.AgeParam); i >= 0 {
			at = fmt.Sprintf(" at %.3g Gyr", r.Burst.Theta[i])
		}
	}
	dl := fmt.Sprintf("Δln L = %.1f", r.DeltaLogL)
	switch {
	case r.PValue <= pStrong:
		return "strong", fmt.Sprintf("The catalog prefers a burst%s (%s; %s); a smooth history is ruled out at > 3σ.", at, pText, dl)
	case r.PValue <= pModerate:
		return "moderate", fmt.Sprintf("The catalog favours a burst%s (%s; %s, %.1fσ); a smooth history is disfavoured but not ruled out at 3σ.", at, pText, dl, r.Significance)
	case r.PValue <= pWeak:
		return "weak", fmt.Sprintf("Weak evidence for a burst%s (%s; %s, %.1fσ): a hint, not enough to rule out a smooth history.", at, pText, dl, r.Significance)
	}
	return "none", fmt.Sprintf("No evidence for a burst: the best burst%s improves the fit (%s) no more than smooth-history mocks do by chance (%s).", at, dl, pText)
}

func indexOf(names []string, s string) int {
	for i, n := range names {
		if n == s {
			return i
		}
	}
	return -1
}

func formatP(p float64) string {
	if p >= 0.1 {
		return fmt.Sprintf("%.2f", p)
	}
	return fmt.Sprintf("%.2g", p)
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
