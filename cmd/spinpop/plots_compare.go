package main

import (
	"fmt"
	"image/color"
	"math"
	"slices"
	"strings"

	"spinpop/internal/figure"
	"spinpop/internal/grid"
	"spinpop/pipeline"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// Plots of the injection–recovery and posterior commands.

// paramLabel turns a history parameter's name ("burst.age_gyr") into an
// axis label with its unit ("burst age (Gyr)").
func paramLabel(name string) string {
	part, key, ok := strings.Cut(name, ".")
	if !ok {
		part, key = "", name
	}
	unit := ""
	for _, u := range []struct{ suffix, unit string }{{"_gyr", "Gyr"}, {"_myr", "Myr"}, {"_per_gyr", "per Gyr"}} {
		if k, ok := strings.CutSuffix(key, u.suffix); ok {
			key, unit = k, u.unit
			break
		}
	}
	label := strings.TrimSpace(part + " " + strings.ReplaceAll(key, "_", " "))
	if unit != "" {
		label += " (" + unit + ")"
	}
	return label
}

// labelTicks are ticks at the given positions with the given labels, for
// categorical axes.
func labelTicks(labels []string) plot.ConstantTicks {
	t := make(plot.ConstantTicks, len(labels))
	for i, l := range labels {
		t[i] = plot.Tick{Value: float64(i), Label: l}
	}
	return t
}

// recoveryMapPlot draws the detection rate as cells on injected age ×
// mass fraction (categorical axes, one cell per injection), each labelled
// with its rate in per cent, with the rate's color bar.
func recoveryMapPlot(rep *pipeline.InjectReport) (*figure.Panel, error) {
	na, nf := len(rep.AgesGyr), len(rep.Fractions)
	rate := make([]float64, na*nf)
	var xys plotter.XYs
	var labels []string
	for i, c := range rep.Cells {
		rate[i] = c.DetectionRate
		xys = append(xys, plotter.XY{X: float64(i / nf), Y: float64(i % nf)})
		labels = append(labels, fmt.Sprintf("%.0f %%", 100*c.DetectionRate))
	}
	p := figure.New(fmt.Sprintf("Detection rate of the burst test (p < %g), %d mocks of %d stars per cell\n"+
		"false alarms under the smooth history: %.0f %% (p < %g)", detectionP, rep.Replicates, rep.StarsPerMock,
		100*rep.FalseAlarm.Rate, detectionP), "injected burst age (Gyr)", "injected burst mass fraction")
	scale := figure.Rate("detection rate")
	p.Add(&figure.Cells{XEdges: grid.Linspace(-0.5, float64(na)-0.5, na+1), YEdges: grid.Linspace(-0.5, float64(nf)-0.5, nf+1),
		Scale: scale, Value: func(i, j int) float64 { return rate[i*nf+j] }})
	lab, err := plotter.NewLabels(plotter.XYLabels{XYs: xys, Labels: labels})
	if err != nil {
		return nil, err
	}
	for i := range lab.TextStyle {
		lab.TextStyle[i].Font.Size = vg.Points(13)
		lab.TextStyle[i].XAlign = draw.XCenter
		lab.TextStyle[i].YAlign = draw.YCenter
		lab.TextStyle[i].Color = color.Black
		if rate[i] > 0.6 {
			lab.TextStyle[i].Color = color.White
		}
	}
	p.Add(lab)
	ageLabels := make([]string, na)
	for i, a := range rep.AgesGyr {
		ageLabels[i] = fmt.Sprintf("%g", a)
	}
	fracLabels := make([]string, nf)
	for i, f := range rep.Fractions {
		fracLabels[i] = fmt.Sprintf("%g %%", 100*f)
	}
	p.X.Tick.Marker = labelTicks(ageLabels)
	p.Y.Tick.Marker = labelTicks(fracLabels)
	p.X.Min, p.X.Max = -0.5, float64(na)-0.5
	p.Y.Min, p.Y.Max = -0.5, float64(nf)-0.5
	return &figure.Panel{Plot: p, Bar: scale}, nil
}

// errPoints are points with asymmetric vertical error bars.
type errPoints struct {
	plotter.XYs
	plotter.YErrors
}

// ageBiasPlotInject shows recovered minus injected burst age against the
// injected age: the median over mocks and the 16–84 % range, one series per
// injected mass fraction, nudged sideways so the bars do not overlap.
func ageBiasPlotInject(rep *pipeline.InjectReport) (*plot.Plot, error) {
	na, nf := len(rep.AgesGyr), len(rep.Fractions)
	p := figure.New("", "", "")
	p.Title.Text = fmt.Sprintf("Recovered minus injected burst age (median and 16–84 %% of %d mocks)", rep.Replicates)
	p.X.Label.Text = "injected burst age (Gyr)"
	p.Y.Label.Text = "recovered − injected age (Gyr)"
	lo, hi := slices.Min(rep.AgesGyr), slices.Max(rep.AgesGyr)
	logX := lo > 0 && hi/lo >= 4
	if logX {
		p.X.Scale = plot.LogScale{}
	}
	ticks := make(plot.ConstantTicks, na)
	for i, a := range rep.AgesGyr {
		ticks[i] = plot.Tick{Value: a, Label: fmt.Sprintf("%g", a)}
	}
	p.X.Tick.Marker = ticks
	// Sideways nudge of series f, a fraction of the smallest gap between ages.
	sorted := slices.Sorted(slices.Values(rep.AgesGyr))
	gap := math.Inf(1)
	for i := 1; i < len(sorted); i++ {
		if logX {
			gap = math.Min(gap, math.Log(sorted[i]/sorted[i-1]))
		} else {
			gap = math.Min(gap, sorted[i]-sorted[i-1])
		}
	}
	if math.IsInf(gap, 1) || gap == 0 {
		gap = 0.2
		if !logX {
			gap = math.Max(0.2*math.Abs(lo), 0.05)
		}
	}
	step := 0.5 * gap / float64(max(nf, 1))
	nudge := func(x float64, f int) float64 {
		d := (float64(f) - float64(nf-1)/2) * step
		if logX {
			return x * math.Exp(d)
		}
		return x + d
	}
	xmin, xmax := nudge(lo, 0), nudge(hi, nf-1)
	if logX {
		xmin, xmax = xmin/math.Exp(step), xmax*math.Exp(step)
	} else {
		xmin, xmax = xmin-step, xmax+step
	}
	zero, err := plotter.NewLine(plotter.XYs{{X: xmin, Y: 0}, {X: xmax, Y: 0}})
	if err != nil {
		return nil, err
	}
	zero.Color = color.Gray{Y: 0x99}
	zero.Dashes = []vg.Length{vg.Points(4), vg.Points(3)}
	p.Add(zero)
	for f, frac := range rep.Fractions {
		pts := errPoints{XYs: make(plotter.XYs, na), YErrors: make(plotter.YErrors, na)}
		for a := range rep.AgesGyr {
			c := rep.Cells[a*nf+f]
			pts.XYs[a] = plotter.XY{X: nudge(c.AgeGyr, f), Y: c.AgeBiasMedianGyr}
			pts.YErrors[a].Low = c.AgeBiasMedianGyr - c.AgeBiasQ16Gyr
			pts.YErrors[a].High = c.AgeBiasQ84Gyr - c.AgeBiasMedianGyr
		}
		col := figure.Curve(f)
		bars, err := plotter.NewYErrorBars(pts)
		if err != nil {
			return nil, err
		}
		bars.Color = col
		bars.Width = vg.Points(1.3)
		bars.CapWidth = vg.Points(6)
		line, sc, err := plotter.NewLinePoints(pts.XYs)
		if err != nil {
			return nil, err
		}
		line.Color = col
		line.Width = vg.Points(0.8)
		line.Dashes = []vg.Length{vg.Points(2), vg.Points(2)}
		sc.Color = col
		sc.Shape = draw.CircleGlyph{}
		sc.Radius = vg.Points(3)
		p.Add(bars, line, sc)
		p.Legend.Add(fmt.Sprintf("%g %% of the mass", 100*frac), sc)
	}
	// The axis holds every bar with a twentieth of its span to spare (the
	// legend sits beside the plot, not over it).
	ylo, yhi := 0.0, 0.0
	for _, c := range rep.Cells {
		ylo, yhi = math.Min(ylo, c.AgeBiasQ16Gyr), math.Max(yhi, c.AgeBiasQ84Gyr)
	}
	if yhi-ylo <= 0 {
		ylo, yhi = -0.01, 0.01
	}
	span := yhi - ylo
	p.Y.Min, p.Y.Max = ylo-0.05*span, yhi+0.05*span
	p.X.Min, p.X.Max = xmin, xmax
	p.Legend.Top = true
	p.Legend.Left = false
	return p, nil
}

// noLabels wraps a ticker, keeping its tick marks but dropping their
// labels: the inner panels of a corner plot share their neighbours' axes.
type noLabels struct{ plot.Ticker }

func (n noLabels) Ticks(lo, hi float64) []plot.Tick {
	t := n.Ticker.Ticks(lo, hi)
	for i := range t {
		t[i].Label = ""
	}
	return t
}

// fewTicks is the default ticker thinned to at most three labelled ticks,
// so that the small panels of a corner plot keep their labels apart.
type fewTicks struct{}

func (fewTicks) Ticks(lo, hi float64) []plot.Tick {
	all := plot.DefaultTicks{}.Ticks(lo, hi)
	var major []plot.Tick
	for _, t := range all {
		if !t.IsMinor() {
			major = append(major, t)
		}
	}
	if len(major) <= 3 {
		return all
	}
	out := make([]plot.Tick, 0, len(all))
	for i, t := range major {
		if i%2 == 1 {
			t.Label = ""
		}
		out = append(out, t)
	}
	return out
}

// inRange drops the ticks a ticker places outside the axis range:
// plot.LogTicks labels whole decades beyond it, and the plot would make
// room for those labels by squeezing the data area.
type inRange struct{ plot.Ticker }

func (r inRange) Ticks(lo, hi float64) []plot.Tick {
	var out []plot.Tick
	for _, t := range r.Ticker.Ticks(lo, hi) {
		if t.Value >= lo && t.Value <= hi {
			out = append(out, t)
		}
	}
	return out
}

// hist2D is a 2-D histogram of posterior samples for a heat map.
type hist2D struct {
	xEdges, yEdges []float64
	n              []float64 // [x*ny + y]
}

func (h hist2D) Dims() (c, r int)   { return len(h.xEdges) - 1, len(h.yEdges) - 1 }
func (h hist2D) Z(c, r int) float64 { return h.n[c*(len(h.yEdges)-1)+r] }
func (h hist2D) X(c int) float64    { return (h.xEdges[c] + h.xEdges[c+1]) / 2 }
func (h hist2D) Y(r int) float64    { return (h.yEdges[r] + h.yEdges[r+1]) / 2 }

// binOf returns the bin of x among edges, or −1 outside.
func binOf(edges []float64, x float64) int {
	n := len(edges) - 1
	if x < edges[0] || x > edges[n] {
		return -1
	}
	i := int(float64(n) * (x - edges[0]) / (edges[n] - edges[0]))
	return min(i, n-1)
}

// cornerGrid draws the posterior's corner plot: the marginal histogram
// of each parameter on the diagonal (median solid, 16 and 84 % dashed) and
// the 2-D density of each pair below it, the best stored position (MAP)
// marked. samples is n × dim, row-major.
func cornerGrid(rep *pipeline.PosteriorReport, samples []float64) ([][]*plot.Plot, error) {
	d := len(rep.Parameters)
	n := len(samples) / d
	const bins1, bins2 = 40, 30
	edges := make([][]float64, d)
	for i := range d {
		lo, hi := math.Inf(1), math.Inf(-1)
		for j := range n {
			v := samples[j*d+i]
			lo, hi = math.Min(lo, v), math.Max(hi, v)
		}
		if !(hi > lo) {
			pad := math.Max(1e-6, 1e-3*math.Abs(lo))
			lo, hi = lo-pad, hi+pad
		}
		edges[i] = grid.Linspace(lo, hi, bins1+1)
	}
	grid := make([][]*plot.Plot, d)
	for row := range d {
		grid[row] = make([]*plot.Plot, d)
		for col := 0; col <= row; col++ {
			p := figure.New("", "", "")
			p.X.Tick.Marker = fewTicks{}
			p.Y.Tick.Marker = fewTicks{}
			p.X.Tick.Label.Font.Size = vg.Points(8)
			p.Y.Tick.Label.Font.Size = vg.Points(8)
			par := rep.Parameters[col]
			if row == d-1 {
				p.X.Label.Text = paramLabel(par.Name)
			} else {
				p.X.Tick.Marker = noLabels{fewTicks{}}
			}
			if row == col {
				if err := cornerDiagonal(p, par, edges[col], samples, d, col); err != nil {
					return nil, err
				}
			} else {
				if col == 0 {
					p.Y.Label.Text = paramLabel(rep.Parameters[row].Name)
				} else {
					p.Y.Tick.Marker = noLabels{fewTicks{}}
				}
				if err := cornerPair(p, rep, edges[col], edges[row], samples, d, col, row, bins2); err != nil {
					return nil, err
				}
			}
			grid[row][col] = p
		}
	}
	return grid, nil
}

// cornerDiagonal draws one parameter's marginal posterior density.
func cornerDiagonal(p *plot.Plot, par pipeline.PosteriorParam, edges, samples []float64, d, i int) error {
	nb := len(edges) - 1
	counts := make([]float64, nb)
	n := len(samples) / d
	for j := range n {
		if b := binOf(edges, samples[j*d+i]); b >= 0 {
			counts[b]++
		}
	}
	w := edges[1] - edges[0]
	peak := 0.0
	for b := range counts {
		counts[b] /= float64(n) * w
		peak = math.Max(peak, counts[b])
	}
	l, err := stepLine(edges, counts, figure.Curve(0))
	if err != nil {
		return err
	}
	p.Add(l)
	for _, m := range []struct {
		x      float64
		dashed bool
	}{{par.Q16, true}, {par.Median, false}, {par.Q84, true}} {
		v, err := plotter.NewLine(plotter.XYs{{X: m.x, Y: 0}, {X: m.x, Y: 1.05 * peak}})
		if err != nil {
			return err
		}
		v.Color = figure.Curve(1)
		v.Width = vg.Points(1)
		if m.dashed {
			v.Dashes = []vg.Length{vg.Points(3), vg.Points(2)}
		}
		p.Add(v)
	}
	p.Title.Text = fmt.Sprintf("%s\n%s", paramLabel(par.Name), formatInterval(par.Median, par.Q16, par.Q84))
	p.Title.TextStyle.Font.Size = vg.Points(9)
	p.Y.Min, p.Y.Max = 0, 1.1*peak
	p.X.Min, p.X.Max = edges[0], edges[len(edges)-1]
	// Densities of different parameters are not comparable; the y axis
	// would only add numbers.
	p.Y.Tick.Marker = plot.ConstantTicks{}
	p.Y.Label.Text = ""
	return nil
}

// formatInterval writes "0.612 +0.021 −0.034" with as many digits as the
// interval's width asks for.
func formatInterval(med, q16, q84 float64) string {
	width := math.Max(q84-med, med-q16)
	digits := 2
	if width > 0 {
		digits = max(0, min(6, 1-int(math.Floor(math.Log10(width)))))
	}
	return fmt.Sprintf("%.*f +%.*f −%.*f", digits, med, digits, q84-med, digits, med-q16)
}

// cornerPair draws the 2-D posterior density of parameters x and y.
func cornerPair(p *plot.Plot, rep *pipeline.PosteriorReport, xe1, ye1, samples []float64, d, ix, iy, bins int) error {
	xe := grid.Linspace(xe1[0], xe1[len(xe1)-1], bins+1)
	ye := grid.Linspace(ye1[0], ye1[len(ye1)-1], bins+1)
	h := hist2D{xEdges: xe, yEdges: ye, n: make([]float64, bins*bins)}
	n := len(samples) / d
	peak := 0.0
	for j := range n {
		bx, by := binOf(xe, samples[j*d+ix]), binOf(ye, samples[j*d+iy])
		if bx >= 0 && by >= 0 {
			h.n[bx*bins+by]++
			peak = math.Max(peak, h.n[bx*bins+by])
		}
	}
	// Share of samples per cell; one color scale for every pair panel.
	scale := cornerScale
	p.Add(&figure.Cells{XEdges: xe, YEdges: ye, Scale: scale, SkipEmpty: true,
		Value: func(i, j int) float64 {
			v := h.n[i*bins+j]
			if v == 0 {
				return math.NaN()
			}
			return v / math.Max(peak, 1)
		}})
	mx, my := rep.Parameters[ix].MAP, rep.Parameters[iy].MAP
	sc, err := plotter.NewScatter(plotter.XYs{{X: mx, Y: my}})
	if err != nil {
		return err
	}
	sc.Shape = thickCross{}
	sc.Radius = vg.Points(4)
	sc.Color = figure.Curve(0)
	p.Add(sc)
	p.X.Min, p.X.Max = xe[0], xe[bins]
	p.Y.Min, p.Y.Max = ye[0], ye[bins]
	return nil
}

// thickCross is an × glyph drawn bold enough to see on a density map
// (draw.CrossGlyph's hairline is not).
type thickCross struct{}

func (thickCross) DrawGlyph(c *draw.Canvas, sty draw.GlyphStyle, pt vg.Point) {
	ls := draw.LineStyle{Color: sty.Color, Width: vg.Points(1.6)}
	r := sty.Radius * 0.7071
	c.StrokeLine2(ls, pt.X-r, pt.Y-r, pt.X+r, pt.Y+r)
	c.StrokeLine2(ls, pt.X-r, pt.Y+r, pt.X+r, pt.Y-r)
}

// sfhBandPlot draws the star-formation rate's posterior median and its
// 16–84 % band (a filled polygon), and the rate of the best stored
// position (MAP), dashed.
func sfhBandPlot(title string, ages, med, lo, hi, mapRate []float64, logY bool) (*plot.Plot, error) {
	p := figure.New("", "", "")
	p.Title.Text = title
	p.X.Label.Text = "lookback age (Gyr)"
	p.Y.Label.Text = "rate (share of all mass per Gyr)"
	ring := make(plotter.XYs, 0, 2*len(ages))
	for i := range ages {
		ring = append(ring, plotter.XY{X: ages[i], Y: hi[i]})
	}
	for i := len(ages) - 1; i >= 0; i-- {
		ring = append(ring, plotter.XY{X: ages[i], Y: lo[i]})
	}
	band, err := plotter.NewPolygon(ring)
	if err != nil {
		return nil, err
	}
	band.Color = color.NRGBA{R: 0x1f, G: 0x4e, B: 0xb4, A: 0x40} // figure.Curve(0), translucent
	band.LineStyle.Width = 0
	band.LineStyle.Color = color.Transparent
	p.Add(band)
	p.Legend.Add("16–84 % of the posterior", band)
	line := func(y []float64, c color.Color, dashed bool, name string) error {
		xy := make(plotter.XYs, len(ages))
		for i := range ages {
			xy[i] = plotter.XY{X: ages[i], Y: y[i]}
		}
		l, err := plotter.NewLine(xy)
		if err != nil {
			return err
		}
		l.Color = c
		l.Width = vg.Points(1.5)
		if dashed {
			l.Dashes = []vg.Length{vg.Points(4), vg.Points(3)}
		}
		p.Add(l)
		p.Legend.Add(name, l)
		return nil
	}
	if err := line(med, figure.Curve(0), false, "posterior median"); err != nil {
		return nil, err
	}
	if err := line(mapRate, figure.Curve(1), true, "best sample (MAP)"); err != nil {
		return nil, err
	}
	p.X.Min, p.X.Max = ages[0], ages[len(ages)-1]
	top := slices.Max(hi)
	top = math.Max(top, slices.Max(mapRate))
	if logY {
		p.Y.Scale = plot.LogScale{}
		p.Y.Tick.Marker = inRange{plot.LogTicks{Prec: -1}}
		bottom := math.Inf(1)
		for i := range lo {
			bottom = math.Min(bottom, math.Min(lo[i], mapRate[i]))
		}
		p.Y.Min, p.Y.Max = bottom/1.5, top*3
	} else {
		p.Y.Min, p.Y.Max = 0, 1.25*top
	}
	p.Legend.Top = true
	p.Legend.Left = false
	return p, nil
}

// cornerScale is the one color scale of a corner plot's pair panels:
// samples per cell as a share of the panel's fullest cell.
var cornerScale = figure.Sequential(1, "samples per cell, share of the fullest")

// cornerLayout wraps the corner plot's panels, their titles inside, and
// puts the pair panels' one color bar in the empty corner at the top right.
func cornerLayout(g [][]*plot.Plot) figure.Layout {
	out := make(figure.Layout, len(g))
	for i, row := range g {
		out[i] = make([]*figure.Panel, len(row))
		for j, p := range row {
			if p != nil {
				out[i][j] = &figure.Panel{Plot: p, LegendInside: true}
			}
		}
	}
	if d := len(g); d >= 2 && out[0][d-1] == nil {
		out[0][d-1] = &figure.Panel{Bar: cornerScale}
	}
	return out
}
