package main

import (
	"fmt"
	"image/color"
	"io"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/palette"
	"gonum.org/v1/plot/palette/moreland"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"

	"spinpop/model"
)

// gyroCurve is one gyrochrone to overlay: period against color at one age.
type gyroCurve struct {
	AgeGyr  float64
	BV      []float64
	PeriodD []float64
}

// Line colors for overlays, chosen to stay readable on the dark-to-light
// density map and for common color-vision deficiencies.
var overlayColors = []color.Color{
	color.RGBA{R: 0x1b, G: 0x9e, B: 0x77, A: 0xff},
	color.RGBA{R: 0xd9, G: 0x5f, B: 0x02, A: 0xff},
	color.RGBA{R: 0x75, G: 0x70, B: 0xb3, A: 0xff},
	color.RGBA{R: 0xe7, G: 0x29, B: 0x8a, A: 0xff},
	color.RGBA{R: 0x66, G: 0xa6, B: 0x1e, A: 0xff},
	color.RGBA{R: 0x44, G: 0x44, B: 0x44, A: 0xff},
}

// densityGrid shows a 2-D count histogram on log10(1+n), so the sparse old
// slow rotators and the dense young sequence are both visible.
type densityGrid struct {
	xEdges, yEdges []float64
	z              [][]int64 // [x][y]
}

func (g densityGrid) Dims() (c, r int)   { return len(g.xEdges) - 1, len(g.yEdges) - 1 }
func (g densityGrid) Z(c, r int) float64 { return math.Log10(1 + float64(g.z[c][r])) }
func (g densityGrid) X(c int) float64    { return (g.xEdges[c] + g.xEdges[c+1]) / 2 }
func (g densityGrid) Y(r int) float64    { return (g.yEdges[r] + g.yEdges[r+1]) / 2 }

func densityPalette() palette.Palette {
	cm := moreland.BlackBody()
	cm.SetMin(0)
	cm.SetMax(1)
	return palette.Reverse(cm).Palette(64)
}

// periodColorPlot is the period–color density of catalog stars with
// gyrochrones on top.
func periodColorPlot(title string, t *model.Tally, curves []gyroCurve) (*plot.Plot, error) {
	p := plot.New()
	p.Title.Text = title
	p.X.Label.Text = "B−V (mag, as observed)"
	p.Y.Label.Text = "log10 period (d)"
	g := densityGrid{t.ColorEdges, t.LogPerEdges, t.PeriodColor}
	hm := plotter.NewHeatMap(g, densityPalette())
	hm.Min = 0
	if mx := maxCount(t.PeriodColor); mx > 0 {
		hm.Max = math.Log10(1 + float64(mx))
	} else {
		hm.Max = 1
	}
	hm.Rasterized = true
	p.Add(hm)
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
			return nil, err
		}
		l.Color = overlayColors[i%len(overlayColors)]
		l.Width = vg.Points(1.6)
		p.Add(l)
		p.Legend.Add(fmt.Sprintf("%g Gyr", c.AgeGyr), l)
	}
	p.Legend.Top = true
	p.Legend.Left = true
	p.X.Min, p.X.Max = t.ColorEdges[0], t.ColorEdges[len(t.ColorEdges)-1]
	p.Y.Min, p.Y.Max = t.LogPerEdges[0], t.LogPerEdges[len(t.LogPerEdges)-1]
	return p, nil
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
// catalog stars in groups of color bins.
func periodHistograms(t *model.Tally, panels int) [][]*plot.Plot {
	nc := len(t.ColorEdges) - 1
	panels = min(panels, nc)
	per := (nc + panels - 1) / panels
	var row []*plot.Plot
	for start := 0; start < nc; start += per {
		end := min(start+per, nc)
		p := plot.New()
		p.Title.Text = fmt.Sprintf("B−V %.2f–%.2f", t.ColorEdges[start], t.ColorEdges[end])
		p.X.Label.Text = "log10 period (d)"
		p.Y.Label.Text = "stars"
		var xy plotter.XYs
		for j := 0; j < len(t.LogPerEdges)-1; j++ {
			var n int64
			for c := start; c < end; c++ {
				n += t.PeriodColor[c][j]
			}
			xy = append(xy, plotter.XY{X: t.LogPerEdges[j], Y: float64(n)}, plotter.XY{X: t.LogPerEdges[j+1], Y: float64(n)})
		}
		if l, err := plotter.NewLine(xy); err == nil {
			l.Color = overlayColors[2]
			l.Width = vg.Points(1.2)
			p.Add(l)
		}
		row = append(row, p)
	}
	grid := inRows(row, 3)
	return grid
}

// inRows lays panels out cols to a row for writeGrid, padding the last row
// with blanks.
func inRows(panels []*plot.Plot, cols int) [][]*plot.Plot {
	var grid [][]*plot.Plot
	for i := 0; i < len(panels); i += cols {
		r := make([]*plot.Plot, cols)
		copy(r, panels[i:min(i+cols, len(panels))])
		grid = append(grid, r)
	}
	return grid
}

// stepHistogram draws counts on edges as a step line.
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
	l.Width = vg.Points(1.4)
	return l, nil
}

// heightPlot is the |z| distribution of catalog stars.
func heightPlot(t *model.Tally) (*plot.Plot, error) {
	p := plot.New()
	p.Title.Text = "Height above the plane, catalog stars"
	p.X.Label.Text = "|z| (pc)"
	p.Y.Label.Text = "stars per pc"
	y := make([]float64, len(t.AbsZ))
	for i, n := range t.AbsZ {
		y[i] = float64(n) / (t.AbsZEdgesPc[i+1] - t.AbsZEdgesPc[i])
	}
	l, err := stepLine(t.AbsZEdgesPc, y, overlayColors[0])
	if err != nil {
		return nil, err
	}
	p.Add(l)
	return p, nil
}

// ageBiasPlot compares the age distribution of all dwarfs the model made in
// the field with that of the catalog: the selection's age bias, visible.
// Both are normalised to unit area so their shapes compare directly.
func ageBiasPlot(t *model.Tally) (*plot.Plot, error) {
	p := plot.New()
	p.Title.Text = "Age distribution: generated dwarfs vs catalog"
	p.X.Label.Text = "age (Gyr)"
	p.Y.Label.Text = "fraction per Gyr"
	for i, s := range []struct {
		name string
		n    []int64
	}{{"generated", t.AgeGenerated}, {"catalog", t.AgeSelected}} {
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
		l, err := stepLine(t.AgeEdgesGyr, y, overlayColors[i])
		if err != nil {
			return nil, err
		}
		p.Add(l)
		p.Legend.Add(s.name, l)
	}
	p.Legend.Top = true
	return p, nil
}

// fractionPlot draws num/den per bin as a step line (0 where den is 0).
func fractionPlot(title, xLabel string, edges []float64, num, den []int64, c color.Color) (*plot.Plot, error) {
	p := plot.New()
	p.Title.Text = title
	p.X.Label.Text = xLabel
	p.Y.Label.Text = "detected fraction"
	y := make([]float64, len(den))
	for k := range y {
		if den[k] > 0 {
			y[k] = float64(num[k]) / float64(den[k])
		}
	}
	l, err := stepLine(edges, y, c)
	if err != nil {
		return nil, err
	}
	p.Add(l)
	p.Y.Min, p.Y.Max = 0, 1.02
	return p, nil
}

// detectedFractionPlot is the fraction of eligible dwarfs (in the
// magnitude limits, color cut and main-sequence band) whose period the
// survey detected, against age.
func detectedFractionPlot(t *model.Tally) (*plot.Plot, error) {
	return fractionPlot("Period detected, by age", "age (Gyr)", t.AgeEdgesGyr, t.AgeDetected, t.AgeEligible, overlayColors[1])
}

// writePlot renders one plot to PNG.
func writePlot(path string, p *plot.Plot, w, h vg.Length) error {
	wt, err := p.WriterTo(w, h, "png")
	if err != nil {
		return err
	}
	return writeFileAtomic(path, func(out io.Writer) error {
		_, err := wt.WriteTo(out)
		return err
	})
}

// writeGrid renders a grid of plots (nil entries left blank) to one PNG.
func writeGrid(path string, grid [][]*plot.Plot, w, h vg.Length) error {
	img := vgimg.New(w, h)
	dc := draw.New(img)
	tiles := draw.Tiles{Rows: len(grid), Cols: len(grid[0]), PadX: vg.Millimeter * 4, PadY: vg.Millimeter * 4,
		PadTop: vg.Millimeter * 2, PadBottom: vg.Millimeter * 2, PadLeft: vg.Millimeter * 2, PadRight: vg.Millimeter * 2}
	canvases := plot.Align(grid, tiles, dc)
	for i := range grid {
		for j := range grid[i] {
			if grid[i][j] != nil {
				grid[i][j].Draw(canvases[i][j])
			}
		}
	}
	return writeFileAtomic(path, func(out io.Writer) error {
		_, err := vgimg.PngCanvas{Canvas: img}.WriteTo(out)
		return err
	})
}

// detectedByColorPlot is the same against observed color.
func detectedByColorPlot(t *model.Tally) (*plot.Plot, error) {
	return fractionPlot("Period detected, by color", "B−V (mag, as observed)", t.ColorEdges, t.ColorDetected, t.ColorEligible, overlayColors[2])
}
