package main

import (
	"fmt"
	"image/color"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"spinpop/compare"
	"spinpop/internal/figure"
	"spinpop/internal/grid"
	"spinpop/pipeline"
)

// Figures of compare, test-burst, test-alternatives and heights.

// colorLabel is the comparison plane's color axis, and colorName the
// color in a panel's title: the catalog's B−V as observed, or less the
// dust model's reddening (compare.color_axis = "dereddened").
func colorLabel(sp compare.Space) string {
	if sp.Dereddened {
		return "B−V less the dust's E(B−V) (mag)"
	}
	return labelBV
}

func colorName(sp compare.Space) string {
	if sp.Dereddened {
		return "dereddened B−V"
	}
	return "B−V"
}

// planeCounts draws counts on the comparison plane (B−V × log period),
// given color-major, cell by cell on a log scale shared up to vmax.
func planeCounts(title string, sp compare.Space, z []float64, vmax float64) *figure.Panel {
	np := sp.NumLogPeriod()
	scale := figure.Density(vmax, labelStars)
	p := figure.New(title, colorLabel(sp), labelLogPeriod)
	p.Add(&figure.Cells{XEdges: sp.ColorEdges, YEdges: sp.LogPeriodEdges, Scale: scale,
		Value: func(i, j int) float64 { return figure.LogCount(z[i*np+j]) }})
	p.X.Min, p.X.Max = sp.ColorEdges[0], sp.ColorEdges[len(sp.ColorEdges)-1]
	p.Y.Min, p.Y.Max = sp.LogPeriodEdges[0], sp.LogPeriodEdges[len(sp.LogPeriodEdges)-1]
	return &figure.Panel{Plot: p, Bar: scale}
}

// planeSigned draws signed values (residuals, differences) on the
// comparison plane, clipped at ±limit, NaN cells Empty.
func planeSigned(title, barLabel string, sp compare.Space, z []float64, limit float64) *figure.Panel {
	np := sp.NumLogPeriod()
	scale := figure.Diverging(limit, barLabel)
	p := figure.New(title, colorLabel(sp), labelLogPeriod)
	p.Add(&figure.Cells{XEdges: sp.ColorEdges, YEdges: sp.LogPeriodEdges, Scale: scale,
		Value: func(i, j int) float64 { return z[i*np+j] }})
	p.X.Min, p.X.Max = sp.ColorEdges[0], sp.ColorEdges[len(sp.ColorEdges)-1]
	p.Y.Min, p.Y.Max = sp.LogPeriodEdges[0], sp.LogPeriodEdges[len(sp.LogPeriodEdges)-1]
	return &figure.Panel{Plot: p, Bar: scale}
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
// side, on one color scale, with the Pearson residual map (n − μ)/√μ.
// Cells the model leaves empty have no residual and are drawn Empty.
func dataModelResiduals(sp compare.Space, data, mu, resid []float64, modelName string) figure.Layout {
	vmax := maxOf(data, mu)
	r := make([]float64, len(resid))
	for k := range resid {
		r[k] = resid[k]
		if !(mu[k] > 0) {
			r[k] = math.NaN()
		}
	}
	row := []*figure.Panel{
		planeCounts("Data", sp, data, vmax),
		planeCounts("Model: "+modelName, sp, mu, vmax),
		planeSigned("Pearson residuals", "(n − μ)/√μ", sp, r, 4),
	}
	np := sp.NumLogPeriod()
	for _, pn := range row {
		fitRows(&pn.Plot.Y, sp.LogPeriodEdges, func(j int) float64 {
			s := 0.0
			for c := range sp.NumColor() {
				s += data[c*np+j] + mu[c*np+j]
			}
			return s
		})
	}
	return figure.Layout{row}
}

// modelDifferenceMap is where two fitted models differ on the plane, in
// units of the second's counting noise.
func modelDifferenceMap(sp compare.Space, a, b []float64, nameA, nameB string) (*figure.Panel, error) {
	z := modelDifference(a, b)
	nameA, nameB = readable(nameA), readable(nameB)
	return differencePanel(fmt.Sprintf("Where the models differ: %s minus %s", nameA, nameB),
		fmt.Sprintf("(μ %s − μ %s)/√μ %s", nameA, nameB, nameB), sp.ColorEdges, sp.LogPeriodEdges, z, 1, nil)
}

// periodHistsDataModel draws, per group of color bins, the data's log-period
// histogram (points with Poisson errors) against each model (steps, each
// its own color). The legend, beside the last panel of the first row,
// covers no data.
func periodHistsDataModel(sp compare.Space, data []float64, models map[string][]float64, order []string, panels int) (figure.Layout, error) {
	nc, np := sp.NumColor(), sp.NumLogPeriod()
	panels = min(panels, nc)
	per := (nc + panels - 1) / panels
	var row []*figure.Panel
	for start := 0; start < nc; start += per {
		end := min(start+per, nc)
		p := figure.New(fmt.Sprintf("%s %.2f–%.2f", colorName(sp), sp.ColorEdges[start], sp.ColorEdges[end]), labelLogPeriod, "stars")
		sum := func(z []float64, j int) float64 {
			s := 0.0
			for c := start; c < end; c++ {
				s += z[c*np+j]
			}
			return s
		}
		var pts plotter.XYs
		var errs plotter.YErrors
		top := 0.0
		for j := range np {
			n := sum(data, j)
			x := (sp.LogPeriodEdges[j] + sp.LogPeriodEdges[j+1]) / 2
			pts = append(pts, plotter.XY{X: x, Y: n})
			e := math.Sqrt(n)
			errs = append(errs, struct{ Low, High float64 }{e, e})
			top = math.Max(top, n+e)
		}
		for i, name := range order {
			y := make([]float64, np)
			for j := range np {
				y[j] = sum(models[name], j)
				top = math.Max(top, y[j])
			}
			l, err := stepLine(sp.LogPeriodEdges, y, figure.Curve(i))
			if err != nil {
				return nil, err
			}
			p.Add(l)
			p.Legend.Add(readable(name), l)
		}
		sc, err := plotter.NewScatter(pts)
		if err != nil {
			return nil, err
		}
		sc.GlyphStyle.Shape = draw.CircleGlyph{}
		sc.GlyphStyle.Radius = vg.Points(2)
		sc.GlyphStyle.Color = figure.Data
		eb, err := plotter.NewYErrorBars(struct {
			plotter.XYer
			plotter.YErrorer
		}{pts, errs})
		if err != nil {
			return nil, err
		}
		eb.Color = figure.Data
		p.Add(eb, sc)
		p.Legend.Add("data (±√n)", sc)
		p.Y.Min, p.Y.Max = 0, 1.05*math.Max(top, 1)
		fitRows(&p.X, sp.LogPeriodEdges, func(j int) float64 {
			s := 0.0
			for c := range nc {
				s += data[c*np+j]
			}
			return s
		})
		row = append(row, &figure.Panel{Plot: p})
	}
	// One legend for all panels: the last of the first row keeps it.
	cols := 3
	for i, pn := range row {
		if i != min(cols, len(row))-1 {
			figure.NoLegend(pn.Plot)
		}
	}
	return figure.Rows(row, cols), nil
}

// profilePanels are the profile likelihood of a parameter in two panels:
// zoomed to the profile's own 95 % interval prof on a fine grid (where
// the interval is read), and over the whole range the fit may choose
// (where other peaks would show), the zoom's span marked on it, and the
// interval the verdict quotes, cal (the profile's widened by the law's
// calibration), shaded when it differs. The levels are Wilks' 0.5 and 1.92
// times the dispersion φ̂ when it exceeds 1, as the interval's own.
// nuisanceHeld says that the curves hold the nuisance parameters at the
// best fit's values while prof refits them at every point: the curve is
// then narrower than prof, which the zoom shades so that the two are not
// read as one.
func profilePanels(param string, whole, zoom []compare.ProfilePoint, prof, cal compare.Interval, phi, lo, hi float64, nuisanceHeld bool, refits []float64) (figure.Layout, error) {
	label := paramLabel(param)
	scale := math.Max(1, phi)
	best := math.Inf(-1)
	for _, q := range append(append([]compare.ProfilePoint(nil), whole...), zoom...) {
		if !math.IsNaN(q.LogL) {
			best = max(best, q.LogL)
		}
	}
	curve := func(pts []compare.ProfilePoint, xmin, xmax float64) plotter.XYs {
		var xy plotter.XYs
		for _, q := range pts {
			if !math.IsInf(q.LogL, 0) && !math.IsNaN(q.LogL) && q.Value >= xmin && q.Value <= xmax {
				xy = append(xy, plotter.XY{X: q.Value, Y: best - q.LogL})
			}
		}
		return xy
	}
	panel := func(title string, pts []compare.ProfilePoint, xmin, xmax, ymax float64) (*plot.Plot, error) {
		p := figure.New(title, label, "ln L(best) − ln L")
		if xy := curve(pts, xmin, xmax); len(xy) >= 2 {
			l, lp, err := plotter.NewLinePoints(xy)
			if err != nil {
				return nil, err
			}
			l.Color, l.Width = figure.Curve(0), figure.LineWidth
			lp.Color, lp.Shape, lp.Radius = figure.Curve(0), draw.CircleGlyph{}, vg.Points(2)
			p.Add(l, lp)
			if nuisanceHeld {
				p.Legend.Add("profile, nuisance held at the best fit", l)
			} else {
				p.Legend.Add("profile", l)
			}
		}
		for i, lev := range []struct {
			y    float64
			name string
		}{{0.5, "68 %"}, {1.92, "95 %"}} {
			h, err := plotter.NewLine(plotter.XYs{{X: xmin, Y: scale * lev.y}, {X: xmax, Y: scale * lev.y}})
			if err != nil {
				return nil, err
			}
			h.Color = figure.Curve(1 + i)
			h.Dashes = figure.Dashed
			h.Width = vg.Points(1.2)
			p.Add(h)
			name := lev.name + " level"
			if scale > 1 {
				name = fmt.Sprintf("%s level × dispersion %.2f", lev.name, scale)
			}
			p.Legend.Add(name, h)
		}
		p.X.Min, p.X.Max = xmin, xmax
		p.Y.Min, p.Y.Max = 0, ymax
		return p, nil
	}
	calibrated := cal.Lo95 != prof.Lo95 || cal.Hi95 != prof.Hi95
	title := fmt.Sprintf("%s: %s (68 %% interval %s–%s)", label, num(cal.Best), num(cal.Lo68), num(cal.Hi68))
	var row []*figure.Panel
	zlo, zhi, ok := pipeline.ProfileZoomRange(prof, lo, hi)
	if ok && len(zoom) >= 2 {
		zt := title
		switch {
		case nuisanceHeld:
			// Short: the zoom is narrow beside its legend, and a longer
			// title ran off the figure's left edge. The legend says how the
			// 95 % span was made (nuisance refitted).
			zt = fmt.Sprintf("Zoom: best %s, 95 %% %s–%s", num(prof.Best), num(prof.Lo95), num(prof.Hi95))
		case calibrated:
			zt = fmt.Sprintf("The profile alone: %s (95 %% %s–%s)", num(prof.Best), num(prof.Lo95), num(prof.Hi95))
		}
		zp, err := panel(zt, zoom, zlo, zhi, 1.6*scale*1.92)
		if err != nil {
			return nil, err
		}
		if nuisanceHeld {
			band, err := xSpan(prof.Lo95, prof.Hi95, 1.6*scale*1.92, color.NRGBA{R: 0x1f, G: 0x4e, B: 0xb4, A: 0x24}) // the profile's blue, faint
			if err != nil {
				return nil, err
			}
			band.LineStyle.Width = 0
			zp.Add(band)
			zp.Legend.Add("95 %, nuisance refitted", band)
		}
		if _, _, err := addRug(zp, refits, zlo, zhi, 0.06*1.6*scale*1.92); err != nil {
			return nil, err
		}
		row = append(row, &figure.Panel{Plot: zp})
		title = fmt.Sprintf("The whole range of the fit, %s–%s", num(lo), num(hi))
		if calibrated {
			title = fmt.Sprintf("With the law's calibration: 68 %% %s–%s", num(cal.Lo68), num(cal.Hi68))
		}
	}
	ymax := 4 * scale
	for _, q := range curve(whole, lo, hi) {
		ymax = math.Max(ymax, q.Y)
	}
	wp, err := panel(title, whole, lo, hi, 1.05*ymax)
	if err != nil {
		return nil, err
	}
	if ok && len(zoom) >= 2 {
		figure.NoLegend(wp) // the zoom's legend serves both
		box, err := xSpan(zlo, zhi, 1.05*ymax, color.NRGBA{R: 0x80, G: 0x80, B: 0x80, A: 0x40})
		if err != nil {
			return nil, err
		}
		box.LineStyle.Color, box.LineStyle.Width = figure.Guide, vg.Points(0.8)
		wp.Add(box)
		wp.Legend.Add("span of the zoom", box)
	}
	if calibrated && cal.Hi95 > cal.Lo95 {
		band, err := xSpan(max(lo, cal.Lo95), min(hi, cal.Hi95), 1.05*ymax, color.NRGBA{R: 0x12, G: 0x8a, B: 0x3c, A: 0x30}) // the curves' green, faint: the profile shows through
		if err != nil {
			return nil, err
		}
		band.LineStyle.Width = 0
		wp.Add(band)
		if ok && len(zoom) >= 2 {
			// The zoom's panel holds the shared legend.
			row[0].Plot.Legend.Add("95 % with the law's calibration", band)
		} else {
			wp.Legend.Add("95 % with the law's calibration", band)
		}
	}
	row = append(row, &figure.Panel{Plot: wp})
	return figure.Layout{row}, nil
}

// xSpan is a filled rectangle over [x0, x1] from 0 to top: a range of a
// parameter marked on a profile panel.
func xSpan(x0, x1, top float64, fill color.Color) (*plotter.Polygon, error) {
	p, err := plotter.NewPolygon(plotter.XYs{{X: x0, Y: 0}, {X: x1, Y: 0}, {X: x1, Y: top}, {X: x0, Y: top}})
	if err != nil {
		return nil, err
	}
	p.Color = fill
	return p, nil
}

// num writes a parameter value with three significant digits.
func num(x float64) string { return fmt.Sprintf("%.3g", x) }

// heightPlotFit is the young fraction against |z|: each hypothesis as
// steps over the |z| bins, the data as points with 68 % Wilson intervals,
// on axes that hold every point and bar.
func heightPlotFit(h *compare.HeightResult) (*plot.Plot, error) {
	p := figure.New(fmt.Sprintf("Young fraction against height (split at the %.2f Gyr gyrochrone)", h.SplitAgeGyr),
		"|z| (pc)", "fraction below the split gyrochrone")
	// An open last bin (to infinity or far beyond the stars) is drawn as
	// wide as the one before it.
	edges := append([]float64(nil), h.ZEdgesPc...)
	if n := len(edges); n >= 3 && (math.IsInf(edges[n-1], 1) || edges[n-1] > 3*edges[n-2]) {
		edges[n-1] = edges[n-2] + (edges[n-2] - edges[n-3])
	}
	var pts plotter.XYs
	var errs plotter.YErrors
	top := 0.0
	for i := range h.Total {
		if h.Total[i] == 0 || math.IsNaN(h.Fraction[i]) {
			continue
		}
		pts = append(pts, plotter.XY{X: (edges[i] + edges[i+1]) / 2, Y: h.Fraction[i]})
		errs = append(errs, struct{ Low, High float64 }{h.Fraction[i] - h.Lo68[i], h.Hi68[i] - h.Fraction[i]})
		top = math.Max(top, h.Hi68[i])
	}
	for k, hy := range h.Hypotheses {
		var xy plotter.XYs
		for i := range hy.Fraction {
			if math.IsNaN(hy.Fraction[i]) {
				continue
			}
			xy = append(xy, plotter.XY{X: edges[i], Y: hy.Fraction[i]}, plotter.XY{X: edges[i+1], Y: hy.Fraction[i]})
			top = math.Max(top, hy.Fraction[i])
		}
		if len(xy) < 2 {
			continue
		}
		l, err := plotter.NewLine(xy)
		if err != nil {
			return nil, err
		}
		l.Color = figure.Curve(k)
		l.Width = figure.LineWidth
		p.Add(l)
		p.Legend.Add(fmt.Sprintf("%s (ln L %.1f)", readable(hy.Name), hy.LogL), l)
	}
	if len(pts) > 0 {
		sc, err := plotter.NewScatter(pts)
		if err != nil {
			return nil, err
		}
		sc.GlyphStyle.Shape = draw.CircleGlyph{}
		sc.GlyphStyle.Color = figure.Data
		sc.GlyphStyle.Radius = vg.Points(2.5)
		eb, err := plotter.NewYErrorBars(struct {
			plotter.XYer
			plotter.YErrorer
		}{pts, errs})
		if err != nil {
			return nil, err
		}
		eb.Color = figure.Data
		p.Add(eb, sc)
		p.Legend.Add("data (68 % interval)", sc)
	}
	// The axis ends with the last bin that holds a catalog star.
	last := len(edges) - 1
	for last > 1 && h.Total[last-1] == 0 {
		last--
	}
	p.X.Min, p.X.Max = edges[0], edges[last]
	p.Y.Min, p.Y.Max = 0, math.Min(1, 1.08*math.Max(top, 0.05))
	return p, nil
}

// bootstrapPlot is the distribution of the likelihood-ratio statistic in
// the bootstrap replicates (counts on a log axis, so that the tail's few
// replicates show) with the observed value marked. When the observed value
// lies far beyond every replicate, the axis stays on the replicates and an
// arrow at its right edge says where the observed value is.
func bootstrapPlot(lr float64, reps []float64, under string) (*plot.Plot, error) {
	p := figure.New(fmt.Sprintf("Likelihood ratio in %d bootstrap replicates under the %s", len(reps), under),
		"LR = 2 Δln L", "replicates (log scale)")
	if len(reps) == 0 {
		return p, nil
	}
	repMax := math.Max(maxOf(reps), 1e-3)
	offScale := lr > 1.6*repMax
	top := repMax * 1.08
	if !offScale {
		top = math.Max(lr, repMax) * 1.08
	}
	lowest := 0.0
	for _, v := range reps {
		lowest = math.Min(lowest, v)
	}
	const nb = 30
	edges := grid.Linspace(lowest, top, nb+1)
	y := make([]float64, nb)
	for _, v := range reps {
		i := int((v - lowest) / (top - lowest) * nb)
		y[min(max(i, 0), nb-1)]++
	}
	// Empty bins sit at the axis floor (a log axis has no 0).
	const floor = 0.5
	steps := make([]float64, nb)
	for i := range y {
		steps[i] = math.Max(y[i], floor)
	}
	l, err := stepLine(edges, steps, figure.Curve(0))
	if err != nil {
		return nil, err
	}
	p.Add(l)
	p.Legend.Add("replicates", l)
	p.Y.Scale = plot.LogScale{}
	p.Y.Tick.Marker = countsOnly{figure.LogTicks{}}
	ymax := math.Max(maxOf(y), 1) * 2
	p.Y.Min, p.Y.Max = floor, ymax
	p.X.Min, p.X.Max = lowest, top
	if !offScale {
		ol, err := plotter.NewLine(plotter.XYs{{X: lr, Y: floor}, {X: lr, Y: ymax}})
		if err != nil {
			return nil, err
		}
		ol.Color = figure.Curve(1)
		ol.Width = vg.Points(2)
		p.Add(ol)
		p.Legend.Add(fmt.Sprintf("observed LR = %.1f", lr), ol)
		return p, nil
	}
	// Off scale: an arrow glyph at the right edge, named in the legend.
	mk, err := plotter.NewScatter(plotter.XYs{{X: top, Y: math.Sqrt(floor * ymax)}})
	if err != nil {
		return nil, err
	}
	mk.Shape = rightArrow{}
	mk.Color = figure.Curve(1)
	mk.Radius = vg.Points(7)
	p.Add(mk)
	p.Legend.Add(fmt.Sprintf("observed LR = %.1f, off scale to the right", lr), mk)
	return p, nil
}

// rightArrow is a filled triangle pointing right whose tip is the point.
type rightArrow struct{}

func (rightArrow) DrawGlyph(c *draw.Canvas, sty draw.GlyphStyle, pt vg.Point) {
	r := sty.Radius
	c.FillPolygon(sty.Color, []vg.Point{{X: pt.X, Y: pt.Y}, {X: pt.X - 1.6*r, Y: pt.Y + r}, {X: pt.X - 1.6*r, Y: pt.Y - r}})
}

// countsOnly drops the labels of ticks below one: on a log axis of
// counts the space below 1 is only the floor empty bins are drawn at.
type countsOnly struct{ plot.Ticker }

func (c countsOnly) Ticks(lo, hi float64) []plot.Tick {
	t := c.Ticker.Ticks(lo, hi)
	for i := range t {
		if t[i].Value < 1 {
			t[i].Label = ""
		}
	}
	return t
}

// addRug marks each refitted value inside [xmin, xmax] by a short tick
// rising from the axis (a rug), so that the refits' spread reads against
// the interval drawn above it, and names them in the legend with how many
// of the n that succeeded (not NaN) fall inside.
func addRug(p *plot.Plot, xs []float64, xmin, xmax, height float64) (in, n int, err error) {
	var first *plotter.Line
	for _, x := range xs {
		if math.IsNaN(x) {
			continue
		}
		n++
		if x < xmin || x > xmax {
			continue
		}
		in++
		l, err := plotter.NewLine(plotter.XYs{{X: x, Y: 0}, {X: x, Y: height}})
		if err != nil {
			return 0, 0, err
		}
		l.Color, l.Width = figure.Data, vg.Points(0.8)
		p.Add(l)
		if first == nil {
			first = l
		}
	}
	if first != nil {
		p.Legend.Add(fmt.Sprintf("burst age refitted on mocks of the fit (%d of %d here)", in, n), first)
	}
	return in, n, nil
}
