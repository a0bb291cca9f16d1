package compare

import (
	"fmt"
	"math"
	"sort"

	"spinpop/internal/grid"
	"spinpop/model"
)

// Space is the comparison space: B−V color × log10 rotation period (days) ×
// |z| (pc), each cut by edges. Bins are half-open [e_i, e_{i+1}) except the
// last of each axis, which is closed, so a star on the outer edge counts.
// Bins are flattened color-major: ((color·nP)+p)·nZ+z, so the |z| bins of
// one (color, period) cell are adjacent and the 2-D marginal is a sum of
// runs.
type Space struct {
	ColorEdges     []float64 // B−V (mag)
	LogPeriodEdges []float64 // log10 of the period in days
	HeightEdgesPc  []float64 // |z| (pc); one bin [0, +Inf) means no height axis
	// Dereddened puts a star in its color column by its B−V less the
	// dust model's reddening at its distance, E(B−V) = A_V/3.1, instead of
	// its B−V as measured (AxisColor).
	Dereddened bool
}

// AxisColor is the color by which a star of measured B−V bv, behind
// avMag of extinction in V, takes its column: bv itself, or for a
// dereddened space bv − A_V/3.1. The law reads a star's intrinsic
// color, while how much reddening a column's stars carry depends on how
// far stars of that color are seen (their absolute magnitudes, the
// disk): columns of measured color mix intrinsic colors in proportions a
// model with other relations gets wrong, and a fit then moves the color
// zero point, and with it a burst's age, to make up for it.
func (s Space) AxisColor(bv, avMag float64) float64 {
	if s.Dereddened {
		return bv - model.EBVPerAV*avMag
	}
	return bv
}

// NewSpace returns a Space of nColor equal B−V bins on [bvMin, bvMax], nLogP
// bins equal in log10 period on [pMinD, pMaxD] and the given |z| edges
// (nil or empty means a single bin [0, +Inf): heights not compared).
func NewSpace(bvMin, bvMax float64, nColor int, pMinD, pMaxD float64, nLogP int, heightEdges []float64) (Space, error) {
	switch {
	case !(bvMin < bvMax) || math.IsInf(bvMin, 0) || math.IsInf(bvMax, 0):
		return Space{}, fmt.Errorf("compare: color range [%g, %g]: want finite B−V limits with min < max", bvMin, bvMax)
	case nColor < 1:
		return Space{}, fmt.Errorf("compare: %d color bins: want at least 1", nColor)
	case !(pMinD > 0 && pMinD < pMaxD) || math.IsInf(pMaxD, 0):
		return Space{}, fmt.Errorf("compare: period range [%g, %g] d: want 0 < min < max < ∞", pMinD, pMaxD)
	case nLogP < 1:
		return Space{}, fmt.Errorf("compare: %d log-period bins: want at least 1", nLogP)
	}
	s := Space{
		ColorEdges:     grid.Linspace(bvMin, bvMax, nColor+1),
		LogPeriodEdges: grid.Linspace(math.Log10(pMinD), math.Log10(pMaxD), nLogP+1),
	}
	if len(heightEdges) == 0 {
		s.HeightEdgesPc = []float64{0, math.Inf(1)}
	} else {
		if len(heightEdges) < 2 {
			return Space{}, fmt.Errorf("compare: height edges %v: want at least two edges (or none for no height axis)", heightEdges)
		}
		for i, e := range heightEdges {
			if !(e >= 0) || (i > 0 && !(e > heightEdges[i-1])) {
				return Space{}, fmt.Errorf("compare: height edges %v: want |z| edges ≥ 0 pc, strictly increasing", heightEdges)
			}
		}
		s.HeightEdgesPc = append([]float64(nil), heightEdges...)
	}
	return s, nil
}

// NumColor, NumLogPeriod and NumHeight return the number of bins per axis.
func (s Space) NumColor() int { return len(s.ColorEdges) - 1 }

// NumLogPeriod returns the number of log-period bins.
func (s Space) NumLogPeriod() int { return len(s.LogPeriodEdges) - 1 }

// NumHeight returns the number of |z| bins.
func (s Space) NumHeight() int { return len(s.HeightEdgesPc) - 1 }

// NumBins returns the number of 3-D bins.
func (s Space) NumBins() int { return s.NumColor() * s.NumLogPeriod() * s.NumHeight() }

// NumColorPeriod returns the number of 2-D (color × log period) bins.
func (s Space) NumColorPeriod() int { return s.NumColor() * s.NumLogPeriod() }

// Index returns the flattened bin of a star of color bv, period periodD
// (days) and height absZPc (pc; its sign is ignored), or −1 when it falls
// outside the space or a value is NaN.
func (s Space) Index(bv, periodD, absZPc float64) int {
	c := binOf(s.ColorEdges, bv)
	if c < 0 || !(periodD > 0) {
		return -1
	}
	p := binOf(s.LogPeriodEdges, math.Log10(periodD))
	if p < 0 {
		return -1
	}
	z := binOf(s.HeightEdgesPc, math.Abs(absZPc))
	if z < 0 {
		return -1
	}
	return (c*s.NumLogPeriod()+p)*s.NumHeight() + z
}

// Index2D returns the (color, period) bin, c·nP + p, or −1 outside.
func (s Space) Index2D(bv, periodD float64) int {
	c := binOf(s.ColorEdges, bv)
	if c < 0 || !(periodD > 0) {
		return -1
	}
	p := binOf(s.LogPeriodEdges, math.Log10(periodD))
	if p < 0 {
		return -1
	}
	return c*s.NumLogPeriod() + p
}

// Split returns the color, period and height bins of a flattened index.
func (s Space) Split(i int) (color, period, height int) {
	nz, np := s.NumHeight(), s.NumLogPeriod()
	height = i % nz
	i /= nz
	return i / np, i % np, height
}

// ColorCenter returns the centre of color bin c; PeriodCenterD the
// geometric centre (centre in log10) of period bin p, in days.
func (s Space) ColorCenter(c int) float64 { return 0.5 * (s.ColorEdges[c] + s.ColorEdges[c+1]) }

// PeriodCenterD returns the geometric centre of period bin p, in days.
func (s Space) PeriodCenterD(p int) float64 {
	return math.Pow(10, 0.5*(s.LogPeriodEdges[p]+s.LogPeriodEdges[p+1]))
}

// Marginal2D sums 3-D counts over |z|, giving NumColorPeriod values in
// (color, period) order.
func (s Space) Marginal2D(counts []float64) []float64 {
	nz := s.NumHeight()
	out := make([]float64, s.NumColorPeriod())
	for j := range out {
		var sum float64
		for _, v := range counts[j*nz : j*nz+nz] {
			sum += v
		}
		out[j] = sum
	}
	return out
}

// Equal reports whether two spaces have identical edges.
func (s Space) Equal(o Space) bool {
	eq := func(a, b []float64) bool {
		if len(a) != len(b) {
			return false
		}
		for i := range a {
			if a[i] != b[i] {
				return false
			}
		}
		return true
	}
	return eq(s.ColorEdges, o.ColorEdges) && eq(s.LogPeriodEdges, o.LogPeriodEdges) && eq(s.HeightEdgesPc, o.HeightEdgesPc)
}

// validate checks edges loaded from outside (a template file).
func (s Space) validate() error {
	for _, ax := range []struct {
		name  string
		edges []float64
	}{{"color", s.ColorEdges}, {"log-period", s.LogPeriodEdges}, {"height", s.HeightEdgesPc}} {
		if len(ax.edges) < 2 {
			return fmt.Errorf("compare: %s axis has %d edges; want at least 2", ax.name, len(ax.edges))
		}
		if !sort.Float64sAreSorted(ax.edges) {
			return fmt.Errorf("compare: %s edges are not increasing", ax.name)
		}
		for i := 1; i < len(ax.edges); i++ {
			if !(ax.edges[i] > ax.edges[i-1]) {
				return fmt.Errorf("compare: %s edges are not strictly increasing at %d", ax.name, i)
			}
		}
	}
	return nil
}

// binOf returns the half-open bin of x (last bin closed) or −1.
func binOf(edges []float64, x float64) int { return model.BinIndex(edges, x) }
