package sfh

import (
	"math"

	"gonum.org/v1/gonum/mathext"
)

// invSqrt2Pi is 1/√(2π), the peak of the standard normal density.
const invSqrt2Pi = 0.39894228040143267794

// normCDF returns Φ(z), accurate to full relative precision in the lower tail.
func normCDF(z float64) float64 { return 0.5 * math.Erfc(-z/math.Sqrt2) }

// normSF returns 1 − Φ(z), accurate to full relative precision in the upper tail.
func normSF(z float64) float64 { return 0.5 * math.Erfc(z/math.Sqrt2) }

func normPDF(z float64) float64 { return invSqrt2Pi * math.Exp(-0.5*z*z) }

// normalQuantile returns Φ⁻¹(p). gonum's NormalQuantile is Wichura's AS 241,
// accurate to about 1e-16 relative down to the smallest normal p, which the
// tail-first inversion below relies on. Out-of-range p saturates instead of
// panicking.
func normalQuantile(p float64) float64 {
	switch {
	case p <= 0:
		return math.Inf(-1)
	case p >= 1:
		return math.Inf(1)
	case math.IsNaN(p):
		return math.NaN()
	}
	return mathext.NormalQuantile(p)
}

// truncNormal is the standard normal restricted to [a, b]. The mass is split
// at zero so that each side is computed, and inverted, in the tail where it is
// accurate: a bin eight sigma from a burst still gets its 1e-16 of mass right
// to many digits instead of to none.
type truncNormal struct {
	a, b  float64
	lower float64 // mass on [a, min(b, 0)]
	upper float64 // mass on [max(a, 0), b]
	cdfA  float64 // Φ(a), used when a < 0
	sfC   float64 // 1 − Φ(max(a, 0)), used when b > 0
}

func newTruncNormal(a, b float64) truncNormal {
	t := truncNormal{a: a, b: b}
	if a < 0 {
		t.cdfA = normCDF(a)
		t.lower = math.Max(normCDF(math.Min(b, 0))-t.cdfA, 0)
	}
	if b > 0 {
		t.sfC = normSF(math.Max(a, 0))
		t.upper = math.Max(t.sfC-normSF(b), 0)
	}
	return t
}

// mass returns Φ(b) − Φ(a).
func (t *truncNormal) mass() float64 { return t.lower + t.upper }

// quantile returns the z in [a, b] at which the truncated CDF equals u.
func (t *truncNormal) quantile(u float64) float64 {
	m := u * (t.lower + t.upper)
	var z float64
	if m < t.lower {
		z = normalQuantile(t.cdfA + m)
	} else {
		z = -normalQuantile(t.sfC - (m - t.lower))
	}
	return clamp(z, t.a, t.b)
}

// mean returns the mean of z on [a, b]: (φ(a) − φ(b)) / (Φ(b) − Φ(a)).
func (t *truncNormal) mean() float64 {
	z := t.mass()
	if z <= 0 {
		return math.NaN()
	}
	return clamp((normPDF(t.a)-normPDF(t.b))/z, t.a, t.b)
}

func clamp(x, lo, hi float64) float64 {
	if x < lo {
		return lo
	}
	if x > hi {
		return hi
	}
	return x
}
