package compare

import (
	"cmp"
	"context"
	"fmt"
	"math"
	"slices"
)

// peakTol is how far in ln L a profile point must rise above the fit it
// was drawn about before the fit is checked against it: the 68 % level of
// ln L (of the quasi-likelihood only when φ̂ = 1), so that a rise that
// would move the answer by less than its own 1σ does not cost a joint
// fit (on the independent model's catalogs the first rises were 7–39,
// the second 1.4–13; on the demo 0.15).
const peakTol = dLogL68

// confirmProfilePeak checks a joint fit against the profile of param
// drawn about it. The profile refits the nuisance parameters on the fit's
// expansion, which is exact only at the fit's own nuisance values; where
// the profile's highest point rises peakTol or more above the fit, either
// the fit missed a higher maximum or the expansion misleads there (as a
// quadratic in each bin can when a ridge moves across bins). A joint fit
// from that point, its templates made exactly, tells which: any better
// answer replaces the fit (at most twice; the one it replaces joins
// OtherMaxima), and an answer no better leaves the fit as it was and the
// point's value in rejected. like is left on the result.
func confirmProfilePeak(ctx context.Context, like *Likelihood, m HistoryModel, nu *Nuisance, f FitResult, param string, opts FitOptions) (_ FitResult, rejected []float64, _ error) {
	idx := slices.Index(m.Names(), param)
	if nu.Dim() == 0 || idx < 0 || f.morph == nil {
		return f, nil, nil
	}
	for range 2 {
		if err := useTemplates(like, f, nil); err != nil {
			return FitResult{}, nil, err
		}
		_, peak, err := profileScan(like, m, param, f, nu, 1)
		if err != nil {
			return FitResult{}, nil, err
		}
		if math.IsNaN(peak.Value) || peak.Fit.LogL < f.LogL+peakTol {
			break
		}
		theta := slices.Insert(slices.Clone(peak.Fit.Theta), idx, peak.Value)
		// The expansion reached every data star there; the exact
		// templates may not (a re-observation at those values leaves
		// some catalog cell empty). Then the point is no fit at all, and
		// a joint fit could not even start from it.
		// Only reachability is asked here: the joint fit's first step
		// scores the point itself, on the same (cached) templates.
		reachable, err := reachableAt(ctx, like, nu, peak.Fit.Nuisance)
		if err != nil {
			return FitResult{}, nil, err
		}
		if !reachable {
			if opts.Stage != nil {
				opts.Stage(fmt.Sprintf("the profile of %s on the fit's expansion rises %.2f above the fit at %.4g, but the templates made exactly there leave data stars with no model stars: the point is set aside", param, peak.Fit.LogL-f.LogL, peak.Value))
			}
			rejected = append(rejected, peak.Value)
			break
		}
		o := opts
		o.Starts, o.Init, o.NuisanceStart = 1, [][]float64{theta}, peak.Fit.Nuisance
		if opts.Stage != nil {
			opts.Stage(fmt.Sprintf("the profile of %s on the fit's expansion rises %.2f above the fit at %.4g; fitting from there with exact templates", param, peak.Fit.LogL-f.LogL, peak.Value))
		}
		g, err := FitJoint(ctx, like, m, nu, o)
		if err != nil {
			return FitResult{}, nil, err
		}
		if !(g.LogL > f.LogL+1e-9) { // as searchFrom accepts a better centre
			rejected = append(rejected, peak.Value)
			break
		}
		f = supersede(g, f)
	}
	if err := like.UseFit(f); err != nil {
		return FitResult{}, nil, err
	}
	return f, rejected, nil
}

// reachableAt tells whether the templates made exactly at nuisance
// values v give every data star a model star; like is left on them.
func reachableAt(ctx context.Context, like *Likelihood, nu *Nuisance, v []float64) (bool, error) {
	t, _, err := nu.templatesAndSlopes(ctx, v)
	if err != nil {
		return false, err
	}
	return useAndReach(like, t)
}

// useAndReach puts like on templates t and tells whether they give every
// data star a model star.
func useAndReach(like *Likelihood, t *Templates) (bool, error) {
	if err := like.SetTemplates(t); err != nil {
		return false, err
	}
	return like.reachable(), nil
}

// asLocalMaximum is a fit kept among another's OtherMaxima.
func asLocalMaximum(f FitResult) LocalMaximum {
	return LocalMaximum{LogL: f.LogL, Theta: f.Theta, Nuisance: f.Nuisance, RoundLimit: f.RoundLimit, LastGain: f.LastGain}
}

// supersede returns better, a fit that replaces old, with old and old's
// other maxima among its own, best first (as FitResult.OtherMaxima
// promises).
func supersede(better, old FitResult) FitResult {
	better.OtherMaxima = append(append(slices.Clone(better.OtherMaxima), old.OtherMaxima...), asLocalMaximum(old))
	slices.SortStableFunc(better.OtherMaxima, func(a, b LocalMaximum) int { return cmp.Compare(b.LogL, a.LogL) })
	return better
}

// searchAgain searches m once more, from another fit's nuisance values
// (other, of model from; m's history from the parameters the two share),
// and returns the better of f and that answer, the new one superseding f.
// A likelihood ratio between a fit searched twice and one searched once
// can favour the one with the extra search; the burst test and the
// comparison of alternatives give the other side this search.
func searchAgain(ctx context.Context, like *Likelihood, m HistoryModel, nu *Nuisance, f FitResult, from HistoryModel, other FitResult, opts FitOptions) (FitResult, error) {
	opts.Starts, opts.Init, opts.NuisanceStart = 1, sharedStarts(from, m, other.Theta), other.Nuisance
	g, err := FitJoint(ctx, like, m, nu, opts)
	if err != nil {
		return FitResult{}, err
	}
	if g.LogL > f.LogL+1e-9 { // as searchFrom accepts a better centre
		return supersede(g, f), nil
	}
	return f, nil
}
