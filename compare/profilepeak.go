package compare

import (
	"context"
	"fmt"
	"math"
	"slices"
)

// peakTol is how far in ln L a profile point must rise above the fit it
// was drawn about before the fit is checked against it: the 68 % level,
// so that a rise that would move the answer by less than its own 1σ does
// not cost a joint fit (on the independent model's catalogs the rises
// were 3–25; on the demo 0.15).
const peakTol = dLogL68

// confirmProfilePeak checks a joint fit against the profile of param
// drawn about it. The profile refits the nuisance parameters on the fit's
// expansion, which is exact only at the fit's own nuisance values; where
// the profile rises above the fit elsewhere, either the fit missed a
// higher maximum or the expansion misleads there (as a quadratic in each
// bin can when a ridge moves across bins). A joint fit from the profile's
// peak, its templates made exactly, tells which: a better answer replaces
// the fit (at most twice; the one it replaces joins OtherMaxima), and an
// answer no better leaves the fit as it was. like is left on the result.
func confirmProfilePeak(ctx context.Context, like *Likelihood, m HistoryModel, nu *Nuisance, f FitResult, param string, opts FitOptions) (FitResult, error) {
	idx := slices.Index(m.Names(), param)
	if nu.Dim() == 0 || idx < 0 || f.morph == nil {
		return f, nil
	}
	for range 2 {
		if err := useTemplates(like, f, nil); err != nil {
			return FitResult{}, err
		}
		_, peak, err := profileScan(like, m, param, f, nu, 1)
		if err != nil {
			return FitResult{}, err
		}
		if math.IsNaN(peak.Value) || peak.Fit.LogL < f.LogL+peakTol {
			break
		}
		theta := slices.Insert(slices.Clone(peak.Fit.Theta), idx, peak.Value)
		o := opts
		o.Starts, o.Init, o.NuisanceStart = 1, [][]float64{theta}, peak.Fit.Nuisance
		if opts.Stage != nil {
			opts.Stage(fmt.Sprintf("the profile of %s on the fit's expansion rises %.2f above the fit at %.4g; fitting from there with exact templates", param, peak.Fit.LogL-f.LogL, peak.Value))
		}
		g, err := FitJoint(ctx, like, m, nu, o)
		if err != nil {
			return FitResult{}, err
		}
		if !(g.LogL > f.LogL+peakTol) {
			break
		}
		g.OtherMaxima = append(g.OtherMaxima, f.OtherMaxima...)
		g.OtherMaxima = append(g.OtherMaxima, LocalMaximum{LogL: f.LogL, Theta: f.Theta, Nuisance: f.Nuisance, RoundLimit: f.RoundLimit, LastGain: f.LastGain})
		f = g
	}
	if err := like.UseFit(f); err != nil {
		return FitResult{}, err
	}
	return f, nil
}
