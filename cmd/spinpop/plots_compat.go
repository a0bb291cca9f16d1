package main

import (
	"image/color"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"

	"spinpop/internal/figure"
)

// Helpers for figures drawn as bare plots (the sweep command's): they are
// laid out by internal/figure, so their legends too sit beside the data,
// and their curves take the house colors.

// overlayColors are the house curve colors in order (figure.Curve).
var overlayColors = func() []color.Color {
	c := make([]color.Color, 8)
	for i := range c {
		c[i] = figure.Curve(i)
	}
	return c
}()

// inRows lays plots out cols to a row, padding the last row with blanks.
func inRows(panels []*plot.Plot, cols int) [][]*plot.Plot {
	var grid [][]*plot.Plot
	for i := 0; i < len(panels); i += cols {
		r := make([]*plot.Plot, cols)
		copy(r, panels[i:min(i+cols, len(panels))])
		grid = append(grid, r)
	}
	return grid
}

// writeGrid renders a grid of plots (nil entries left blank) to one PNG.
func writeGrid(path string, grid [][]*plot.Plot, w, h vg.Length) error {
	l := make(figure.Layout, len(grid))
	for i, row := range grid {
		l[i] = figure.Of(row...)
	}
	return writeFigureFile(path, l, w, h)
}
