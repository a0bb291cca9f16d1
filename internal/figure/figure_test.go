package figure

import (
	"bytes"
	"image"
	"image/color"
	"image/png"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
)

// A single hot cell among empty ones stays one cell: its own centre has
// the hottest color and its neighbours' centres — and points just inside
// them — keep the empty color. (The plot package's rasterised heat map
// interpolates when the image is scaled, and fails this.)
func TestCellsKeepsSingleCellOutlier(t *testing.T) {
	const n = 10
	edges := make([]float64, n+1)
	for i := range edges {
		edges[i] = float64(i)
	}
	scale := Density(1000, "stars")
	p := New("", "", "")
	p.HideAxes()
	p.Add(&Cells{XEdges: edges, YEdges: edges, Scale: scale, Value: func(i, j int) float64 {
		if i == 4 && j == 6 {
			return LogCount(1000)
		}
		return math.NaN()
	}})
	p.X.Min, p.X.Max, p.Y.Min, p.Y.Max = 0, n, 0, n
	var buf bytes.Buffer
	require.NoError(t, One(&Panel{Plot: p}).WritePNG(&buf, 10*vg.Centimeter, 10*vg.Centimeter))
	img, err := png.Decode(&buf)
	require.NoError(t, err)
	// Find the hot cell's pixels: the darkest color of the map.
	hot := scale.At(LogCount(1000))
	box := boundsOf(img, hot)
	require.False(t, box.Empty(), "the hot cell was not drawn")
	w, h := box.Dx(), box.Dy()
	assert.InDelta(t, w, h, 3, "a cell is a square here")
	// Just outside the cell on every side (a fifth of a cell away), the
	// background is untouched.
	cx, cy := (box.Min.X+box.Max.X)/2, (box.Min.Y+box.Max.Y)/2
	for _, pt := range []image.Point{{box.Min.X - w/5, cy}, {box.Max.X + w/5, cy}, {cx, box.Min.Y - h/5}, {cx, box.Max.Y + h/5}} {
		assert.Equal(t, rgba(Empty), rgba(img.At(pt.X, pt.Y)), "pixel %v beside the cell", pt)
	}
}

func boundsOf(img image.Image, c color.Color) image.Rectangle {
	want := rgba(c)
	r := image.Rectangle{Min: image.Point{1 << 30, 1 << 30}}
	b := img.Bounds()
	for y := b.Min.Y; y < b.Max.Y; y++ {
		for x := b.Min.X; x < b.Max.X; x++ {
			if rgba(img.At(x, y)) == want {
				r.Min.X, r.Min.Y = min(r.Min.X, x), min(r.Min.Y, y)
				r.Max.X, r.Max.Y = max(r.Max.X, x+1), max(r.Max.Y, y+1)
			}
		}
	}
	if r.Max.X == 0 {
		return image.Rectangle{}
	}
	return r
}

func rgba(c color.Color) [4]uint32 {
	r, g, b, a := c.RGBA()
	return [4]uint32{r >> 8, g >> 8, b >> 8, a >> 8}
}

// The curve colors differ from each other by a color difference far
// above the just-noticeable: CIE76 ΔE*ab over CIELAB (sRGB, D65).
// Source: CIE 15:2004 (CIELAB); a ΔE of about 2.3 is just noticeable
// (Sharma & Trussell 1997, from memory; the bound here is ten times that).
func TestCurveColorsAreDistinct(t *testing.T) {
	for _, list := range [][]color.Color{curves, onMap} {
		for i := range list {
			for j := range i {
				d := deltaE(list[i], list[j])
				assert.Greater(t, d, 25.0, "colors %d and %d differ by ΔE %.1f only", j, i, d)
			}
		}
	}
	// No two curves of a figure share a hue family: the old palette's
	// 0.3 Gyr and 4 Gyr curves were both green. Here ΔE between the two
	// greenest colors stays large.
	assert.Greater(t, deltaE(Curve(2), Curve(5)), 25.0)
}

// deltaE is the CIE76 color difference of two sRGB colors.
func deltaE(a, b color.Color) float64 {
	la, aa, ba := lab(a)
	lb, ab, bb := lab(b)
	return math.Sqrt((la-lb)*(la-lb) + (aa-ab)*(aa-ab) + (ba-bb)*(ba-bb))
}

// lab converts sRGB to CIELAB with the D65 white. Source: IEC 61966-2-1
// (sRGB transfer function and matrix) and CIE 15:2004 (L*a*b*).
func lab(c color.Color) (l, a, b float64) {
	r8, g8, b8, _ := c.RGBA()
	lin := func(v uint32) float64 {
		x := float64(v) / 65535
		if x <= 0.04045 {
			return x / 12.92
		}
		return math.Pow((x+0.055)/1.055, 2.4)
	}
	r, g, bl := lin(r8), lin(g8), lin(b8)
	x := 0.4124*r + 0.3576*g + 0.1805*bl
	y := 0.2126*r + 0.7152*g + 0.0722*bl
	z := 0.0193*r + 0.1192*g + 0.9505*bl
	f := func(t float64) float64 {
		if t > 216.0/24389 {
			return math.Cbrt(t)
		}
		return (24389.0/27*t + 16) / 116
	}
	fx, fy, fz := f(x/0.95047), f(y/1.0), f(z/1.08883)
	return 116*fy - 16, 500 * (fx - fy), 200 * (fy - fz)
}

// The scales: the ends of a diverging scale are its end colors and zero
// its middle; NaN is Empty; counts of 1, 10 and 100 get ticks 1, 10, 100.
func TestScales(t *testing.T) {
	d := Diverging(4, "r")
	assert.Equal(t, rgba(d.Colors[0]), rgba(d.At(-100)))
	assert.Equal(t, rgba(d.Colors[len(d.Colors)-1]), rgba(d.At(100)))
	assert.Equal(t, rgba(Empty), rgba(d.At(math.NaN())))
	mid := d.At(0)
	assert.Equal(t, rgba(d.Colors[len(d.Colors)/2]), rgba(mid))
	// A residual of zero is not drawn as an empty cell.
	assert.NotEqual(t, rgba(Empty), rgba(mid))
	den := Density(100, "n")
	assert.NotEqual(t, rgba(Empty), rgba(den.At(LogCount(1))), "one star is not drawn as no star")
	var labels []string
	for _, tk := range (CountTicks{}).Ticks(0, 2) {
		if tk.Label != "" {
			labels = append(labels, tk.Label)
		}
	}
	assert.Equal(t, []string{"1", "10", "100"}, labels)
}

// Axis labels are written with the digits their spacing needs: no
// trailing zeros, no two alike, exponents only far from 1.
func TestCleanTicks(t *testing.T) {
	for _, r := range [][2]float64{{0, 5000}, {1.6666, 1.6700}, {1.9e-18, 1.2e-17}, {0.5, 1}, {3130, 3136}} {
		seen := map[string]bool{}
		for _, tk := range (cleanTicks{}).Ticks(r[0], r[1]) {
			if tk.Label == "" {
				continue
			}
			assert.NotContains(t, tk.Label, ".00", "%v", r)
			assert.False(t, seen[tk.Label], "%v: label %s twice", r, tk.Label)
			seen[tk.Label] = true
			assert.Less(t, len(tk.Label), 9, "%v: %s", r, tk.Label)
		}
	}
	assert.Equal(t, "5000", tickLabel(5000, 1000))
	assert.Equal(t, "0.75", tickLabel(0.75, 0.25))
	assert.Equal(t, "1.2e-17", tickLabel(1.16e-17, 2e-18))
	_ = plot.Tick{}
}

// A log axis of a few counts is labelled at 1, 2 and 5; a wide one at the
// powers of ten only.
func TestLogTicks(t *testing.T) {
	labels := func(lo, hi float64) []string {
		var out []string
		for _, tk := range (LogTicks{}).Ticks(lo, hi) {
			if tk.Label != "" {
				out = append(out, tk.Label)
			}
		}
		return out
	}
	assert.Equal(t, []string{"0.5", "1", "2", "5"}, labels(0.5, 6))
	assert.Equal(t, []string{"1", "10", "100", "1000"}, labels(0.5, 2000))
}

// An axis whose points all have one value is opened so that its ticks
// read different numbers.
func TestOpenSpan(t *testing.T) {
	p := New("", "", "")
	p.Y.Min, p.Y.Max = 3133.08, 3133.08+1e-9
	openSpan(&p.Y)
	assert.Less(t, p.Y.Min, 3133.0)
	assert.Greater(t, p.Y.Max, 3136.0)
	seen := map[string]bool{}
	for _, tk := range p.Y.Tick.Marker.Ticks(p.Y.Min, p.Y.Max) {
		if tk.Label != "" {
			assert.False(t, seen[tk.Label], "label %s twice", tk.Label)
			seen[tk.Label] = true
		}
	}
	q := New("", "", "")
	q.X.Min, q.X.Max = 0.5, 1
	openSpan(&q.X)
	assert.Equal(t, 0.5, q.X.Min, "a real range is left alone")
}
