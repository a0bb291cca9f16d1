package spin

import (
	"fmt"
	"math"
)

// calibrate finds K☉ such that a 1 M☉ star born at the median initial
// period reaches SolarPeriodD at SolarAgeGyr. The period at fixed age rises
// monotonically with K, so bisection in ln K cannot miss the root; 200
// halvings of a 40-e-fold bracket reach machine precision.
func (l *TorqueLaw) calibrate() error {
	o := &l.opts
	target := o.SolarPeriodD
	period := func(lnK float64) float64 {
		l.kSunPerGy = math.Exp(lnK)
		p, _ := l.PeriodAt(solarMassMsun, o.SolarAgeGyr, 0.5)
		return p
	}
	lo, hi := math.Log(1e-12), math.Log(1e6)
	if pLo, pHi := period(lo), period(hi); !(pLo < target && pHi >= target) {
		return fmt.Errorf("spin: torque law: cannot calibrate: a 1 M☉ star reaches %.4g–%.4g d at %g Gyr over the whole torque range, not SolarPeriodD = %g d (check the stall window of a 1 M☉ star and the initial periods)", pLo, pHi, o.SolarAgeGyr, target)
	}
	for i := 0; i < 200 && hi-lo > 1e-13; i++ {
		mid := 0.5 * (lo + hi)
		if period(mid) < target {
			lo = mid
		} else {
			hi = mid
		}
	}
	l.kSunPerGy = math.Exp(0.5 * (lo + hi))
	return nil
}
