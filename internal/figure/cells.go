package figure

import (
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// Cells is a heat map drawn one filled rectangle per cell, on the cells'
// own edges (which need not be evenly spaced). The plot package's heat
// map, rasterised, is an image the renderer scales with interpolation, so
// a single bin's outlier bleeds into a blob over its neighbours; here a
// cell is a cell.
type Cells struct {
	XEdges, YEdges []float64
	// Value is the value of cell (i, j), i along x; NaN draws it Empty.
	Value func(i, j int) float64
	Scale *Scale
	// SkipEmpty leaves cells without a value unpainted (the plot's
	// background) rather than Empty.
	SkipEmpty bool
}

// seam is how far each cell reaches over its upper and right neighbours'
// edge: anti-aliased edges of abutting rectangles would otherwise leave a
// faint line of background between them. Under a point (about a pixel
// and a half at the figures' resolution) is far below a cell's size.
const seam = vg.Length(0.8)

// Plot implements plot.Plotter.
func (h *Cells) Plot(c draw.Canvas, p *plot.Plot) {
	tx, ty := p.Transforms(&c)
	for i := 0; i+1 < len(h.XEdges); i++ {
		x0, x1 := tx(h.XEdges[i]), tx(h.XEdges[i+1])
		for j := 0; j+1 < len(h.YEdges); j++ {
			v := h.Value(i, j)
			if h.SkipEmpty && v != v {
				continue
			}
			y0, y1 := ty(h.YEdges[j]), ty(h.YEdges[j+1])
			r := vg.Rectangle{Min: vg.Point{X: x0, Y: y0}, Max: vg.Point{X: x1 + seam, Y: y1 + seam}}
			pts := c.ClipPolygonXY([]vg.Point{r.Min, {X: r.Max.X, Y: r.Min.Y}, r.Max, {X: r.Min.X, Y: r.Max.Y}})
			c.FillPolygon(h.Scale.At(v), pts)
		}
	}
}

// DataRange implements plot.DataRanger: the outer edges.
func (h *Cells) DataRange() (xmin, xmax, ymin, ymax float64) {
	return h.XEdges[0], h.XEdges[len(h.XEdges)-1], h.YEdges[0], h.YEdges[len(h.YEdges)-1]
}
