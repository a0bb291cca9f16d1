package disk

import (
	"fmt"
	"math"
)

// AVR is the age–velocity-dispersion relation of the thin disk in the
// vertical direction,
//
//	σ_z(τ) = Sigma10Kms · ((τ + Tau1Gyr) / (10 Gyr + Tau1Gyr))^Beta,
//
// the power law with an offset used to describe disk heating by scattering
// off molecular clouds and spiral structure. Sigma10Kms is the dispersion at
// an age of 10 Gyr; Tau1Gyr keeps newborn stars from having zero dispersion.
// Published fits of the thin disk give Beta in the range ≈ 0.3–0.55 [memory];
// a pure random-walk heating by a steady population of scatterers would give
// 0.5.
type AVR struct {
	Sigma10Kms float64 // vertical dispersion at τ = 10 Gyr, km/s
	Tau1Gyr    float64 // age offset τ_1, Gyr
	Beta       float64 // heating exponent β
}

// Validate reports whether the relation can describe a heating disk: a
// positive dispersion, a non-negative age offset and an exponent in (0, 1].
func (a AVR) Validate() error {
	if !(a.Sigma10Kms > 0) || math.IsInf(a.Sigma10Kms, 0) {
		return fmt.Errorf("disk: AVR Sigma10Kms = %v km/s; want a positive, finite velocity dispersion (thin disk: ≈ 20–30 km/s)", a.Sigma10Kms)
	}
	if !(a.Tau1Gyr >= 0) || math.IsInf(a.Tau1Gyr, 0) {
		return fmt.Errorf("disk: AVR Tau1Gyr = %v Gyr; want a finite age offset ≥ 0", a.Tau1Gyr)
	}
	if !(a.Beta > 0 && a.Beta <= 1) {
		return fmt.Errorf("disk: AVR Beta = %v; want a heating exponent in (0, 1] (published thin-disk values ≈ 0.3–0.55)", a.Beta)
	}
	return nil
}

// SigmaKms returns the vertical velocity dispersion in km/s of stars of
// age ageGyr ≥ 0. With Tau1Gyr = 0 it is zero at age zero, which a Sampler
// rejects: give such bins a mid-bin age or a Mixture.
func (a AVR) SigmaKms(ageGyr float64) float64 {
	return a.Sigma10Kms * math.Pow((ageGyr+a.Tau1Gyr)/(10+a.Tau1Gyr), a.Beta)
}

// BinMixture returns the vertical mixture of an age bin [ageMinGyr,
// ageMaxGyr] in which stars formed at a constant rate: n equal-weight
// components at the midpoints of n equal sub-intervals. The relation is
// steep at young ages, so a wide young bin is poorly described by a single
// dispersion; n of a few is usually enough.
func (a AVR) BinMixture(ageMinGyr, ageMaxGyr float64, n int) (Mixture, error) {
	if err := a.Validate(); err != nil {
		return nil, err
	}
	if !(ageMinGyr >= 0 && ageMaxGyr > ageMinGyr) || math.IsInf(ageMaxGyr, 0) {
		return nil, fmt.Errorf("disk: age bin [%v, %v] Gyr; want 0 ≤ min < max < ∞", ageMinGyr, ageMaxGyr)
	}
	if n < 1 {
		return nil, fmt.Errorf("disk: %d sub-ages for bin [%v, %v] Gyr; want at least 1", n, ageMinGyr, ageMaxGyr)
	}
	m := make(Mixture, n)
	w := (ageMaxGyr - ageMinGyr) / float64(n)
	for i := range m {
		m[i] = WeightedSigma{SigmaKms: a.SigmaKms(ageMinGyr + (float64(i)+0.5)*w), Weight: 1}
	}
	return m, nil
}
