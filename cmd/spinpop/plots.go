package main

import (
	"fmt"
	"image/color"
	"io"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"

	"spinpop/internal/figure"
	"spinpop/internal/outset"
	"spinpop/model"
)

// Figures of simulate and laws. The style (fonts, colors, color maps,
// color bars, legends beside the data) is internal/figure's.

// gyroCurve is one gyrochrone to overlay: period against color at one age.
type gyroCurve struct {
	AgeGyr  float64
	BV      []float64
	PeriodD []float64
}

// Axis labels used by several figures.
const (
	labelBV        = "B−V (mag, as observed)"
	labelLogPeriod = "log₁₀ period (d)"
	labelStars     = "stars per cell"
)

// occupied returns the first and last index (inclusive) of rows j with a
// non-zero count in any column, or ok=false when all are zero: axes are
// fitted to where data are, not to the whole binning.
func occupied(nRows int, count func(j int) float64) (lo, hi int, ok bool) {
	lo, hi = -1, -1
	for j := range nRows {
		if count(j) > 0 {
			if lo < 0 {
				lo = j
			}
			hi = j
		}
	}
	return lo, hi, lo >= 0
}

// fitRows sets the axis to the occupied rows of edges, one bin of margin
// each side.
func fitRows(a *plot.Axis, edges []float64, count func(j int) float64) {
	lo, hi, ok := occupied(len(edges)-1, count)
	if !ok {
		a.Min, a.Max = edges[0], edges[len(edges)-1]
		return
	}
	a.Min = edges[max(lo-1, 0)]
	a.Max = edges[min(hi+2, len(edges)-1)]
}

// periodColorPlot is the period–color density of catalog stars (cells
// colored by count, log scale, with a color bar) with gyrochrones on top.
func periodColorPlot(title string, t *model.Tally, curves []gyroCurve) (*figure.Panel, error) {
	p := figure.New(title, labelBV, labelLogPeriod)
	mx := float64(maxCount(t.PeriodColor))
	scale := figure.Density(mx, labelStars)
	p.Add(&figure.Cells{XEdges: t.ColorEdges, YEdges: t.LogPerEdges, Scale: scale,
		Value: func(i, j int) float64 { return figure.LogCount(float64(t.PeriodColor[i][j])) }})
	if err := addGyrochrones(p, curves); err != nil {
		return nil, err
	}
	p.X.Min, p.X.Max = t.ColorEdges[0], t.ColorEdges[len(t.ColorEdges)-1]
	fitRows(&p.Y, t.LogPerEdges, func(j int) float64 {
		s := 0.0
		for i := range t.PeriodColor {
			s += float64(t.PeriodColor[i][j])
		}
		return s
	})
	return &figure.Panel{Plot: p, Bar: scale}, nil
}

// addGyrochrones draws each gyrochrone in its own color, named by age.
func addGyrochrones(p *plot.Plot, curves []gyroCurve) error {
	for i, c := range curves {
		var xy plotter.XYs
		for j := range c.BV {
			if c.PeriodD[j] > 0 && !math.IsNaN(c.PeriodD[j]) {
				xy = append(xy, plotter.XY{X: c.BV[j], Y: math.Log10(c.PeriodD[j])})
			}
		}
		if len(xy) < 2 {
			continue
		}
		l, err := plotter.NewLine(xy)
		if err != nil {
			return err
		}
		halo, err := plotter.NewLine(xy)
		if err != nil {
			return err
		}
		halo.Color = figure.Halo
		halo.Width = figure.LineWidth + vg.Points(1.6)
		l.Color = figure.OnMap(i)
		l.Width = figure.LineWidth
		p.Add(halo, l)
		p.Legend.Add(fmt.Sprintf("%g Gyr", c.AgeGyr), l)
	}
	return nil
}

func maxCount(z [][]int64) int64 {
	var m int64
	for _, row := range z {
		for _, v := range row {
			m = max(m, v)
		}
	}
	return m
}

// periodHistograms draws small multiples: the log-period histogram of
// catalog stars in groups of color bins, on a common period axis fitted
// to where stars are.
func periodHistograms(t *model.Tally, panels int) figure.Layout {
	nc := len(t.ColorEdges) - 1
	panels = min(panels, nc)
	per := (nc + panels - 1) / panels
	var row []*plot.Plot
	for start := 0; start < nc; start += per {
		end := min(start+per, nc)
		p := figure.New(fmt.Sprintf("B−V %.2f–%.2f", t.ColorEdges[start], t.ColorEdges[end]), labelLogPeriod, "stars")
		y := make([]float64, len(t.LogPerEdges)-1)
		for j := range y {
			for c := start; c < end; c++ {
				y[j] += float64(t.PeriodColor[c][j])
			}
		}
		if l, err := stepLine(t.LogPerEdges, y, figure.Curve(0)); err == nil {
			p.Add(l)
		}
		fitRows(&p.X, t.LogPerEdges, func(j int) float64 {
			s := 0.0
			for i := range t.PeriodColor {
				s += float64(t.PeriodColor[i][j])
			}
			return s
		})
		p.Y.Min = 0
		row = append(row, p)
	}
	return figure.Rows(figure.Of(row...), 3)
}

// stepLine draws values on edges as a step line.
func stepLine(edges []float64, y []float64, c color.Color) (*plotter.Line, error) {
	var xy plotter.XYs
	for i := range y {
		xy = append(xy, plotter.XY{X: edges[i], Y: y[i]}, plotter.XY{X: edges[i+1], Y: y[i]})
	}
	l, err := plotter.NewLine(xy)
	if err != nil {
		return nil, err
	}
	l.Color = c
	l.Width = figure.LineWidth
	return l, nil
}

// heightPlot is the |z| distribution of catalog stars.
func heightPlot(t *model.Tally) (*plot.Plot, error) {
	p := figure.New("Height above the plane, catalog stars", "|z| (pc)", "stars per pc")
	y := make([]float64, len(t.AbsZ))
	for i, n := range t.AbsZ {
		y[i] = float64(n) / (t.AbsZEdgesPc[i+1] - t.AbsZEdgesPc[i])
	}
	l, err := stepLine(t.AbsZEdgesPc, y, figure.Curve(0))
	if err != nil {
		return nil, err
	}
	p.Add(l)
	p.Y.Min = 0
	fitRows(&p.X, t.AbsZEdgesPc, func(j int) float64 { return float64(t.AbsZ[j]) })
	p.X.Min = 0
	return p, nil
}

// ageBiasPlot compares the age distribution of all dwarfs the model made in
// the field with that of the catalog: the selection's age bias, visible.
// Both are normalised to unit area so their shapes compare directly.
func ageBiasPlot(t *model.Tally) (*plot.Plot, error) {
	p := figure.New("Age distribution: dwarfs in the field against the catalog", "age (Gyr)", "share per Gyr")
	for i, s := range []struct {
		name string
		n    []int64
	}{{"all dwarfs in the field", t.AgeGenerated}, {"catalog", t.AgeSelected}} {
		var tot float64
		for _, v := range s.n {
			tot += float64(v)
		}
		y := make([]float64, len(s.n))
		for k, v := range s.n {
			if tot > 0 {
				y[k] = float64(v) / tot / (t.AgeEdgesGyr[k+1] - t.AgeEdgesGyr[k])
			}
		}
		l, err := stepLine(t.AgeEdgesGyr, y, figure.Curve(i))
		if err != nil {
			return nil, err
		}
		p.Add(l)
		p.Legend.Add(s.name, l)
	}
	p.Y.Min = 0
	p.X.Min, p.X.Max = t.AgeEdgesGyr[0], t.AgeEdgesGyr[len(t.AgeEdgesGyr)-1]
	return p, nil
}

// fractionPlot draws num/den per bin as steps; bins with no eligible star
// (den = 0) have no fraction and are left out, not drawn at 0.
func fractionPlot(title, xLabel string, edges []float64, num, den []int64, c color.Color) (*plot.Plot, error) {
	p := figure.New(title, xLabel, "detected fraction")
	var run plotter.XYs
	flush := func() error {
		if len(run) == 0 {
			return nil
		}
		l, err := plotter.NewLine(run)
		if err != nil {
			return err
		}
		l.Color = c
		l.Width = figure.LineWidth
		p.Add(l)
		run = nil
		return nil
	}
	for k := range den {
		if den[k] == 0 {
			if err := flush(); err != nil {
				return nil, err
			}
			continue
		}
		f := float64(num[k]) / float64(den[k])
		run = append(run, plotter.XY{X: edges[k], Y: f}, plotter.XY{X: edges[k+1], Y: f})
	}
	if err := flush(); err != nil {
		return nil, err
	}
	p.Y.Min, p.Y.Max = 0, 1.02
	fitRows(&p.X, edges, func(j int) float64 { return float64(den[j]) })
	return p, nil
}

// detectedFractionPlot is the fraction of eligible dwarfs (in the
// magnitude limits, color cut and main-sequence band) whose period the
// survey detected, against age.
func detectedFractionPlot(t *model.Tally) (*plot.Plot, error) {
	return fractionPlot("Period detected, by age", "age (Gyr)", t.AgeEdgesGyr, t.AgeDetected, t.AgeEligible, figure.Curve(0))
}

// detectedByColorPlot is the same against observed color.
func detectedByColorPlot(t *model.Tally) (*plot.Plot, error) {
	return fractionPlot("Period detected, by color", labelBV, t.ColorEdges, t.ColorDetected, t.ColorEligible, figure.Curve(0))
}

// writeFigure renders a layout to PNG file name of the output set.
func writeFigure(set *outset.Set, name string, g figure.Layout, w, h vg.Length) error {
	return set.Write(name, func(out io.Writer) error { return g.WritePNG(out, w, h) })
}

// writeFigureFile renders a layout to a PNG file of its own, outside an
// output set (the sweep's plots, added to as points finish): written under
// a temporary name and renamed, whole or not at all.
func writeFigureFile(path string, g figure.Layout, w, h vg.Length) error {
	return writeFileAtomic(path, func(out io.Writer) error { return g.WritePNG(out, w, h) })
}

// writePlot renders one plot (legend beside it) to PNG file name of the
// output set.
func writePlot(set *outset.Set, name string, p *plot.Plot, w, h vg.Length) error {
	return writeFigure(set, name, figure.One(&figure.Panel{Plot: p}), w, h)
}
