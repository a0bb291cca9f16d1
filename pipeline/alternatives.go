package pipeline

import (
	"context"
	"fmt"
	"io"

	"spinpop/assemble"
	"spinpop/compare"
)

// AlternativesOutcome is the comparison of named explanations of one
// catalog (compare.CompareAlternatives) with what each expects.
type AlternativesOutcome struct {
	Result       *compare.AltResult
	Alternatives []compare.Alternative
	Comparisons  []*Comparison
	// Expected is each explanation's expectation per comparison cell at
	// its fit, in the order of Alternatives.
	Expected [][]float64
}

// AlternativesOptions tune TestAlternatives.
type AlternativesOptions struct {
	// WriteRejected, if set, is handed a function that writes rejected.csv
	// again once every explanation leaves out the same cells (see
	// ComparisonOptions.WriteRejected).
	WriteRejected func(write func(w io.Writer) error) error
	Replicates    int // bootstrap replicates under each explanation (0: 200)
	Progress      func(done, total int)
}

// TestAlternatives compares the explanations of one catalog that the
// comparisons describe — each its own scenario, physics, history as
// written (assemble.AsWritten) and nuisance parameters — by their
// likelihood ratios, calibrated by the parametric bootstrap under each,
// and by the goodness of fit of each. Every comparison must read the same
// catalog with the same cuts and space; their scenario names label them.
func TestAlternatives(ctx context.Context, comps []*Comparison, opts AlternativesOptions) (*AlternativesOutcome, error) {
	if len(comps) < 2 {
		return nil, InputError{fmt.Errorf("a comparison of explanations needs at least two scenarios, got %d", len(comps))}
	}
	comps, err := onCommonCells(comps, opts.WriteRejected)
	if err != nil {
		return nil, err
	}
	out := &AlternativesOutcome{Comparisons: comps}
	for _, c := range comps {
		hm, err := assemble.AsWritten(c.Scenario, c.Built.AgeEdgesGyr)
		if err != nil {
			return nil, InputError{fmt.Errorf("%s: %w", c.Source, err)}
		}
		name := c.Scenario.Name
		for _, a := range out.Alternatives {
			if a.Name == name {
				name = fmt.Sprintf("%s (%s)", name, c.Source)
			}
		}
		out.Alternatives = append(out.Alternatives, compare.Alternative{Name: name, Like: c.Likelihood, History: hm, Nuisance: c.Nuisance})
	}
	res, err := compare.CompareAlternatives(ctx, out.Alternatives, compare.AltOptions{Replicates: opts.Replicates,
		Seed: comps[0].Scenario.Run.Seed, Workers: comps[0].Workers, Progress: opts.Progress, MaxRounds: comps[0].MaxRounds, Stage: comps[0].Stage})
	if err != nil {
		if ctx.Err() != nil {
			return nil, fmt.Errorf("interrupted; no comparison output was written")
		}
		return nil, InputError{err}
	}
	out.Result = res
	for i, a := range out.Alternatives {
		if err := a.Like.UseFit(res.Fits[i].Fit); err != nil {
			return nil, err
		}
		out.Expected = append(out.Expected, a.Like.Expected(res.Fits[i].Fit.Weights, nil))
	}
	return out, nil
}

// Report is every number of the comparison, NaN-free, with the names of
// the files written.
func (o *AlternativesOutcome) Report(outputs []string) map[string]any {
	r := o.Result
	fits := make([]map[string]any, len(r.Fits))
	for i, f := range r.Fits {
		c := o.Comparisons[i]
		fits[i] = map[string]any{"name": f.Name, "scenario": c.Source, "scenario_sha256": c.Resolved.Hash(), "fit": FitReport(f.Fit),
			"log_l": Finite(f.LogL), "k": f.K, "aic": Finite(f.AIC), "bic": Finite(f.BIC), "adequacy": AdequacyReport(f.Adequacy),
			"log_evidence": Finite(f.LogEvidence), "evidence_params": f.EvidenceParams, "has_evidence": f.HasEvidence,
			"nuisance_strains": StrainsReport(f.Strains)}
	}
	pairs := make([]map[string]any, len(r.Pairs))
	for i, p := range r.Pairs {
		pairs[i] = map[string]any{"a": p.A, "b": p.B, "lr_b_over_a": Finite(p.LR), "p_under_a": p.PUnderA, "p_under_b": p.PUnderB, "ln_bayes_b_over_a": Finite(p.LogBayesBOver)}
	}
	return map[string]any{"tool": "spinpop", "version": Version, "data": o.Comparisons[0].DataSummary(), "stars": r.N,
		"replicates_per_alternative": r.Replicates, "fits": fits, "pairs": pairs,
		"outcome": r.Outcome, "best": r.Best, "verdict": r.Verdict, "outputs": outputs}
}

// onCommonCells returns the comparisons scoring the same catalog stars:
// each comparison leaves out the cells its own templates never reach and
// (with compare.mask_below_age_gyr) those below its own law's young
// gyrochrone, so explanations under different laws would otherwise score
// different stars, and their likelihoods could not be compared. Each is
// read again leaving out, besides its own, every cell another leaves out
// (the templates of each are zero in its own masked cells, so the
// unreached cells cover both); the first writes rejected.csv through
// writeRejected, listing every row not compared. The comparisons given are
// not changed.
func onCommonCells(comps []*Comparison, writeRejected func(write func(w io.Writer) error) error) ([]*Comparison, error) {
	unreached := make([][]bool, len(comps))
	for i, c := range comps {
		unreached[i] = compare.UnreachedCells(c.Templates)
	}
	out := make([]*Comparison, len(comps))
	for i, c := range comps {
		other := make([]bool, len(unreached[i]))
		for j := range comps {
			if j == i {
				continue
			}
			for cell, u := range unreached[j] {
				other[cell] = other[cell] || u
			}
		}
		d := *c
		d.OtherOut, d.Observed, d.Likelihood = other, nil, nil
		w := writeRejected
		if i > 0 {
			w = nil
		}
		if err := d.readData(c.spec, w); err != nil {
			return nil, err
		}
		out[i] = &d
	}
	return out, nil
}
