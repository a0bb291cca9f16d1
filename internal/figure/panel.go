package figure

import (
	"io"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/text"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
)

// Panel is one plot of a figure with what belongs beside it: the color
// bar of its map and its legend, both drawn to the right of the axes so
// that neither covers data.
type Panel struct {
	Plot *plot.Plot
	Bar  *Scale // the color bar of the plot's map, or nil
	// LegendInside keeps the plot's legend inside the axes (for panels
	// whose layout leaves a known empty corner); by default it is moved
	// beside them.
	LegendInside bool
}

// Of wraps plots as panels with legends beside them.
func Of(plots ...*plot.Plot) []*Panel {
	out := make([]*Panel, len(plots))
	for i, p := range plots {
		if p != nil {
			out[i] = &Panel{Plot: p}
		}
	}
	return out
}

const (
	barWidth = vg.Length(10) // points
	gap      = vg.Length(6)
)

// Draw draws the panel on c. A panel with a Bar and no Plot is a color
// bar alone (the one scale of a grid of maps, such as a corner plot's).
func (pn *Panel) Draw(c draw.Canvas) {
	p := pn.Plot
	if p == nil {
		if pn.Bar != nil {
			h := c.Max.Y - c.Min.Y
			drawBar(c, pn.Bar, c.Min.X+(c.Max.X-c.Min.X)/3, c.Min.Y+0.15*h, c.Max.Y-0.15*h)
		}
		return
	}
	var leg *plot.Legend
	if !pn.LegendInside && hasEntries(p) {
		l := p.Legend
		leg = &l
		p.Legend = plot.NewLegend()
		defer func() { p.Legend = l }()
	}
	side := vg.Length(0)
	var barSide vg.Length
	if pn.Bar != nil {
		barSide = gap + barWidth + gap + pn.barLabelsWidth()
		side += barSide
	}
	var legW vg.Length
	if leg != nil {
		leg.Top, leg.Left = true, true
		leg.XOffs, leg.YOffs = 0, 0
		r := leg.Rectangle(c)
		legW = r.Max.X - r.Min.X + gap
		side += legW + gap
	}
	side = min(side, 0.6*(c.Max.X-c.Min.X))
	main := c
	main.Max.X -= side
	openSpan(&p.X)
	openSpan(&p.Y)
	p.Draw(main)
	da := p.DataCanvas(main)
	x := main.Max.X
	if pn.Bar != nil {
		drawBar(c, pn.Bar, x+gap, da.Min.Y, da.Max.Y)
		x += barSide
	}
	if leg != nil {
		lc := c
		lc.Min.X, lc.Max.X = x+gap, c.Max.X
		lc.Max.Y = da.Max.Y
		leg.Draw(lc)
	}
}

func hasEntries(p *plot.Plot) bool {
	// The legend's entries are not exported; a legend with entries has a
	// height.
	l := p.Legend
	r := l.Rectangle(draw.New(vgimg.New(100, 100)))
	return r.Max.Y-r.Min.Y > 0
}

func tickFont() text.Style {
	return text.Style{Font: font.From(plot.DefaultFont, TickSize), Handler: plot.DefaultTextHandler, Color: Data}
}

func labelFont() text.Style {
	return text.Style{Font: font.From(plot.DefaultFont, LabelSize), Handler: plot.DefaultTextHandler, Color: Data}
}

// barLabelsWidth is the room the bar's tick labels and its label take.
func (pn *Panel) barLabelsWidth() vg.Length {
	s := pn.Bar
	ts := tickFont()
	w := vg.Length(0)
	for _, t := range barTicks(s) {
		if t.Label != "" {
			w = max(w, ts.Width(t.Label))
		}
	}
	if s.Clipped {
		w += ts.Width("≥ ")
	}
	lh := labelFont().Height(s.Label)
	return vg.Points(4) + w + gap + lh
}

func barTicks(s *Scale) []plot.Tick {
	tk := s.Ticks
	if tk == nil {
		tk = plot.DefaultTicks{}
	}
	var out []plot.Tick
	for _, t := range tk.Ticks(s.Min, s.Max) {
		if t.Value >= s.Min-1e-9*(s.Max-s.Min) && t.Value <= s.Max+1e-9*(s.Max-s.Min) {
			out = append(out, t)
		}
	}
	return out
}

// drawBar draws a vertical color bar at x from y0 to y1, its ticks and
// their labels to its right, and its label (rotated) beyond them.
func drawBar(c draw.Canvas, s *Scale, x, y0, y1 vg.Length) {
	n := len(s.Colors)
	h := (y1 - y0) / vg.Length(n)
	for i, col := range s.Colors {
		ya := y0 + vg.Length(i)*h
		c.FillPolygon(col, []vg.Point{{X: x, Y: ya}, {X: x + barWidth, Y: ya}, {X: x + barWidth, Y: ya + h + seam}, {X: x, Y: ya + h + seam}})
	}
	frame := draw.LineStyle{Color: Data, Width: vg.Points(0.5)}
	c.StrokeLines(frame, []vg.Point{{X: x, Y: y0}, {X: x + barWidth, Y: y0}, {X: x + barWidth, Y: y1}, {X: x, Y: y1}, {X: x, Y: y0}})
	ts := tickFont()
	ts.YAlign = draw.YCenter
	pos := func(v float64) vg.Length { return y0 + vg.Length((v-s.Min)/(s.Max-s.Min))*(y1-y0) }
	labelW := vg.Length(0)
	for _, t := range barTicks(s) {
		y := pos(t.Value)
		l := vg.Points(2)
		if t.Label != "" {
			l = vg.Points(4)
		}
		c.StrokeLine2(frame, x+barWidth, y, x+barWidth+l, y)
		if t.Label == "" {
			continue
		}
		lab := t.Label
		if s.Clipped && math.Abs(t.Value-s.Max) < 1e-9*(s.Max-s.Min) {
			lab = "≥ " + lab
		}
		if s.Clipped && math.Abs(t.Value-s.Min) < 1e-9*(s.Max-s.Min) {
			lab = "≤ " + lab
		}
		c.FillText(ts, vg.Point{X: x + barWidth + vg.Points(5), Y: y}, lab)
		labelW = max(labelW, ts.Width(lab))
	}
	ls := labelFont()
	ls.Rotation = math.Pi / 2
	ls.XAlign = draw.XCenter
	ls.YAlign = draw.YTop
	c.FillText(ls, vg.Point{X: x + barWidth + vg.Points(5) + labelW + gap, Y: (y0 + y1) / 2}, s.Label)
}

// Layout places panels in rows (nil entries stay blank).
type Layout [][]*Panel

// Rows lays panels out cols to a row.
func Rows(panels []*Panel, cols int) Layout {
	var g Layout
	for i := 0; i < len(panels); i += cols {
		r := make([]*Panel, cols)
		copy(r, panels[i:min(i+cols, len(panels))])
		g = append(g, r)
	}
	return g
}

// WritePNG renders the layout at width × height and writes it as PNG.
func (g Layout) WritePNG(w io.Writer, width, height vg.Length) error {
	img := vgimg.NewWith(vgimg.UseWH(width, height), vgimg.UseDPI(110))
	dc := draw.New(img)
	dc.SetColor(bgWhite)
	dc.Fill(dc.Rectangle.Path())
	tiles := draw.Tiles{Rows: len(g), Cols: len(g[0]), PadX: vg.Millimeter * 5, PadY: vg.Millimeter * 5,
		PadTop: vg.Millimeter * 2, PadBottom: vg.Millimeter * 2, PadLeft: vg.Millimeter * 2, PadRight: vg.Millimeter * 3}
	for i := range g {
		for j := range g[i] {
			if g[i][j] != nil {
				g[i][j].Draw(tiles.At(dc, j, i))
			}
		}
	}
	_, err := vgimg.PngCanvas{Canvas: img}.WriteTo(w)
	return err
}

// One is a figure of one panel.
func One(p *Panel) Layout { return Layout{{p}} }

// openSpan widens a linear axis whose range is too narrow to label: every
// point at the same value (or equal to ten digits) would get ticks that
// all read the same number. The axis is opened to ±0.1 % of its value
// (±1 about zero), so the points sit in the middle with distinct labels.
func openSpan(a *plot.Axis) {
	if _, lin := a.Scale.(plot.LinearScale); !lin {
		return
	}
	mid := (a.Min + a.Max) / 2
	mag := math.Max(math.Abs(a.Min), math.Abs(a.Max))
	if a.Max-a.Min > 1e-9*mag && a.Max > a.Min {
		return
	}
	half := 1e-3 * mag
	if half == 0 {
		half = 1
	}
	a.Min, a.Max = mid-half, mid+half
}
