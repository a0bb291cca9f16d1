package pipeline

import (
	"fmt"
	"image/color"
	"math"
	"os"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
)

// writeCheckFigure draws the long independent-model check for the issue
// note and the README: left, each burst catalog's recovered age with its
// 95 % interval against the true age (the ±0.1 Gyr target as a band);
// right, each catalog's likelihood ratio against the misfit its burst fit
// leaves (excess deviance), smooth and burst catalogs apart, with the line
// LR = excess beyond which the verdict may claim a burst.
func writeCheckFigure(path string, rs []checkResult) error {
	left := plot.New()
	left.Title.Text = "Burst catalogs: recovered age"
	left.X.Label.Text = "true burst age (Gyr)"
	left.Y.Label.Text = "recovered age, 95 % interval (Gyr)"
	if err := addTarget(left, plotter.XYs{{X: 0.3, Y: 0.2}, {X: 3, Y: 2.9}, {X: 3, Y: 3.1}, {X: 0.3, Y: 0.4}},
		plotter.XYs{{X: 0.3, Y: 0.3}, {X: 3, Y: 3}}); err != nil {
		return err
	}
	// Weak apart from not claimed: with few replicates weak is the
	// strongest verdict the bootstrap can give.
	var found, weak, missed plotter.XYs
	var bars plotter.YErrors
	var barPts plotter.XYs
	for _, r := range rs {
		if r.ageGyr == 0 || math.IsNaN(r.age) {
			continue
		}
		p := plotter.XY{X: r.ageGyr, Y: r.age}
		switch {
		case r.claims():
			found = append(found, p)
		case r.strength == "weak":
			weak = append(weak, p)
		default:
			missed = append(missed, p)
		}
		if !math.IsNaN(r.lo95) && !math.IsNaN(r.hi95) {
			barPts = append(barPts, p)
			bars = append(bars, struct{ Low, High float64 }{r.age - r.lo95, r.hi95 - r.age})
		}
	}
	if len(barPts) > 0 {
		if err := addErrorBars(left, barPts, bars, nil); err != nil {
			return err
		}
	}
	blue, orange := color.RGBA{R: 0, G: 90, B: 181, A: 255}, color.RGBA{R: 220, G: 120, B: 0, A: 255}
	if err := addScatter(left, found, blue, draw.CircleGlyph{}, "burst claimed"); err != nil {
		return err
	}
	if err := addScatter(left, weak, blue, draw.RingGlyph{}, "weak evidence"); err != nil {
		return err
	}
	if err := addScatter(left, missed, orange, draw.TriangleGlyph{}, "not claimed"); err != nil {
		return err
	}
	left.Legend.Top, left.Legend.Left = true, true
	// Axes fitted to the catalogs: every recovered age and interval in
	// the frame, however far off.
	left.X.Min, left.X.Max, left.Y.Min, left.Y.Max = 0.3, 1.7, 0.2, 1.8
	for _, r := range rs {
		if r.ageGyr > 0 {
			left.Y.Max = math.Max(left.Y.Max, math.Max(r.age, r.hi95)+0.1)
			left.X.Max = math.Max(left.X.Max, r.ageGyr+0.2)
		}
	}

	right := plot.New()
	right.Title.Text = "Evidence against remaining misfit"
	right.X.Label.Text = "excess deviance of the burst fit (2 ln L units)"
	right.Y.Label.Text = "likelihood ratio 2Δln L"
	var smooth, burst plotter.XYs
	hi := 1.0
	for _, r := range rs {
		ex := math.Max(r.deviance-r.exp, 1)
		lr := math.Max(r.lr, 1)
		hi = math.Max(hi, math.Max(ex, lr))
		if r.ageGyr == 0 {
			smooth = append(smooth, plotter.XY{X: ex, Y: lr})
		} else {
			burst = append(burst, plotter.XY{X: ex, Y: lr})
		}
	}
	right.X.Scale, right.Y.Scale = plot.LogScale{}, plot.LogScale{}
	right.X.Tick.Marker, right.Y.Tick.Marker = plot.LogTicks{Prec: -1}, plot.LogTicks{Prec: -1}
	line, err := plotter.NewLine(plotter.XYs{{X: 1, Y: 1}, {X: hi * 2, Y: hi * 2}})
	if err != nil {
		return err
	}
	line.Color = color.Gray{Y: 120}
	line.Dashes = []vg.Length{vg.Points(4), vg.Points(3)}
	right.Add(line)
	right.Legend.Add("LR = excess", line)
	if err := addScatter(right, smooth, orange, draw.TriangleGlyph{}, "smooth catalogs"); err != nil {
		return err
	}
	if err := addScatter(right, burst, blue, draw.CircleGlyph{}, "burst catalogs"); err != nil {
		return err
	}
	right.Legend.Top, right.Legend.Left = true, true
	right.Legend.YOffs, right.Legend.XOffs = -vg.Points(6), vg.Points(6)
	right.X.Min, right.Y.Min, right.X.Max, right.Y.Max = 1, 1, hi*2, hi*2

	img := vgimg.New(28*vg.Centimeter, 12*vg.Centimeter)
	dc := draw.New(img)
	tiles := draw.Tiles{Rows: 1, Cols: 2, PadX: vg.Centimeter, PadTop: vg.Points(4), PadBottom: vg.Points(4), PadLeft: vg.Points(4), PadRight: vg.Points(8)}
	canvases := plot.Align([][]*plot.Plot{{left, right}}, tiles, dc)
	left.Draw(canvases[0][0])
	right.Draw(canvases[0][1])
	return writePNG(path, img)
}

// addScatter adds points with a legend entry (nothing when there are none).
func addScatter(p *plot.Plot, pts plotter.XYs, c color.Color, shape draw.GlyphDrawer, name string) error {
	if len(pts) == 0 {
		return nil
	}
	sc, err := plotter.NewScatter(pts)
	if err != nil {
		return err
	}
	sc.GlyphStyle = draw.GlyphStyle{Color: c, Radius: vg.Points(3.5), Shape: shape}
	p.Add(sc)
	p.Legend.Add(name, sc)
	return nil
}

func writePNG(path string, img *vgimg.Canvas) error {
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	if _, err := (vgimg.PngCanvas{Canvas: img}).WriteTo(f); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}

// addTarget draws the ±0.1 Gyr target as a pale band and the truth as a
// grey line.
func addTarget(p *plot.Plot, band, truth plotter.XYs) error {
	poly, err := plotter.NewPolygon(band)
	if err != nil {
		return err
	}
	poly.Color = color.RGBA{R: 210, G: 225, B: 240, A: 255}
	poly.LineStyle.Width = 0
	p.Add(poly)
	line, err := plotter.NewLine(truth)
	if err != nil {
		return err
	}
	line.Color = color.Gray{Y: 120}
	p.Add(line)
	return nil
}

// addErrorBars draws vertical error bars at pts (bars[i] below and above
// pts[i]), in c (nil: the plotter's default, black).
func addErrorBars(p *plot.Plot, pts plotter.XYs, bars plotter.YErrors, c color.Color) error {
	eb, err := plotter.NewYErrorBars(struct {
		plotter.XYer
		plotter.YErrorer
	}{pts, bars})
	if err != nil {
		return err
	}
	if c != nil {
		eb.Color = c
	}
	p.Add(eb)
	return nil
}

// controlSet is one set of check results in the control's figure.
type controlSet struct {
	rs     []checkResult
	legend string
}

// writeControlFigure draws the own-model control beside the check for the
// README: each burst catalog's age error (recovered − true, with its 95 %
// interval) against the true age, for the other model's catalogs and for
// spinpop's own at the same ages and shares, side by side at each age, the
// ±0.1 Gyr target as a band. Where they differ, the physics the models do
// not share is at work; what the own catalogs show is the method's own
// error. The true ages are those of the logs' lines, rounded to 0.01 Gyr
// (checkLineFormat): a shift of at most 0.005 Gyr, not visible here.
func writeControlFigure(path string, sets []controlSet) error {
	p := plot.New()
	p.Title.Text = "Burst age error: another model's catalogs and our own"
	p.X.Label.Text = "true burst age (Gyr)"
	p.Y.Label.Text = "recovered − true age, 95 % interval (Gyr)"
	if err := addTarget(p, plotter.XYs{{X: 0.3, Y: -0.1}, {X: 1.8, Y: -0.1}, {X: 1.8, Y: 0.1}, {X: 0.3, Y: 0.1}},
		plotter.XYs{{X: 0.3, Y: 0}, {X: 1.8, Y: 0}}); err != nil {
		return err
	}
	p.Y.Min, p.Y.Max = -0.3, 0.3
	styles := []struct {
		c     color.Color
		shape draw.GlyphDrawer
	}{
		{color.RGBA{R: 0, G: 90, B: 181, A: 255}, draw.CircleGlyph{}},
		{color.RGBA{R: 220, G: 120, B: 0, A: 255}, draw.BoxGlyph{}},
		{color.RGBA{R: 90, G: 150, B: 60, A: 255}, draw.PyramidGlyph{}},
	}
	if len(sets) > len(styles) {
		return fmt.Errorf("writeControlFigure: %d sets, at most %d", len(sets), len(styles))
	}
	const step = 0.018 // the sets side by side at each true age
	for i, set := range sets {
		dx := step * (float64(i) - float64(len(sets)-1)/2)
		var pts plotter.XYs
		var bars plotter.YErrors
		for _, r := range set.rs {
			if r.ageGyr == 0 || math.IsNaN(r.age) || math.IsNaN(r.lo95) || math.IsNaN(r.hi95) {
				continue
			}
			pts = append(pts, plotter.XY{X: r.ageGyr + dx, Y: r.age - r.ageGyr})
			bars = append(bars, struct{ Low, High float64 }{r.age - r.lo95, r.hi95 - r.age})
			p.Y.Min = math.Min(p.Y.Min, r.lo95-r.ageGyr-0.05)
			p.Y.Max = math.Max(p.Y.Max, r.hi95-r.ageGyr+0.05)
		}
		if len(pts) == 0 {
			continue
		}
		if err := addErrorBars(p, pts, bars, styles[i].c); err != nil {
			return err
		}
		if err := addScatter(p, pts, styles[i].c, styles[i].shape, set.legend); err != nil {
			return err
		}
	}
	p.X.Min, p.X.Max = 0.4, 1.6
	// A tick every 0.2 Gyr, so that the ±0.1 band reads against them.
	var ticks []plot.Tick
	for v := math.Ceil(p.Y.Min*5) / 5; v <= p.Y.Max; v += 0.2 {
		label := fmt.Sprintf("%+.1f", v)
		if math.Abs(v) < 1e-9 {
			label = "0"
		}
		ticks = append(ticks, plot.Tick{Value: v, Label: label})
	}
	p.Y.Tick.Marker = plot.ConstantTicks(ticks)
	p.Legend.Top, p.Legend.Left = true, true
	img := vgimg.New(7*vg.Inch, 4.5*vg.Inch)
	p.Draw(draw.New(img))
	return writePNG(path, img)
}
