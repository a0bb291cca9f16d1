package figure

import (
	"fmt"
	"image/color"
	"math"
	"strconv"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/palette"
	"gonum.org/v1/plot/palette/brewer"
	"gonum.org/v1/plot/palette/moreland"
)

// Scale maps values to colors for a heat map and its color bar.
type Scale struct {
	Colors   []color.Color // evenly spaced from Min to Max
	Min, Max float64
	Label    string      // the color bar's label (quantity and unit)
	Ticks    plot.Ticker // the color bar's ticks; nil: the plot package's default
	// Clipped says that values beyond Min and Max take the end colors;
	// the color bar then says so beside its ends ("≥", "≤").
	Clipped bool
}

// At is the color of v: Empty for NaN, the end colors beyond the range.
func (s *Scale) At(v float64) color.Color {
	if math.IsNaN(v) {
		return Empty
	}
	n := len(s.Colors)
	f := (v - s.Min) / (s.Max - s.Min)
	if !(s.Max > s.Min) {
		f = 0
	}
	i := int(math.Floor(f * float64(n)))
	return s.Colors[min(max(i, 0), n-1)]
}

const scaleSteps = 128

// Density is the scale of star counts, on log10(n) from one star to max
// stars: white through yellow and red to black (Moreland's black-body
// map, reversed, its palest end left out so that one star is not white).
// A cell without stars has no log and is drawn Empty.
func Density(maxCount float64, label string) *Scale {
	cm := moreland.BlackBody()
	cm.SetMin(0)
	cm.SetMax(1)
	cols := make([]color.Color, scaleSteps)
	for i := range cols {
		// From 0.93 (pale yellow) down to 0 (black) of the black-body map.
		c, _ := cm.At(0.93 * (1 - float64(i)/(scaleSteps-1)))
		cols[i] = c
	}
	hi := math.Log10(math.Max(maxCount, 2))
	return &Scale{Colors: cols, Min: 0, Max: hi, Label: label, Ticks: CountTicks{}}
}

// LogCount is the value Density maps: log10(n), NaN for no stars.
func LogCount(n float64) float64 {
	if !(n > 0) {
		return math.NaN()
	}
	return math.Log10(n)
}

// Diverging is the scale of signed values such as residuals, blue (below)
// through grey-white to red (above), symmetric about zero and clipped at
// ±limit (Moreland's smooth blue–red map).
func Diverging(limit float64, label string) *Scale {
	cm := moreland.SmoothBlueRed()
	cm.SetMin(-limit)
	cm.SetMax(limit)
	return &Scale{Colors: sample(cm, -limit, limit), Min: -limit, Max: limit, Label: label, Clipped: true}
}

// Rate is the scale of rates and fractions in [0, 1]: pale yellow (never)
// through green to dark blue (always), ColorBrewer's sequential YlGnBu
// interpolated so that neighbouring rates differ in shade.
func Rate(label string) *Scale {
	base := brewer.SequentialPalettes["YlGnBu"][9].Colors()
	cols := make([]color.Color, scaleSteps)
	for i := range cols {
		x := float64(i) / (scaleSteps - 1) * float64(len(base)-1)
		k := min(int(x), len(base)-2)
		f := x - float64(k)
		a, b := color.RGBAModel.Convert(base[k]).(color.RGBA), color.RGBAModel.Convert(base[k+1]).(color.RGBA)
		mix := func(p, q uint8) uint8 { return uint8(math.Round((1-f)*float64(p) + f*float64(q))) }
		cols[i] = color.RGBA{R: mix(a.R, b.R), G: mix(a.G, b.G), B: mix(a.B, b.B), A: 0xff}
	}
	return &Scale{Colors: cols, Min: 0, Max: 1, Label: label}
}

// Sequential is a scale for densities that are not counts (posterior
// densities): the Density colors on a linear axis from 0 to max.
func Sequential(maxValue float64, label string) *Scale {
	s := Density(10, label)
	s.Min, s.Max, s.Ticks = 0, math.Max(maxValue, 1e-300), nil
	return s
}

func sample(cm palette.ColorMap, lo, hi float64) []color.Color {
	cols := make([]color.Color, scaleSteps)
	for i := range cols {
		c, err := cm.At(lo + (hi-lo)*(float64(i)+0.5)/scaleSteps)
		if err != nil {
			c = Empty
		}
		cols[i] = c
	}
	return cols
}

// CountTicks label a log10(count) axis in counts: 1, 10, 100, … with the
// 2s and 5s between them (all of 1–9 when the range is under a decade).
type CountTicks struct{}

func (CountTicks) Ticks(lo, hi float64) []plot.Tick {
	var ticks []plot.Tick
	short := hi-lo < 1.2
	for e := math.Floor(lo); e <= math.Ceil(hi); e++ {
		for m := 1; m <= 9; m++ {
			v := e + math.Log10(float64(m))
			if v < lo-1e-9 || v > hi+1e-9 {
				continue
			}
			t := plot.Tick{Value: v}
			if m == 1 || (short && (m == 2 || m == 5)) {
				t.Label = fmt.Sprintf("%g", math.Pow(10, e)*float64(m))
			}
			ticks = append(ticks, t)
		}
	}
	return ticks
}

// LogTicks label a logarithmic axis in its own units: 1, 2 and 5 times
// each power of ten when the axis spans under two decades (a count axis
// from 0.5 to 6 would otherwise carry the one label "1"), the powers of
// ten alone when it spans more, with unlabelled minor ticks between.
type LogTicks struct{}

func (LogTicks) Ticks(lo, hi float64) []plot.Tick {
	if !(lo > 0) || !(hi > lo) {
		return nil
	}
	few := math.Log10(hi/lo) < 2
	var ticks []plot.Tick
	for e := math.Floor(math.Log10(lo)); e <= math.Ceil(math.Log10(hi)); e++ {
		for m := 1; m <= 9; m++ {
			v := float64(m) * math.Pow(10, e)
			if v < lo*(1-1e-9) || v > hi*(1+1e-9) {
				continue
			}
			t := plot.Tick{Value: v}
			if m == 1 || (few && (m == 2 || m == 5)) {
				t.Label = strconv.FormatFloat(v, 'g', -1, 64)
			}
			ticks = append(ticks, t)
		}
	}
	return ticks
}
