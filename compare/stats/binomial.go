package stats

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/stat/distuv"
)

// Binomial proportion intervals, for fractions such as "young stars above
// 300 pc" or an injection–recovery completeness.

func checkBinomial(k, n int, conf float64) error {
	if n <= 0 || k < 0 || k > n {
		return fmt.Errorf("stats: binomial interval needs 0 ≤ k ≤ n and n > 0, got k=%d n=%d", k, n)
	}
	if !(conf > 0 && conf < 1) {
		return fmt.Errorf("stats: confidence level must lie in (0, 1), got %g (e.g. 0.95)", conf)
	}
	return nil
}

// WilsonInterval returns the Wilson (1927) score interval for k successes
// in n trials at two-sided confidence level conf:
//
//	(p̂ + z²/2n ± z √(p̂(1−p̂)/n + z²/4n²)) / (1 + z²/n),
//
// z the standard-normal quantile at 1 − (1 − conf)/2. It behaves well at
// k = 0 and k = n, unlike the Wald interval.
func WilsonInterval(k, n int, conf float64) (lo, hi float64, err error) {
	if err := checkBinomial(k, n, conf); err != nil {
		return 0, 0, err
	}
	z := distuv.UnitNormal.Quantile(1 - (1-conf)/2)
	fn := float64(n)
	p := float64(k) / fn
	z2n := z * z / fn
	center := (p + z2n/2) / (1 + z2n)
	half := z / (1 + z2n) * math.Sqrt(p*(1-p)/fn+z*z/(4*fn*fn))
	return math.Max(center-half, 0), math.Min(center+half, 1), nil
}

// ClopperPearsonInterval returns the Clopper & Pearson (1934) "exact"
// interval for k successes in n trials at two-sided confidence level conf,
// from Beta quantiles: lower = B⁻¹(α/2; k, n−k+1) (0 when k = 0), upper =
// B⁻¹(1−α/2; k+1, n−k) (1 when k = n), α = 1 − conf. It is conservative:
// its coverage is at least conf.
func ClopperPearsonInterval(k, n int, conf float64) (lo, hi float64, err error) {
	if err := checkBinomial(k, n, conf); err != nil {
		return 0, 0, err
	}
	alpha := 1 - conf
	fk, fn := float64(k), float64(n)
	lo, hi = 0, 1
	if k > 0 {
		lo = distuv.Beta{Alpha: fk, Beta: fn - fk + 1}.Quantile(alpha / 2)
	}
	if k < n {
		hi = distuv.Beta{Alpha: fk + 1, Beta: fn - fk}.Quantile(1 - alpha/2)
	}
	return lo, hi, nil
}
