package main

import (
	"fmt"
	"image/color"
	"math"
	"os"
	"path/filepath"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"spinpop/internal/figure"
	"spinpop/sweep"
)

// Plots of a sweep: the headline numbers against each axis, and the
// systematics figure.

// sweepMetric is one headline number a sweep plot shows, with its
// interval when it has one.
type sweepMetric struct {
	label string
	get   func(h *sweep.Headline) (v, lo, hi *float64)
}

var sweepMetrics = []sweepMetric{
	{"catalog stars", func(h *sweep.Headline) (*float64, *float64, *float64) {
		if h.CatalogStars == nil {
			return nil, nil, nil
		}
		return sweep.F(float64(*h.CatalogStars)), nil, nil
	}},
	{"ln L (history as written)", func(h *sweep.Headline) (*float64, *float64, *float64) { return h.LnL, nil, nil }},
	{"adequacy: bootstrap p of the deviance", func(h *sweep.Headline) (*float64, *float64, *float64) { return h.AdequacyP, nil, nil }},
	{"burst age (Gyr), 68 % interval", func(h *sweep.Headline) (*float64, *float64, *float64) {
		return h.BurstAgeGyr, h.BurstAgeLoGyr, h.BurstAgeHiGyr
	}},
	{"burst mass fraction, 68 % interval", func(h *sweep.Headline) (*float64, *float64, *float64) {
		return h.BurstFraction, h.BurstFractionLo, h.BurstFractionHi
	}},
	{"Δln L (burst − smooth)", func(h *sweep.Headline) (*float64, *float64, *float64) { return h.DeltaLnL, nil, nil }},
	{"significance (σ, bootstrap)", func(h *sweep.Headline) (*float64, *float64, *float64) { return h.SignificanceSigma, nil, nil }},
}

// writeSweepPlots writes plots/<axis key>.png for each axis: one panel per
// headline number the sweep produced, every finished point a marker
// (with its interval), colored by the values of the other axes when they
// are few. It returns the files written, relative to out.
func writeSweepPlots(out string, t *sweep.Table) ([]string, error) {
	if len(t.Axes) == 0 || t.Done == 0 {
		return nil, nil
	}
	var metrics []sweepMetric
	for _, m := range sweepMetrics {
		for i := range t.Rows {
			if v, _, _ := m.get(&t.Rows[i].Headline); v != nil && t.Rows[i].Status == sweep.StatusDone {
				metrics = append(metrics, m)
				break
			}
		}
	}
	if len(metrics) == 0 {
		return nil, nil
	}
	if err := os.MkdirAll(filepath.Join(out, "plots"), 0o755); err != nil {
		return nil, err
	}
	var written []string
	for a, key := range t.Axes {
		xs, ticks := axisPositions(t, a)
		groups, names := otherAxesGroups(t, a)
		var panels []*plot.Plot
		for _, m := range metrics {
			p, err := sweepPanel(t, m, a, key, xs, ticks, groups, names)
			if err != nil {
				return nil, err
			}
			panels = append(panels, p)
		}
		cols := min(len(panels), 3)
		grid := legendsInside(inRows(panels, cols))
		name := filepath.Join("plots", fileSafe(key)+".png")
		w := vg.Length(cols) * 12 * vg.Centimeter
		h := vg.Length(len(grid)) * 9 * vg.Centimeter
		if err := writeFigureFile(filepath.Join(out, name), grid, w, h); err != nil {
			return nil, err
		}
		written = append(written, name)
	}
	return written, nil
}

// axisPositions places each row on axis a: the value itself when every
// value is a number, else the index of the value among the axis's
// distinct values in order of first appearance, with tick labels.
func axisPositions(t *sweep.Table, a int) ([]float64, plot.Ticker) {
	xs := make([]float64, len(t.Rows))
	numeric := true
	for _, r := range t.Rows {
		if _, ok := numberOf(r.Values[a]); !ok {
			numeric = false
			break
		}
	}
	if numeric {
		for i, r := range t.Rows {
			xs[i], _ = numberOf(r.Values[a])
		}
		return xs, nil
	}
	var labels []string
	index := map[string]int{}
	for i, r := range t.Rows {
		l := axisCell(r.Values[a])
		k, ok := index[l]
		if !ok {
			k = len(labels)
			index[l] = k
			labels = append(labels, l)
		}
		xs[i] = float64(k)
	}
	return xs, labelTicks(labels)
}

func numberOf(v any) (float64, bool) {
	switch x := v.(type) {
	case int64:
		return float64(x), true
	case float64:
		return x, true
	}
	return 0, false
}

// axisCell is an axis value in a label: strings bare.
func axisCell(v any) string {
	if s, ok := v.(string); ok {
		return s
	}
	return sweep.ValueText(v)
}

// otherAxesGroups groups rows by the values of every axis but a; more
// than six groups are one unnamed group (a legend of dozens helps no
// one).
func otherAxesGroups(t *sweep.Table, a int) ([]int, []string) {
	groups := make([]int, len(t.Rows))
	var names []string
	index := map[string]int{}
	for i, r := range t.Rows {
		var parts []string
		for j, k := range t.Axes {
			if j != a {
				parts = append(parts, k+" = "+axisCell(r.Values[j]))
			}
		}
		l := strings.Join(parts, ", ")
		g, ok := index[l]
		if !ok {
			g = len(names)
			index[l] = g
			names = append(names, l)
		}
		groups[i] = g
	}
	if len(names) > 6 || (len(names) == 1 && names[0] == "") {
		return make([]int, len(t.Rows)), nil
	}
	return groups, names
}

func sweepPanel(t *sweep.Table, m sweepMetric, a int, key string, xs []float64, ticks plot.Ticker, groups []int, names []string) (*plot.Plot, error) {
	p := figure.New(m.label, keyLabel(key), "")
	if ticks != nil {
		p.X.Tick.Marker = ticks
		n := len(ticks.Ticks(0, 0))
		p.X.Min, p.X.Max = -0.5, float64(n)-0.5
	}
	nGroups := max(len(names), 1)
	spread := 0.0
	if ticks != nil && nGroups > 1 {
		spread = 0.5 / float64(nGroups) // side by side within a category
	}
	for g := range nGroups {
		var pts plotter.XYs
		var bars sweepErrBars
		for i := range t.Rows {
			r := &t.Rows[i]
			if groups[i] != g || r.Status != sweep.StatusDone {
				continue
			}
			v, lo, hi := m.get(&r.Headline)
			if v == nil || math.IsNaN(*v) || math.IsInf(*v, 0) {
				continue
			}
			x := xs[i] + spread*(float64(g)-float64(nGroups-1)/2)
			pts = append(pts, plotter.XY{X: x, Y: *v})
			if lo != nil && hi != nil {
				bars = append(bars, sweepErrBar{x: x, y: *v, lo: *v - *lo, hi: *hi - *v})
			}
		}
		if len(pts) == 0 {
			continue
		}
		c := overlayColors[g%len(overlayColors)]
		if len(bars) > 0 {
			eb, err := plotter.NewYErrorBars(bars)
			if err != nil {
				return nil, err
			}
			eb.Color = c
			eb.LineStyle.Color = c
			p.Add(eb)
		}
		sc, err := plotter.NewScatter(pts)
		if err != nil {
			return nil, err
		}
		sc.GlyphStyle = draw.GlyphStyle{Color: c, Radius: vg.Points(3), Shape: draw.CircleGlyph{}}
		p.Add(sc)
		if g < len(names) {
			p.Legend.Add(names[g], sc)
		}
	}
	p.Legend.Top = true
	p.Legend.TextStyle.Font.Size = vg.Points(8)
	if len(names) > 0 {
		legendRoom(p, len(names))
	}
	return p, nil
}

// legendsInside lays plots out with their legends inside the axes, in
// the room legendRoom (or the systematics panel's spare rows) leaves
// above the data: beside the axes a legend of long labels would squeeze
// the data to nothing.
func legendsInside(grid [][]*plot.Plot) figure.Layout {
	l := make(figure.Layout, len(grid))
	for i, row := range grid {
		l[i] = make([]*figure.Panel, len(row))
		for j, p := range row {
			if p != nil {
				l[i][j] = &figure.Panel{Plot: p, LegendInside: true}
			}
		}
	}
	return l
}

// legendRoom raises the top of the y axis so that a legend of n entries
// in the top corner sits above the data.
func legendRoom(p *plot.Plot, n int) {
	lo, hi := p.Y.Min, p.Y.Max
	if !(hi > lo) {
		return
	}
	p.Y.Max = hi + (hi-lo)*(0.08+0.07*float64(n))
}

// sweepErrBar is a point with asymmetric error bars (lo below, hi above).
type sweepErrBar struct{ x, y, lo, hi float64 }

type sweepErrBars []sweepErrBar

func (e sweepErrBars) Len() int                         { return len(e) }
func (e sweepErrBars) XY(i int) (float64, float64)      { return e[i].x, e[i].y }
func (e sweepErrBars) YError(i int) (float64, float64)  { return e[i].lo, e[i].hi }
func (e sweepErrBars) swapped() sweepErrBarsX           { return sweepErrBarsX(e) }
func (e sweepErrBarsX) Len() int                        { return len(e) }
func (e sweepErrBarsX) XY(i int) (float64, float64)     { return e[i].y, e[i].x }
func (e sweepErrBarsX) XError(i int) (float64, float64) { return e[i].lo, e[i].hi }

// sweepErrBarsX is sweepErrBars with the roles of x and y swapped: a value
// along x with its interval, at a row along y.
type sweepErrBarsX []sweepErrBar

func fileSafe(s string) string {
	return strings.Map(func(r rune) rune {
		if r == '/' || r == '\\' || r == ' ' || r == ':' {
			return '_'
		}
		return r
	}, s)
}

const systematicsWidth = 34 * vg.Centimeter

func systematicsHeight(choices int) vg.Length {
	return vg.Length(max(choices, 3))*1.1*vg.Centimeter + 5*vg.Centimeter
}

// systematicsPlot is the systematics figure: for each choice (one row
// each), the burst age and fraction with their 68 % intervals; the
// envelope over the adequate choices shaded (over all choices when none is
// adequate), the one over all choices dashed. Choices where the model does
// not describe the catalog are drawn hollow and grey.
func systematicsPlot(s *sweep.Systematics) ([]*plot.Plot, error) {
	if s.AgeGyr == nil {
		return nil, nil
	}
	labels := make([]string, len(s.Choices))
	for i, c := range s.Choices {
		labels[len(s.Choices)-1-i] = shortChoice(c, s.Axes)
	}
	age, err := systematicsPanel(s, "burst age (Gyr)", labels, s.AgeGyr, s.AgeGyrAdequate, func(h *sweep.Headline) (*float64, *float64, *float64) {
		return h.BurstAgeGyr, h.BurstAgeLoGyr, h.BurstAgeHiGyr
	})
	if err != nil {
		return nil, err
	}
	frac, err := systematicsPanel(s, "burst mass fraction", labels, s.Fraction, s.FractionAdequate, func(h *sweep.Headline) (*float64, *float64, *float64) {
		return h.BurstFraction, h.BurstFractionLo, h.BurstFractionHi
	})
	if err != nil {
		return nil, err
	}
	frac.Y.Tick.Marker = noLabels{labelTicks(labels)}
	return []*plot.Plot{age, frac}, nil
}

// shortChoice labels a choice by its axis values alone.
func shortChoice(c sweep.Choice, axes []string) string {
	if len(axes) == 0 {
		return "base"
	}
	label := c.Label
	for _, k := range axes {
		label = strings.ReplaceAll(label, k+" = ", "")
	}
	label = strings.ReplaceAll(label, `"`, "")
	if c.Status != sweep.StatusDone {
		label += " (" + c.Status + ")"
	}
	return label
}

func systematicsPanel(s *sweep.Systematics, title string, labels []string, all, adequate *sweep.Envelope,
	get func(*sweep.Headline) (*float64, *float64, *float64)) (*plot.Plot, error) {
	p := figure.New("", title+", 68 % profile-likelihood interval under each choice", "")
	n := len(s.Choices)
	// Room above the rows for the legend.
	p.Y.Min, p.Y.Max = -0.7, float64(n)+1.2
	p.Y.Tick.Marker = labelTicks(labels)
	shade := adequate
	if shade == nil {
		shade = all
	}
	if shade != nil {
		band, err := plotter.NewPolygon(plotter.XYs{{X: shade.Lo, Y: p.Y.Min}, {X: shade.Hi, Y: p.Y.Min}, {X: shade.Hi, Y: p.Y.Max}, {X: shade.Lo, Y: p.Y.Max}})
		if err != nil {
			return nil, err
		}
		band.Color = color.NRGBA{R: 0x1b, G: 0x9e, B: 0x77, A: 0x50}
		band.LineStyle.Width = 0
		p.Add(band)
		name := "envelope, adequate choices"
		if adequate == nil {
			name = "envelope, all choices"
		}
		p.Legend.Add(fmt.Sprintf("%s [%.3g, %.3g]", name, shade.Lo, shade.Hi), band)
	}
	if all != nil && adequate != nil && (all.Lo != adequate.Lo || all.Hi != adequate.Hi) {
		for _, x := range []float64{all.Lo, all.Hi} {
			l, err := plotter.NewLine(plotter.XYs{{X: x, Y: p.Y.Min}, {X: x, Y: p.Y.Max}})
			if err != nil {
				return nil, err
			}
			l.Color = color.Gray{0x55}
			l.Dashes = []vg.Length{vg.Points(4), vg.Points(3)}
			p.Add(l)
			if x == all.Lo {
				p.Legend.Add(fmt.Sprintf("envelope, all choices [%.3g, %.3g]", all.Lo, all.Hi), l)
			}
		}
	}
	for _, good := range []bool{true, false} {
		var bars sweepErrBars
		var pts plotter.XYs
		for i, c := range s.Choices {
			if !c.Usable || c.Adequate != good {
				continue
			}
			v, lo, hi := get(&c.Headline)
			if v == nil || lo == nil || hi == nil {
				continue
			}
			row := float64(n - 1 - i)
			bars = append(bars, sweepErrBar{x: row, y: *v, lo: *v - *lo, hi: *hi - *v})
			pts = append(pts, plotter.XY{X: *v, Y: row})
		}
		if len(pts) == 0 {
			continue
		}
		c := color.Color(color.RGBA{R: 0x1b, G: 0x5e, B: 0x97, A: 0xff})
		glyph := draw.GlyphDrawer(draw.CircleGlyph{})
		name := "model describes the catalog"
		if !good {
			c, glyph, name = color.Gray{0x80}, draw.RingGlyph{}, "model does not describe the catalog"
		}
		eb, err := plotter.NewXErrorBars(bars.swapped())
		if err != nil {
			return nil, err
		}
		eb.LineStyle.Color = c
		eb.LineStyle.Width = vg.Points(1.5)
		p.Add(eb)
		sc, err := plotter.NewScatter(pts)
		if err != nil {
			return nil, err
		}
		sc.GlyphStyle = draw.GlyphStyle{Color: c, Radius: vg.Points(3.5), Shape: glyph}
		p.Add(sc)
		p.Legend.Add(name, sc)
	}
	p.Legend.Top = true
	p.Legend.TextStyle.Font.Size = vg.Points(8)
	// A margin of 5 % so that no interval ends on the frame.
	pad := 0.05 * (p.X.Max - p.X.Min)
	p.X.Min, p.X.Max = p.X.Min-pad, p.X.Max+pad
	return p, nil
}
