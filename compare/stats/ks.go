package stats

import (
	"errors"
	"fmt"
	"math"
	"slices"
)

// KSResult is the outcome of a two-sample Kolmogorov–Smirnov test.
type KSResult struct {
	// D is sup_x |F₁(x) − F₂(x)| over the pooled sample.
	D float64
	// PValue is P(D_en ≥ D) with en = round(n₁n₂/(n₁+n₂)) (half to
	// even), from KolmogorovSF. This is the "asymp" method of scipy's
	// ks_2samp, which despite the name uses the exact one-sample
	// distribution at the effective size rather than the n → ∞ limit; it
	// is an approximation to the exact two-sample null distribution that
	// improves with sample size.
	PValue float64
	// EffectiveN is en above.
	EffectiveN int
}

// KS2Sample returns the two-sided two-sample Kolmogorov–Smirnov statistic of
// x and y and its p-value as scipy 1.10's ks_2samp(x, y, method='asymp')
// computes it (see KSResult). The inputs are not modified. Ties are handled
// as in scipy: the empirical CDFs are right-continuous and compared at every
// pooled value.
func KS2Sample(x, y []float64) (KSResult, error) {
	if len(x) == 0 || len(y) == 0 {
		return KSResult{}, errors.New("stats: KS2Sample needs two non-empty samples")
	}
	if hasNaN(x) || hasNaN(y) {
		return KSResult{}, errors.New("stats: KS2Sample sample contains NaN; drop or impute those values first")
	}
	a := slices.Clone(x)
	b := slices.Clone(y)
	slices.Sort(a)
	slices.Sort(b)
	n1, n2 := float64(len(a)), float64(len(b))
	var maxS, minS float64
	i, j := 0, 0
	for i < len(a) && j < len(b) {
		v := math.Min(a[i], b[j])
		for i < len(a) && a[i] <= v {
			i++
		}
		for j < len(b) && b[j] <= v {
			j++
		}
		diff := float64(i)/n1 - float64(j)/n2
		maxS = math.Max(maxS, diff)
		minS = math.Max(minS, -diff)
	}
	d := maxS
	if minS > maxS {
		d = minS
	}
	m, n := math.Max(n1, n2), math.Min(n1, n2)
	en := int(math.RoundToEven(m * n / (m + n)))
	return KSResult{D: d, PValue: KolmogorovSF(en, d), EffectiveN: en}, nil
}

func hasNaN(x []float64) bool {
	for _, v := range x {
		if math.IsNaN(v) {
			return true
		}
	}
	return false
}

// errSamples formats the error for a k-sample test given fewer than two
// samples or an empty one.
func errSamples(test string, k int, empty int) error {
	if k < 2 {
		return fmt.Errorf("stats: %s needs at least two samples, got %d", test, k)
	}
	return fmt.Errorf("stats: %s sample %d is empty; every sample needs at least one value", test, empty)
}

func errNaN(test string, i int) error {
	return fmt.Errorf("stats: %s sample %d contains NaN; drop or impute those values first", test, i)
}

func errDistinct(test string) error {
	return fmt.Errorf("stats: %s needs at least two distinct values across the samples", test)
}
