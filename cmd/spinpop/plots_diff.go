package main

import (
	"math"
	"slices"

	"spinpop/internal/figure"
)

// differencePanel draws a signed difference between two models on the
// period–color plane, z given color-major (z[i*ny+j] for color i,
// log-period j), NaN where neither model has stars. The diverging scale is
// symmetric and clipped at the 99th percentile of |z| (at least minLimit),
// so that one extreme cell does not wash out the rest; the color bar says
// that its ends are clipped.
func differencePanel(title, barLabel string, colorEdges, logPerEdges, z []float64, minLimit float64, curves []gyroCurve) (*figure.Panel, error) {
	ny := len(logPerEdges) - 1
	var abs []float64
	for _, v := range z {
		if !math.IsNaN(v) {
			abs = append(abs, math.Abs(v))
		}
	}
	limit := minLimit
	if len(abs) > 0 {
		slices.Sort(abs)
		limit = math.Max(minLimit, abs[int(0.99*float64(len(abs)-1))])
	}
	limit = niceCeil(limit)
	scale := figure.Diverging(limit, barLabel)
	p := figure.New(title, labelBV, labelLogPeriod)
	p.Add(&figure.Cells{XEdges: colorEdges, YEdges: logPerEdges, Scale: scale,
		Value: func(i, j int) float64 { return z[i*ny+j] }})
	if err := addGyrochrones(p, curves); err != nil {
		return nil, err
	}
	p.X.Min, p.X.Max = colorEdges[0], colorEdges[len(colorEdges)-1]
	fitRows(&p.Y, logPerEdges, func(j int) float64 {
		for i := 0; i+1 < len(colorEdges); i++ {
			if !math.IsNaN(z[i*ny+j]) {
				return 1
			}
		}
		return 0
	})
	return &figure.Panel{Plot: p, Bar: scale}, nil
}

// niceCeil rounds x up to 1, 2 or 5 times a power of ten, so that the
// color bar's end is a round number.
func niceCeil(x float64) float64 {
	if !(x > 0) || math.IsInf(x, 0) {
		return 1
	}
	e := math.Pow(10, math.Floor(math.Log10(x)))
	for _, m := range []float64{1, 2, 5, 10} {
		if m*e >= x*(1-1e-12) {
			return m * e
		}
	}
	return 10 * e
}

// shareDifference is, per cell, the share of catalog stars of a minus
// that of b, in per cent; NaN where both are empty. Shares (not counts),
// so that two laws that select different numbers of stars compare by
// where their stars lie.
func shareDifference(a, b [][]int64) []float64 {
	var na, nb float64
	for i := range a {
		for j := range a[i] {
			na += float64(a[i][j])
			nb += float64(b[i][j])
		}
	}
	ny := len(a[0])
	z := make([]float64, len(a)*ny)
	for i := range a {
		for j := range a[i] {
			if a[i][j] == 0 && b[i][j] == 0 {
				z[i*ny+j] = math.NaN()
				continue
			}
			z[i*ny+j] = 100 * (float64(a[i][j])/math.Max(na, 1) - float64(b[i][j])/math.Max(nb, 1))
		}
	}
	return z
}

// modelDifference is, per cell, how far model a's expected count lies
// from model b's in units of b's counting noise, (μa − μb)/√μb: where a
// catalog of this size could tell the two models apart (|z| ≳ 2) and
// which way. NaN where b expects nothing.
func modelDifference(a, b []float64) []float64 {
	z := make([]float64, len(a))
	for k := range a {
		if !(b[k] > 0) {
			z[k] = math.NaN()
			continue
		}
		z[k] = (a[k] - b[k]) / math.Sqrt(b[k])
	}
	return z
}
