package model

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// smoothingSpline is the cubic smoothing spline: the function f that
// minimises
//
//	Σ w_i (y_i − f(x_i))² + λ ∫ f''(x)² dx,
//
// a natural cubic spline with knots at the data (Reinsch 1967, Numer. Math.
// 10, 177; in the notation of Green & Silverman 1994, "Nonparametric
// Regression and Generalized Linear Models", §2.3). λ = 0 interpolates; a
// large λ tends to the weighted straight-line fit. It is the same criterion
// as scipy's make_smoothing_spline, against which it is tested.
//
// It is stored as values g and second derivatives γ at the knots; beyond
// the end knots it continues along the end tangent (no curvature there).
type smoothingSpline struct {
	x, g, gamma []float64
}

// newSmoothingSpline fits the smoothing spline through (x, y) with weights
// w > 0 (nil: all 1). x must be strictly increasing, with at least three
// points.
func newSmoothingSpline(x, y, w []float64, lambda float64) (smoothingSpline, error) {
	n := len(x)
	switch {
	case n < 3:
		return smoothingSpline{}, fmt.Errorf("smoothing spline: %d points; need at least 3", n)
	case len(y) != n || (w != nil && len(w) != n):
		return smoothingSpline{}, errors.New("smoothing spline: x, y and w differ in length")
	case !(lambda >= 0) || math.IsInf(lambda, 1):
		return smoothingSpline{}, fmt.Errorf("smoothing spline: λ = %g; want finite and ≥ 0", lambda)
	}
	h := make([]float64, n-1)
	for i := range h {
		h[i] = x[i+1] - x[i]
		if !(h[i] > 0) {
			return smoothingSpline{}, fmt.Errorf("smoothing spline: x must be strictly increasing (x[%d] = %g, x[%d] = %g)", i, x[i], i+1, x[i+1])
		}
	}
	winv := make([]float64, n)
	for i := range winv {
		winv[i] = 1
		if w != nil {
			if !(w[i] > 0) || math.IsInf(w[i], 1) {
				return smoothingSpline{}, fmt.Errorf("smoothing spline: weight %d is %g; want finite and > 0", i, w[i])
			}
			winv[i] = 1 / w[i]
		}
	}
	// Q is n × (n−2), tridiagonal by columns: column j (interior knot j+1)
	// holds 1/h_j, −1/h_j − 1/h_{j+1}, 1/h_{j+1} in rows j, j+1, j+2.
	// R is (n−2) × (n−2), symmetric tridiagonal: (h_j + h_{j+1})/3 on the
	// diagonal, h_{j+1}/6 beside it. Then γ solves
	// (R + λ Qᵀ W⁻¹ Q) γ = Qᵀ y and g = y − λ W⁻¹ Q γ.
	m := n - 2
	q := func(j int) (a, b, c float64) { return 1 / h[j], -1/h[j] - 1/h[j+1], 1 / h[j+1] }
	sys := mat.NewSymDense(m, nil)
	rhs := mat.NewVecDense(m, nil)
	for j := range m {
		a, b, c := q(j)
		sys.SetSym(j, j, (h[j]+h[j+1])/3+lambda*(a*a*winv[j]+b*b*winv[j+1]+c*c*winv[j+2]))
		if j+1 < m {
			a2, b2, _ := q(j + 1)
			// Columns j and j+1 of Q share rows j+1 and j+2.
			sys.SetSym(j, j+1, h[j+1]/6+lambda*(b*a2*winv[j+1]+c*b2*winv[j+2]))
		}
		if j+2 < m {
			a3, _, _ := q(j + 2)
			sys.SetSym(j, j+2, lambda*c*a3*winv[j+2])
		}
		rhs.SetVec(j, a*y[j]+b*y[j+1]+c*y[j+2])
	}
	var chol mat.Cholesky
	if !chol.Factorize(sys) {
		return smoothingSpline{}, errors.New("smoothing spline: the system is not positive definite")
	}
	var gv mat.VecDense
	if err := chol.SolveVecTo(&gv, rhs); err != nil {
		return smoothingSpline{}, fmt.Errorf("smoothing spline: %w", err)
	}
	s := smoothingSpline{x: append([]float64(nil), x...), g: append([]float64(nil), y...), gamma: make([]float64, n)}
	for j := range m {
		s.gamma[j+1] = gv.AtVec(j)
		a, b, c := q(j)
		s.g[j] -= lambda * winv[j] * a * s.gamma[j+1]
		s.g[j+1] -= lambda * winv[j+1] * b * s.gamma[j+1]
		s.g[j+2] -= lambda * winv[j+2] * c * s.gamma[j+1]
	}
	return s, nil
}

// at evaluates the spline at t.
func (s smoothingSpline) at(t float64) float64 {
	x, g, gm := s.x, s.g, s.gamma
	n := len(x)
	switch {
	case t <= x[0]:
		h := x[1] - x[0]
		slope := (g[1]-g[0])/h - h*gm[1]/6
		return g[0] + (t-x[0])*slope
	case t >= x[n-1]:
		h := x[n-1] - x[n-2]
		slope := (g[n-1]-g[n-2])/h + h*gm[n-2]/6
		return g[n-1] + (t-x[n-1])*slope
	}
	// Largest i with x[i] ≤ t (binary search; this runs at build time only).
	lo, hi := 0, n-1
	for hi-lo > 1 {
		mid := (lo + hi) / 2
		if x[mid] <= t {
			lo = mid
		} else {
			hi = mid
		}
	}
	i := lo
	h := x[i+1] - x[i]
	a, b := x[i+1]-t, t-x[i]
	return (a*g[i]+b*g[i+1])/h - a*b/6*((1+a/h)*gm[i]+(1+b/h)*gm[i+1])
}
