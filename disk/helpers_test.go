package disk

import (
	"math"
	"sort"
)

// simpson integrates f over [a, b] with the composite Simpson rule on n
// (even) intervals.
func simpson(f func(float64) float64, a, b float64, n int) float64 {
	if n%2 == 1 {
		n++
	}
	h := (b - a) / float64(n)
	s := f(a) + f(b)
	for i := 1; i < n; i++ {
		w := 2.0
		if i%2 == 1 {
			w = 4
		}
		s += w * f(a+float64(i)*h)
	}
	return s * h / 3
}

// ksOneSample returns the one-sample Kolmogorov–Smirnov statistic of x
// against the CDF cdf and its asymptotic p-value,
// Q_KS((√N + 0.12 + 0.11/√N) D) with Q_KS(λ) = 2 Σ (−1)^(j−1) exp(−2j²λ²).
// Source: Stephens (1970), JRSS B 32, 115, as given in Press et al.,
// Numerical Recipes (3rd ed., 2007), §14.3.3.
func ksOneSample(x []float64, cdf func(float64) float64) (d, p float64) {
	s := append([]float64(nil), x...)
	sort.Float64s(s)
	n := float64(len(s))
	for i, v := range s {
		f := cdf(v)
		d = math.Max(d, math.Max(f-float64(i)/n, float64(i+1)/n-f))
	}
	sq := math.Sqrt(n)
	lambda := (sq + 0.12 + 0.11/sq) * d
	if lambda < 0.2 {
		return d, 1
	}
	sign := 1.0
	for j := 1; j <= 100; j++ {
		term := sign * 2 * math.Exp(-2*float64(j*j)*lambda*lambda)
		p += term
		if math.Abs(term) < 1e-12 {
			break
		}
		sign = -sign
	}
	return d, math.Max(0, math.Min(1, p))
}

// cumulativeTable tabulates the CDF of a density f on [a, b] with the
// trapezoid rule on n intervals and returns a linear interpolator: a
// reference CDF for distributions with no closed form.
func cumulativeTable(f func(float64) float64, a, b float64, n int) func(float64) float64 {
	xs := make([]float64, n+1)
	cs := make([]float64, n+1)
	h := (b - a) / float64(n)
	prev := f(a)
	for i := 0; i <= n; i++ {
		xs[i] = a + float64(i)*h
		if i > 0 {
			cur := f(xs[i])
			cs[i] = cs[i-1] + 0.5*h*(prev+cur)
			prev = cur
		}
	}
	total := cs[n]
	return func(x float64) float64 {
		if x <= a {
			return 0
		}
		if x >= b {
			return 1
		}
		t := (x - a) / h
		i := min(int(t), n-1)
		fr := t - float64(i)
		return (cs[i] + fr*(cs[i+1]-cs[i])) / total
	}
}

// direction returns the unit vector of cell c for uniform variates u, v in
// [0, 1): uniform in solid angle over the cell, as Draw does it.
func (c *Cell) direction(u, v float64) vec3 {
	return c.directionAt(c.cMin+u*(c.cMax-c.cMin), c.phi1+v*(c.phi2-c.phi1))
}
