package main

import (
	"fmt"
	"image/color"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/palette"
	"gonum.org/v1/plot/palette/moreland"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"spinpop/compare"
	"spinpop/internal/grid"
)

// planeGrid shows values on the comparison plane (B−V × log10 period),
// given in the space's 2-D order (color-major).
type planeGrid struct {
	sp    compare.Space
	z     []float64
	trans func(float64) float64
}

func (g planeGrid) Dims() (c, r int) { return g.sp.NumColor(), g.sp.NumLogPeriod() }
func (g planeGrid) Z(c, r int) float64 {
	v := g.z[c*g.sp.NumLogPeriod()+r]
	if g.trans != nil {
		return g.trans(v)
	}
	return v
}
func (g planeGrid) X(c int) float64 { return g.sp.ColorCenter(c) }
func (g planeGrid) Y(r int) float64 {
	return (g.sp.LogPeriodEdges[r] + g.sp.LogPeriodEdges[r+1]) / 2
}

func logCount(v float64) float64 { return math.Log10(1 + v) }

// planePlot draws counts (log scale, shared maximum vmax) or, with
// diverging set, signed values on a blue–red scale clipped at ±vmax.
func planePlot(title string, sp compare.Space, z []float64, vmax float64, diverging bool) *plot.Plot {
	p := plot.New()
	p.Title.Text = title
	p.X.Label.Text = "B−V (mag)"
	p.Y.Label.Text = "log10 period (d)"
	var hm *plotter.HeatMap
	if diverging {
		cm := moreland.SmoothBlueRed()
		cm.SetMin(-vmax)
		cm.SetMax(vmax)
		hm = plotter.NewHeatMap(planeGrid{sp: sp, z: z}, cm.Palette(64))
		hm.Min, hm.Max = -vmax, vmax
		hm.Underflow, hm.Overflow = cm.Palette(64).Colors()[0], cm.Palette(64).Colors()[63]
	} else {
		hm = plotter.NewHeatMap(planeGrid{sp: sp, z: z, trans: logCount}, densityPalette())
		hm.Min, hm.Max = 0, logCount(vmax)
	}
	hm.Rasterized = true
	p.Add(hm)
	p.X.Min, p.X.Max = sp.ColorEdges[0], sp.ColorEdges[len(sp.ColorEdges)-1]
	p.Y.Min, p.Y.Max = sp.LogPeriodEdges[0], sp.LogPeriodEdges[len(sp.LogPeriodEdges)-1]
	return p
}

func maxOf(xs ...[]float64) float64 {
	m := 0.0
	for _, x := range xs {
		for _, v := range x {
			if v > m {
				m = v
			}
		}
	}
	return m
}

// dataModelResiduals is the data and model period–color densities side by
// side, with the Pearson residual map (n − μ)/√μ.
func dataModelResiduals(sp compare.Space, data, mu, resid []float64, modelName string) [][]*plot.Plot {
	vmax := maxOf(data, mu)
	r := planePlot("Pearson residuals (n−μ)/√μ, clipped at ±4", sp, resid, 4, true)
	return [][]*plot.Plot{{
		planePlot("Data", sp, data, vmax, false),
		planePlot("Model: "+modelName, sp, mu, vmax, false),
		r,
	}}
}

// periodHistsDataModel draws, per group of color bins, the data's log-period
// histogram (points with Poisson errors) against each hypothesis (lines).
func periodHistsDataModel(sp compare.Space, data []float64, models map[string][]float64, order []string, panels int) ([][]*plot.Plot, error) {
	nc, np := sp.NumColor(), sp.NumLogPeriod()
	panels = min(panels, nc)
	per := (nc + panels - 1) / panels
	var row []*plot.Plot
	for start := 0; start < nc; start += per {
		end := min(start+per, nc)
		p := plot.New()
		p.Title.Text = fmt.Sprintf("B−V %.2f–%.2f", sp.ColorEdges[start], sp.ColorEdges[end])
		p.X.Label.Text = "log10 period (d)"
		p.Y.Label.Text = "stars"
		sum := func(z []float64, j int) float64 {
			s := 0.0
			for c := start; c < end; c++ {
				s += z[c*np+j]
			}
			return s
		}
		var pts plotter.XYs
		var errs plotter.YErrors
		for j := range np {
			n := sum(data, j)
			x := (sp.LogPeriodEdges[j] + sp.LogPeriodEdges[j+1]) / 2
			pts = append(pts, plotter.XY{X: x, Y: n})
			e := math.Sqrt(n)
			errs = append(errs, struct{ Low, High float64 }{e, e})
		}
		for i, name := range order {
			y := make([]float64, np)
			for j := range np {
				y[j] = sum(models[name], j)
			}
			l, err := stepLine(sp.LogPeriodEdges, y, overlayColors[(i+1)%len(overlayColors)])
			if err != nil {
				return nil, err
			}
			p.Add(l)
			if start == 0 {
				p.Legend.Add(name, l)
			}
		}
		sc, err := plotter.NewScatter(pts)
		if err != nil {
			return nil, err
		}
		sc.GlyphStyle.Shape = draw.CircleGlyph{}
		sc.GlyphStyle.Radius = vg.Points(1.8)
		sc.GlyphStyle.Color = color.Black
		eb, err := plotter.NewYErrorBars(struct {
			plotter.XYer
			plotter.YErrorer
		}{pts, errs})
		if err != nil {
			return nil, err
		}
		p.Add(eb, sc)
		if start == 0 {
			p.Legend.Add("data", sc)
			p.Legend.Top = true
			p.Legend.Left = true
		}
		row = append(row, p)
	}
	grid := inRows(row, 3)
	return grid, nil
}

// profilePlot is −Δ ln L of the burst age with the 68 % and 95 % levels.
func profilePlot(name string, pts []compare.ProfilePoint, iv compare.Interval) (*plot.Plot, error) {
	p := plot.New()
	p.Title.Text = fmt.Sprintf("Profile likelihood of %s: %.3f (68%%: %.3f–%.3f)", name, iv.Best, iv.Lo68, iv.Hi68)
	p.X.Label.Text = name
	p.Y.Label.Text = "ln L_max − ln L"
	best := math.Inf(-1)
	for _, q := range pts {
		best = max(best, q.LogL)
	}
	var xy plotter.XYs
	for _, q := range pts {
		if !math.IsInf(q.LogL, 0) && !math.IsNaN(q.LogL) {
			xy = append(xy, plotter.XY{X: q.Value, Y: best - q.LogL})
		}
	}
	if len(xy) < 2 {
		return p, nil
	}
	l, err := plotter.NewLine(xy)
	if err != nil {
		return nil, err
	}
	l.Color = overlayColors[2]
	l.Width = vg.Points(1.5)
	p.Add(l)
	for i, lev := range []struct {
		y    float64
		name string
	}{{0.5, "68 %"}, {1.92, "95 %"}} {
		h := plotter.NewFunction(func(float64) float64 { return lev.y })
		h.Color = overlayColors[3+i]
		h.Dashes = []vg.Length{vg.Points(4), vg.Points(3)}
		p.Add(h)
		p.Legend.Add(lev.name, h)
	}
	p.Y.Min = 0
	p.Y.Max = math.Min(maxY(xy), 20)
	p.Legend.Top = true
	return p, nil
}

func maxY(xy plotter.XYs) float64 {
	m := 0.0
	for _, q := range xy {
		m = max(m, q.Y)
	}
	return m
}

// heightPlotFit is the young fraction against |z|: data with 68 % Wilson
// intervals, each hypothesis as a line.
func heightPlotFit(h *compare.HeightResult) (*plot.Plot, error) {
	p := plot.New()
	p.Title.Text = fmt.Sprintf("Young fraction against height (split at the %.2f Gyr gyrochrone)", h.SplitAgeGyr)
	p.X.Label.Text = "|z| (pc)"
	p.Y.Label.Text = "fraction below the split gyrochrone"
	var pts plotter.XYs
	var errs plotter.YErrors
	for i := range h.Total {
		if h.Total[i] == 0 || math.IsNaN(h.Fraction[i]) {
			continue
		}
		x := (h.ZEdgesPc[i] + math.Min(h.ZEdgesPc[i+1], 2*h.ZEdgesPc[i]+200)) / 2
		pts = append(pts, plotter.XY{X: x, Y: h.Fraction[i]})
		errs = append(errs, struct{ Low, High float64 }{h.Fraction[i] - h.Lo68[i], h.Hi68[i] - h.Fraction[i]})
	}
	for k, hy := range h.Hypotheses {
		var xy plotter.XYs
		for i := range hy.Fraction {
			if math.IsNaN(hy.Fraction[i]) || h.Total[i] == 0 {
				continue
			}
			x := (h.ZEdgesPc[i] + math.Min(h.ZEdgesPc[i+1], 2*h.ZEdgesPc[i]+200)) / 2
			xy = append(xy, plotter.XY{X: x, Y: hy.Fraction[i]})
		}
		if len(xy) < 2 {
			continue
		}
		l, err := plotter.NewLine(xy)
		if err != nil {
			return nil, err
		}
		l.Color = overlayColors[(k+1)%len(overlayColors)]
		l.Width = vg.Points(1.5)
		p.Add(l)
		p.Legend.Add(fmt.Sprintf("%s (ln L %.1f)", hy.Name, hy.LogL), l)
	}
	if len(pts) > 0 {
		sc, err := plotter.NewScatter(pts)
		if err != nil {
			return nil, err
		}
		sc.GlyphStyle.Shape = draw.CircleGlyph{}
		sc.GlyphStyle.Color = color.Black
		eb, err := plotter.NewYErrorBars(struct {
			plotter.XYer
			plotter.YErrorer
		}{pts, errs})
		if err != nil {
			return nil, err
		}
		p.Add(eb, sc)
		p.Legend.Add("data (68 % interval)", sc)
	}
	p.Legend.Top = true
	p.Y.Min = 0
	return p, nil
}

// bootstrapPlot is the distribution of the likelihood-ratio statistic in
// the bootstrap replicates with the observed value marked.
func bootstrapPlot(lr float64, reps []float64) (*plot.Plot, error) {
	p := plot.New()
	p.Title.Text = fmt.Sprintf("Bootstrap under the smooth history: %d replicates", len(reps))
	p.X.Label.Text = "LR = 2 Δln L"
	p.Y.Label.Text = "replicates"
	if len(reps) == 0 {
		return p, nil
	}
	top := max(lr, maxOf(reps)) * 1.05
	if top <= 0 {
		top = 1
	}
	edges := grid.Linspace(0, top, 41)
	y := make([]float64, 40)
	for _, v := range reps {
		i := int(v / top * 40)
		y[min(max(i, 0), 39)]++
	}
	l, err := stepLine(edges, y, overlayColors[2])
	if err != nil {
		return nil, err
	}
	p.Add(l)
	obs := plotter.XYs{{X: lr, Y: 0}, {X: lr, Y: maxOf(y)}}
	ol, err := plotter.NewLine(obs)
	if err != nil {
		return nil, err
	}
	ol.Color = overlayColors[1]
	ol.Width = vg.Points(2)
	p.Add(ol)
	p.Legend.Add("replicates", l)
	p.Legend.Add(fmt.Sprintf("observed LR = %.1f", lr), ol)
	p.Legend.Top = true
	return p, nil
}

var _ palette.Palette
