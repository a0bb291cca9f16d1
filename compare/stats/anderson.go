package stats

import (
	"fmt"
	"math"
	"slices"
	"sort"

	"gonum.org/v1/gonum/mat"
)

// ADResult is the outcome of an Anderson–Darling k-sample test.
type ADResult struct {
	// Statistic is the standardised statistic (A²_akN − (k−1))/σ_N of
	// Scholz & Stephens (1987), eq. 7 and the variance of their eq. 4,
	// computed with midranks (their A²_akN, for data with ties).
	Statistic float64
	// Critical holds the critical values for the significance levels in
	// ADSignificance, from the interpolation of Scholz & Stephens (1987)
	// Table 2 as scipy applies it for m = k − 1.
	Critical [7]float64
	// PValue is scipy 1.10's approximation: exp of a quadratic fitted by
	// least squares to (critical value, ln significance); it is floored at
	// 0.001 and capped at 0.25, and Clamped says when that happened. Its
	// precision is that of an interpolation in a seven-entry table: a few
	// per cent in relative terms, not more.
	PValue  float64
	Clamped bool
}

// ADSignificance are the significance levels of ADResult.Critical.
var ADSignificance = [7]float64{0.25, 0.1, 0.05, 0.025, 0.01, 0.005, 0.001}

// Interpolation coefficients from Table 2 of Scholz & Stephens (1987), as
// given in scipy 1.10 scipy/stats/_morestats.py (read from that source).
var (
	adB0 = [7]float64{0.675, 1.281, 1.645, 1.96, 2.326, 2.573, 3.085}
	adB1 = [7]float64{-0.245, 0.25, 0.678, 1.149, 1.822, 2.364, 3.615}
	adB2 = [7]float64{-0.105, -0.305, -0.362, -0.391, -0.396, -0.345, -0.154}
)

// AndersonKSample returns the Anderson–Darling k-sample test of Scholz &
// Stephens (1987, JASA 82, 918) in its midrank form, which is what scipy
// 1.10's anderson_ksamp(samples, midrank=True) computes; the statistic,
// critical values and p-value follow that code. The samples are not
// modified. It needs at least two non-empty samples and at least two
// distinct values overall.
func AndersonKSample(samples ...[]float64) (ADResult, error) {
	k := len(samples)
	if k < 2 {
		return ADResult{}, errSamples("AndersonKSample", k, 0)
	}
	var all []float64
	sorted := make([][]float64, k)
	for i, s := range samples {
		if len(s) == 0 {
			return ADResult{}, errSamples("AndersonKSample", k, i)
		}
		if hasNaN(s) {
			return ADResult{}, errNaN("AndersonKSample", i)
		}
		sorted[i] = slices.Clone(s)
		slices.Sort(sorted[i])
		all = append(all, s...)
	}
	slices.Sort(all)
	uniq := slices.Compact(slices.Clone(all))
	if len(uniq) < 2 {
		return ADResult{}, errDistinct("AndersonKSample")
	}
	if len(all) < 4 {
		return ADResult{}, fmt.Errorf("stats: AndersonKSample needs at least 4 values in total for the variance of the statistic, got %d", len(all))
	}
	N := float64(len(all))

	// A²_akN, midrank version (Scholz & Stephens eq. 7).
	var a2 float64
	lj := make([]float64, len(uniq))
	bj := make([]float64, len(uniq))
	for j, z := range uniq {
		left := sort.SearchFloat64s(all, z)
		right := searchRight(all, z)
		lj[j] = float64(right - left)
		bj[j] = float64(left) + lj[j]/2
	}
	for _, s := range sorted {
		ni := float64(len(s))
		var inner float64
		for j, z := range uniq {
			left := sort.SearchFloat64s(s, z)
			right := searchRight(s, z)
			mij := float64(right) - float64(right-left)/2
			num := N*mij - bj[j]*ni
			inner += lj[j] / N * num * num / (bj[j]*(N-bj[j]) - N*lj[j]/4)
		}
		a2 += inner / ni
	}
	a2 *= (N - 1) / N

	// Variance of A²_akN (Scholz & Stephens eq. 4), term by term as scipy.
	var H float64
	for _, s := range samples {
		H += 1 / float64(len(s))
	}
	n := len(all)
	// hsCs[t] = Σ_{s=0..t} 1/(N−1−s), t = 0 … N−3.
	var h, g, cs float64
	for t := 0; t < n-2; t++ {
		cs += 1 / float64(n-1-t)
		g += cs / float64(t+2)
	}
	h = cs + 1
	fk := float64(k)
	a := (4*g-6)*(fk-1) + (10-6*g)*H
	b := (2*g-4)*fk*fk + 8*h*fk + (2*g-14*h-4)*H - 8*h + 4*g - 6
	c := (6*h+2*g-2)*fk*fk + (4*h-4*g+6)*fk + (2*h-6)*H + 4*h
	d := (2*h+6)*fk*fk - 4*h*fk
	sigmaSq := (a*N*N*N + b*N*N + c*N + d) / ((N - 1) * (N - 2) * (N - 3))
	m := fk - 1
	var res ADResult
	res.Statistic = (a2 - m) / math.Sqrt(sigmaSq)
	for i := range res.Critical {
		res.Critical[i] = adB0[i] + adB1[i]/math.Sqrt(m) + adB2[i]/m
	}
	lo, hi := res.Critical[0], res.Critical[0]
	for _, cv := range res.Critical {
		lo, hi = math.Min(lo, cv), math.Max(hi, cv)
	}
	switch {
	case res.Statistic < lo:
		res.PValue, res.Clamped = 0.25, true
	case res.Statistic > hi:
		res.PValue, res.Clamped = 0.001, true
	default:
		c0, c1, c2 := quadFit(res.Critical[:], ADSignificance[:])
		x := res.Statistic
		res.PValue = math.Exp((c2*x+c1)*x + c0)
	}
	return res, nil
}

// quadFit returns the least-squares quadratic c0 + c1 x + c2 x² through
// (x_i, ln y_i), as numpy.polyfit(x, log(y), 2) does.
func quadFit(x, y []float64) (c0, c1, c2 float64) {
	A := mat.NewDense(len(x), 3, nil)
	rhs := mat.NewVecDense(len(x), nil)
	for i, xi := range x {
		A.Set(i, 0, 1)
		A.Set(i, 1, xi)
		A.Set(i, 2, xi*xi)
		rhs.SetVec(i, math.Log(y[i]))
	}
	var sol mat.VecDense
	if err := sol.SolveVec(A, rhs); err != nil {
		// The abscissae are fixed, distinct table values, so the
		// Vandermonde matrix has full rank.
		panic("stats: quadFit: " + err.Error())
	}
	return sol.AtVec(0), sol.AtVec(1), sol.AtVec(2)
}

// searchRight returns the number of elements of sorted s that are ≤ v.
func searchRight(s []float64, v float64) int {
	return sort.Search(len(s), func(i int) bool { return s[i] > v })
}
