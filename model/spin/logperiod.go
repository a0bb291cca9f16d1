package spin

import (
	"math"
	"math/rand/v2"
)

// A population re-observed through many variants of one law (a fit's side
// points in the law's coefficients and scatter) spends much of its time in
// logarithms and exponentials of periods. Most of the downstream physics
// reads the period through its logarithm too (the Rossby number in a power
// law, the fine log-period grid, the search completeness's nodes), so the
// population asks a law for ln P directly where the law can give it, and
// takes one exponential for P.

// LogForm is a law's period in log form: ln P for a star, drawing from r
// exactly what the law's Period draws. It is a value (no function
// pointers), so a population can prepare one per chunk of stars without
// allocating. The laws with a closed log form are the empirical ones
// (GyroLaw), bare or with scatter (Scattered around a GyroLaw).
type LogForm struct {
	g         GyroLaw
	lnA       float64
	scattered bool
	shift, k  float64 // ln Scale and ln 10·Dex of the scatter
}

// LogFormOf returns law's log form, and false when it has none (the
// population then takes the log of Period). The law's constants (ln A,
// ln Scale, ln 10·Dex) are worked out here once, not per star.
func LogFormOf(law Law) (LogForm, bool) {
	switch l := law.(type) {
	case GyroLaw:
		return LogForm{g: l, lnA: math.Log(l.A)}, true
	case Scattered:
		g, ok := l.Law.(GyroLaw)
		if !ok {
			return LogForm{}, false
		}
		f := LogForm{g: g, lnA: math.Log(g.A), scattered: true, k: math.Ln10 * l.Dex}
		if l.Scale != 0 {
			f.shift = math.Log(l.Scale)
		}
		return f, true
	}
	return LogForm{}, false
}

// LnPeriod returns ln of star s's period in days and whether the law
// gives one: ln A + B ln(B−V − C) + N ln(1000 t), plus ln Scale + ln 10·Dex·z
// with scatter, z drawn from r whether or not the law gives a period, as
// Scattered.Period draws it. It is InRange, Terms and FromTerms in one.
func (f *LogForm) LnPeriod(s Star, r *rand.Rand) (float64, bool) {
	var z float64
	if f.scattered {
		z = r.NormFloat64()
	}
	if !f.InRange(s) {
		return math.NaN(), false
	}
	l1, l2 := f.Terms(s)
	return f.FromTerms(l1, l2, z), true
}

// Draws reports whether the law draws its scatter's normal deviate (one
// NormFloat64, the law's only draw) from the stream.
func (f *LogForm) Draws() bool { return f.scattered }

// C returns the law's color zero point, the only coefficient Terms reads
// (besides the stall, Stall).
func (f *LogForm) C() float64 { return f.g.C }

// InRange reports whether s lies in the law's calibrated range.
func (f *LogForm) InRange(s Star) bool { return f.g.inRange(s.BV, s.AgeGyr) }

// Terms returns the star's logarithms that the law's coefficients
// multiply, ln(B−V − C) and ln(1000 t) (t the effective age under a
// stall): what a population re-observed under other values of A, B, N and
// the scatter may keep.
func (f *LogForm) Terms(s Star) (l1, l2 float64) {
	t := s.AgeGyr
	if f.g.Stall.Enabled {
		t = f.g.Stall.effectiveAge(s.MassMsun, t)
	}
	return math.Log(s.BV - f.g.C), math.Log(1000 * t)
}

// Stall returns the law's stall, which Terms reads besides C.
func (f *LogForm) Stall() StallOptions { return f.g.Stall }

// FromTerms returns ln P from a star's Terms and its scatter deviate z
// (ignored without scatter).
func (f *LogForm) FromTerms(l1, l2, z float64) float64 {
	lnP := f.lnA + f.g.B*l1 + f.g.N*l2
	if f.scattered {
		lnP += f.shift + f.k*z
	}
	return lnP
}
