// Package figure is spinpop's house style for figures: fonts and sizes,
// the colors of curves, the color maps of densities, residuals and
// rates, heat maps drawn cell by cell, color bars, legends beside the
// data, and the layout of panels in one PNG. Every figure the command
// writes is made of these pieces, so a change of style is made here once.
package figure

import (
	"image/color"
	"math"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/vg"
)

// Type sizes. Figures are read on a screen or a slide at about their
// pixel size, so text is larger than the plot package's defaults on the
// small panels of a grid and never smaller than 9 pt.
var (
	TitleSize  = vg.Points(11)
	LabelSize  = vg.Points(10)
	TickSize   = vg.Points(9)
	LegendSize = vg.Points(9)
	LineWidth  = vg.Points(1.6)
)

// New returns a plot in the house style with its title and axis labels.
func New(title, xLabel, yLabel string) *plot.Plot {
	p := plot.New()
	Apply(p)
	p.Title.Text = title
	p.X.Label.Text = xLabel
	p.Y.Label.Text = yLabel
	return p
}

// Apply sets the house fonts and sizes on a plot made elsewhere.
func Apply(p *plot.Plot) {
	p.Title.TextStyle.Font = font.From(plot.DefaultFont, TitleSize)
	p.Title.Padding = vg.Points(6)
	for _, a := range []*plot.Axis{&p.X, &p.Y} {
		a.Label.TextStyle.Font = font.From(plot.DefaultFont, LabelSize)
		a.Tick.Label.Font = font.From(plot.DefaultFont, TickSize)
		a.Padding = vg.Points(2)
		if _, plain := a.Tick.Marker.(plot.DefaultTicks); plain {
			a.Tick.Marker = cleanTicks{}
		}
	}
	p.Legend.TextStyle.Font = font.From(plot.DefaultFont, LegendSize)
	p.Legend.ThumbnailWidth = vg.Points(18)
}

// Curve returns the color of the i-th curve of a figure. The eight
// colors differ in hue and lightness from each other (no two greens, no
// two blues), stay apart for the common red–green color-vision
// deficiencies as far as eight colors can, and stand out on white.
func Curve(i int) color.Color { return curves[i%len(curves)] }

var curves = []color.Color{
	rgb(0x1f, 0x4e, 0xb4), // blue
	rgb(0xe0, 0x6c, 0x00), // orange
	rgb(0x12, 0x8a, 0x3c), // green
	rgb(0x8e, 0x3b, 0xb8), // purple
	rgb(0xc8, 0x1e, 0x5a), // crimson
	rgb(0x00, 0xa3, 0xc4), // sky
	rgb(0x7a, 0x55, 0x10), // brown
	rgb(0x33, 0x33, 0x33), // near black
}

// OnMap returns the color of the i-th curve drawn over a density map
// (Density runs from white through yellow and red to black): the curve
// colors without the ones that vanish into those shades.
func OnMap(i int) color.Color { return onMap[i%len(onMap)] }

var onMap = []color.Color{
	rgb(0x1f, 0x4e, 0xb4), // blue
	rgb(0x12, 0x8a, 0x3c), // green
	rgb(0x8e, 0x3b, 0xb8), // purple
	rgb(0x00, 0xa3, 0xc4), // sky
	rgb(0xf2, 0x6d, 0xd9), // pink
	rgb(0x20, 0x20, 0x20), // black
}

// Halo is drawn under curves on maps, a little wider than the curve, so
// that a curve stays visible where the map is as dark as it.
var Halo color.Color = color.White

// Data is the color of observed data points (black: data are not a model).
var Data color.Color = color.Black

// Guide is the color of reference lines (levels, zero lines, ranges).
var Guide color.Color = rgb(0x80, 0x80, 0x80)

// Empty is the color of a map cell without a value (no stars, no model):
// the background, so that "nothing here" is read neither as the lowest
// count (pale yellow) nor as a residual of zero (light grey).
var Empty color.Color = color.White

func rgb(r, g, b uint8) color.Color { return color.NRGBA{R: r, G: g, B: b, A: 0xff} }

// Dashed is the dash pattern of secondary lines.
var Dashed = []vg.Length{vg.Points(4), vg.Points(3)}

var bgWhite color.Color = color.White

// NoLegend empties a plot's legend, keeping the house style (a panel
// whose neighbour's legend names the same curves).
func NoLegend(p *plot.Plot) {
	p.Legend = plot.NewLegend()
	p.Legend.TextStyle.Font = font.From(plot.DefaultFont, LegendSize)
	p.Legend.ThumbnailWidth = vg.Points(18)
}

// cleanTicks are the plot package's default ticks with labels written
// from the tick values with as many digits as the spacing of the ticks
// needs, and no more: "5000", not "5000.00"; "1.6685" and "1.6690", not
// "1.67" twice; plain digits between 10⁻⁴ and 10⁶, the exponent form
// beyond (1.2e-17, not 0.000000000000000012).
type cleanTicks struct{}

func (cleanTicks) Ticks(lo, hi float64) []plot.Tick {
	t := plot.DefaultTicks{}.Ticks(lo, hi)
	step := math.Inf(1)
	prev := math.NaN()
	for _, tk := range t {
		if tk.Label == "" {
			continue
		}
		if !math.IsNaN(prev) {
			step = math.Min(step, tk.Value-prev)
		}
		prev = tk.Value
	}
	if math.IsInf(step, 1) || !(step > 0) {
		return t
	}
	for i := range t {
		if t[i].Label != "" {
			t[i].Label = tickLabel(t[i].Value, step)
		}
	}
	return t
}

// tickLabel writes v to the precision a tick spacing of step asks for.
func tickLabel(v, step float64) string {
	a := math.Abs(v)
	if a < step*1e-9 {
		return "0"
	}
	if a >= 1e-4 && a < 1e6 {
		// Enough decimals that the spacing itself is written exactly
		// (a spacing of 0.25 needs two).
		decimals := max(0, int(math.Ceil(-math.Log10(step)-1e-9)))
		for decimals < 15 {
			x := step * math.Pow(10, float64(decimals))
			if math.Abs(x-math.Round(x)) <= 1e-6*x {
				break
			}
			decimals++
		}
		s := strconv.FormatFloat(v, 'f', decimals, 64)
		if strings.Contains(s, ".") {
			s = strings.TrimRight(strings.TrimRight(s, "0"), ".")
		}
		return s
	}
	sig := min(max(int(math.Ceil(math.Log10(a/step)+1e-9))+1, 1), 15)
	return strconv.FormatFloat(v, 'g', sig, 64)
}
