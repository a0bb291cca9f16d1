package compare

import (
	"context"
	"fmt"
	"slices"
	"strings"
)

// fitAlternatives fits every alternative to the data, each searched as
// thoroughly as the burst test searches its two hypotheses, so that no
// explanation wins or loses by where its search happened to stop:
//
//  1. a joint fit of each (FitJoint);
//  2. with nuisance parameters, each fit checked against the profile of
//     every age that sets the alternatives apart (a free history parameter
//     ending in "age_gyr" that not every alternative frees — a burst's age
//     where one explanation has a burst and another has none), as the
//     burst test checks its burst fit (confirmProfilePeak): on the
//     independent model's catalogs that profile rose 7–39 in ln L above
//     the joint fit on every catalog;
//  3. each alternative that frees every nuisance parameter of the best
//     fitted one (names and ranges: each alternative's come from its own
//     scenario) searched again from the best one's nuisance values, any
//     others it frees at their scenario values, its history from the
//     parameters the two share; the better answer kept. A ratio between
//     a fit searched twice and a fit searched once could favour the one
//     that had the extra search: in the burst test the same step lowered
//     a smooth catalog's ratio from 66 to 25. An alternative that adds
//     parameters to the best one's (a stall whose window is fitted, beside
//     one whose window is held) holds the best one's answer at its own
//     scenario values, and its own search had ended 8.9 in ln L below it
//     on a catalog of the independent model.
//
// Each alternative's like is left on its answer.
func fitAlternatives(ctx context.Context, alts []Alternative, opts AltOptions) ([]FitResult, error) {
	stage := func(name string) func(string) {
		if opts.Stage == nil {
			return nil
		}
		return func(msg string) { opts.Stage(fmt.Sprintf("explanation %q, %s", name, msg)) }
	}
	fitOpts := func(a Alternative) FitOptions {
		return FitOptions{Starts: opts.FitStarts, Seed: opts.Seed, MaxRounds: opts.MaxRounds, Workers: opts.Workers, Stage: stage(a.Name)}
	}
	fits := make([]FitResult, len(alts))
	for h, a := range alts {
		f, err := FitJoint(ctx, a.Like, a.History, a.Nuisance, fitOpts(a))
		if err != nil {
			return nil, fmt.Errorf("compare: fit of %q: %w", a.Name, err)
		}
		for _, p := range distinguishingAges(alts, h) {
			if f, _, err = confirmProfilePeak(ctx, a.Like, a.History, a.Nuisance, f, p, fitOpts(a)); err != nil {
				return nil, fmt.Errorf("compare: fit of %q: %w", a.Name, err)
			}
		}
		fits[h] = f
	}
	best := 0
	for h := range fits {
		if fits[h].LogL > fits[best].LogL {
			best = h
		}
	}
	for h, a := range alts {
		b := alts[best]
		if h == best || a.Nuisance.Dim() == 0 {
			continue
		}
		start, ok := nuisanceStartFrom(a.Nuisance, b.Nuisance, fits[best].Nuisance)
		if !ok {
			continue
		}
		o := fitOpts(a)
		if o.Stage != nil {
			o.Stage = func(msg string) {
				opts.Stage(fmt.Sprintf("explanation %q (from %q's nuisance values), %s", a.Name, b.Name, msg))
			}
		}
		var err error
		from := fits[best]
		from.Nuisance = start
		if fits[h], err = searchAgain(ctx, a.Like, a.History, a.Nuisance, fits[h], b.History, from, o); err != nil {
			return nil, fmt.Errorf("compare: fit of %q: %w", a.Name, err)
		}
		if err := a.Like.UseFit(fits[h]); err != nil {
			return nil, err
		}
	}
	return fits, nil
}

// distinguishingAges are the free history parameters of alternative h
// ending in "age_gyr" that some other alternative does not free, in h's
// order. The burst test takes its burst age from it too (the smooth
// history and the burst model as two alternatives).
func distinguishingAges(alts []Alternative, h int) []string {
	var out []string
	for _, name := range alts[h].History.Names() {
		if !strings.HasSuffix(name, "age_gyr") {
			continue
		}
		for g, o := range alts {
			if g != h && !slices.Contains(o.History.Names(), name) {
				out = append(out, name)
				break
			}
		}
	}
	return out
}

// nuisanceStartFrom returns a start for nuisance parameters a taken from
// values of b's: each of a's parameters that b frees too (by name, with
// the same range, so the value lies in a's box) at b's value, the others
// at a's scenario values. ok is false unless a frees every parameter of
// b's: a start that dropped one of b's values would not be b's answer.
func nuisanceStartFrom(a, b *Nuisance, values []float64) (start []float64, ok bool) {
	if b.Dim() == 0 || len(values) != b.Dim() {
		return nil, false
	}
	start = a.Nominal()
	for k, q := range b.Params {
		j := slices.IndexFunc(a.Params, func(p NuisanceParam) bool { return p.Name == q.Name })
		if j < 0 || a.Params[j].Min != q.Min || a.Params[j].Max != q.Max {
			return nil, false
		}
		start[j] = values[k]
	}
	return start, true
}
